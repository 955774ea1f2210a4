"""A reproducible generator of synthetic editions (fixed random state): E entities x T topics x P yearly periods.

Writes CLI-loadable files into OUT_DIR:

* ``entities.csv``: entity keys and names, in groups of about 20;
* ``topics.csv``: a mix of percentages (higher is better, some with targets and margins),
  counts per 1,000 residents (higher is better), response times in minutes (lower is better,
  some with targets) and neutral populations; 0 or 1 decimals;
* ``observations.csv``: the first edition (periods START .. START+P-1);
* ``observations-2.csv``: the second edition: every value revised a little, 5% of them a lot,
  and one more period.

Run as ``python tests/benchmarks/synthetic.py OUT_DIR --entities 1000 --topics 100 --periods 5``
(or ``python -m tests.benchmarks.synthetic ...`` from the repository root).
"""

from __future__ import annotations

import argparse
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

START = 2020
GROUP_SIZE = 20
BIG_MOVE_SHARE = 0.05

_SYLLABLES = (
    "ash", "bar", "brook", "cal", "dun", "fen", "ford", "gate", "hal", "holm", "ing", "kirk",
    "lea", "mar", "mere", "ness", "oak", "pen", "quay", "rid", "sand", "stow", "thorn", "well",
    "wick", "wold", "yar", "by", "cot", "dale",
)
_SUBJECTS = (
    "household recycling", "bus punctuality", "planning decisions on time", "school attendance",
    "park satisfaction", "broadband coverage", "library membership", "street lighting repairs",
    "council tax collection", "housing repairs on time", "road defects fixed", "bin collections on time",
)
_COUNTS = (
    "new business registrations", "library loans", "leisure centre visits", "volunteer hours",
    "housing completions", "cultural events", "apprenticeship starts", "tree plantings",
)
_TIMES = (
    "emergency response time", "call answering time", "ambulance handover time",
    "planning enquiry reply time", "repair visit wait", "bus journey time",
)


@dataclass(frozen=True)
class Archetype:
    """How one family of topics looks: unit, direction, decimals and the range of its values."""

    unit: str
    better: str
    low: float
    high: float


PERCENT = Archetype("percent", "higher", 30.0, 95.0)
COUNTS = Archetype("per 1,000 residents", "higher", 5.0, 250.0)
MINUTES = Archetype("minutes", "lower", 4.0, 60.0)
NEUTRAL = Archetype("persons", "neutral", 2_000.0, 250_000.0)
ARCHETYPES = (PERCENT, COUNTS, MINUTES, NEUTRAL)


def entities_frame(n: int, rng: np.random.Generator) -> pd.DataFrame:
    """n entities with made-up place names, in groups of about GROUP_SIZE."""
    names: list[str] = []
    seen: set[str] = set()
    for i in range(n):
        parts = rng.choice(len(_SYLLABLES), size=2, replace=False)
        name = "".join(_SYLLABLES[j] for j in parts).capitalize()
        if name in seen:
            name = f"{name} {i + 1}"
        seen.add(name)
        names.append(name)
    groups = [f"Region {i // GROUP_SIZE + 1}" for i in range(n)]
    return pd.DataFrame({
        "entity": [f"area-{i + 1:05d}" for i in range(n)], "name": names, "group": groups,
    })


def topics_frame(n: int) -> pd.DataFrame:
    """n topics cycling through the archetypes; every third directed topic has a target."""
    rows = []
    for i in range(n):
        kind = ARCHETYPES[i % len(ARCHETYPES)]
        round_ = i // len(ARCHETYPES) + 1
        if kind is PERCENT:
            label = f"Share of {_SUBJECTS[i // 4 % len(_SUBJECTS)]} ({round_})"
            target = "75" if i % 3 == 0 else ""
            decimals = 1
        elif kind is COUNTS:
            label = f"{_COUNTS[i // 4 % len(_COUNTS)].capitalize()} per 1,000 residents ({round_})"
            target = ""
            decimals = 1 if i % 8 == 1 else 0
        elif kind is MINUTES:
            label = f"Median {_TIMES[i // 4 % len(_TIMES)]} ({round_})"
            target = "20" if i % 3 == 0 else ""
            decimals = 1
        else:
            label = f"Resident population ({round_})"
            target = ""
            decimals = 0
        rows.append({
            "topic": f"t{i + 1:03d}", "label": label, "unit": kind.unit, "better": kind.better,
            "decimals": decimals, "category": f"Category {i % 7 + 1}", "target": target,
            "weight": 2 if i % 10 == 0 else "", "source": "Synthetic benchmark data",
        })
    return pd.DataFrame(rows)


def _clip(values: np.ndarray, topic_kind: np.ndarray) -> np.ndarray:
    pct = topic_kind == 0
    out = np.where(pct, np.clip(values, 0.0, 100.0), values)
    return np.where(pct, out, np.maximum(out, 0.01))


def observations(
    entities: pd.DataFrame, topics: pd.DataFrame, periods: int, rng: np.random.Generator,
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The first edition (``periods`` years) and the second (revised, one more year)."""
    n_e, n_t = len(entities), len(topics)
    kinds = np.arange(n_t) % len(ARCHETYPES)
    low = np.array([ARCHETYPES[k].low for k in kinds])
    high = np.array([ARCHETYPES[k].high for k in kinds])
    base = low + (high - low) * rng.random((n_e, n_t))
    trend = rng.normal(0.0, 0.03, (n_e, n_t))
    years = periods + 1
    steps = np.arange(years)
    noise = rng.normal(0.0, 0.02, (n_e, n_t, years))
    values = base[:, :, None] * (1 + trend[:, :, None] * steps + noise)
    values = _clip(values, kinds[None, :, None])

    # the second edition: every value revised a little, a few a lot
    small = rng.normal(0.0, 0.002, values.shape)
    big = rng.random(values.shape) < BIG_MOVE_SHARE
    large = rng.normal(0.0, 0.15, values.shape)
    revised = _clip(values * (1 + small + np.where(big, large, 0.0)), kinds[None, :, None])

    ent = np.repeat(entities["entity"].to_numpy(), n_t * years)
    top = np.tile(np.repeat(topics["topic"].to_numpy(), years), n_e)
    per = np.tile(np.array([str(START + y) for y in steps]), n_e * n_t)
    # margins for the survey-like percentages (every eighth topic)
    with_margin = np.tile(np.repeat(kinds == 0, years) & np.repeat(np.arange(n_t) % 8 == 0, years), n_e)

    def frame(v: np.ndarray, keep: np.ndarray) -> pd.DataFrame:
        flat = v.reshape(-1)
        margin = np.where(with_margin, np.round(np.abs(flat) * 0.02 + 0.3, 2), np.nan)
        status = np.full(flat.shape, "", dtype=object)
        latest = per == str(START + int(keep.sum()) - 1)
        status[latest & (rng.random(flat.shape) < 0.02)] = "provisional"
        out = pd.DataFrame({
            "entity": ent, "topic": top, "period": per, "value": np.round(flat, 3),
            "margin": margin, "status": status,
        })
        mask = np.tile(keep, n_e * n_t)
        return out.loc[mask].reset_index(drop=True)

    first_years = np.arange(years) < periods
    first = frame(values, first_years)
    second = frame(revised, np.ones(years, dtype=bool))
    return first, second


def write(out: Path, n_entities: int, n_topics: int, n_periods: int, seed: int = 20260101) -> dict[str, Path]:
    """Write the files of two editions into ``out``; return their paths by name."""
    if n_entities < 1 or n_topics < 1 or n_periods < 1:
        raise ValueError("entities, topics and periods must all be at least 1")
    rng = np.random.default_rng(seed)
    out.mkdir(parents=True, exist_ok=True)
    ents = entities_frame(n_entities, rng)
    tops = topics_frame(n_topics)
    first, second = observations(ents, tops, n_periods, rng)
    paths = {
        "entities": out / "entities.csv", "topics": out / "topics.csv",
        "observations": out / "observations.csv", "observations2": out / "observations-2.csv",
    }
    ents.to_csv(paths["entities"], index=False)
    tops.to_csv(paths["topics"], index=False)
    first.to_csv(paths["observations"], index=False)
    second.to_csv(paths["observations2"], index=False)
    return paths


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", type=Path, help="folder to write the CSV files into")
    parser.add_argument("--entities", type=int, default=1000)
    parser.add_argument("--topics", type=int, default=100)
    parser.add_argument("--periods", type=int, default=5)
    parser.add_argument("--seed", type=int, default=20260101)
    args = parser.parse_args(argv)
    if min(args.entities, args.topics, args.periods) < 1:
        parser.error("--entities, --topics and --periods must all be at least 1")
    paths = write(args.out, args.entities, args.topics, args.periods, args.seed)
    for name, path in paths.items():
        print(f"{name}: {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
