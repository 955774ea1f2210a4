"""Helpers the test modules import: the database the suite runs on, a CLI runner, a reviewer's sweep.

Fixtures live in conftest.py; this module holds only plain code, so test modules import it by
name (``from helpers import Cli``) and never import conftest.
"""

from __future__ import annotations

import gc
import json
import os
import random
import subprocess
import sys
import time
from decimal import ROUND_HALF_UP, Decimal
from pathlib import Path
from typing import Any

from click.testing import CliRunner, Result
from hypothesis import strategies as st

from stetline.cli import main

TEST_URL_VARIABLE = "STETLINE_TEST_DATABASE_URL"
TEST_DATABASE_URL = os.environ.get(TEST_URL_VARIABLE)
ON_POSTGRES = bool(TEST_DATABASE_URL)

# A rewrite of a part-kind statement whose proposal after the second edition has a conflict region: the
# editor changed "went up by" of the 2024 draft to "climbed", and the 2025 draft rewords the same words
# ("went down by"). Composed statements (blurbs, roundups) never conflict (their proposals keep the
# rewrite's words with the new numbers), so this needs the part kinds on.
CONFLICTED = "change/gorse-point/recycling"
CONFLICTED_REWRITE = (
    "The household recycling rate in Gorse Point climbed 1.4 percentage points between 2023 and 2024, from 40.1% "
    "to 41.5%, which is an improvement."
)


class Cli:
    """Runs stetline commands against one workspace and decodes JSON output."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.runner = CliRunner()

    def __call__(self, *args: str, ok: bool = True, input: str | None = None) -> Result:
        """Run one command on the workspace; with ok, assert it exited 0."""
        if ON_POSTGRES:
            gc.collect()  # earlier commands' engines, dropped unclosed, give their connections back
        result = self.runner.invoke(main, [*args, "-w", str(self.path)], input=input, catch_exceptions=False)
        if ok:
            assert result.exit_code == 0, result.output
        return result

    def json(self, *args: str) -> Any:
        """Run one command with --json and return its decoded output."""
        return json.loads(self(*args, "--json").stdout)


def every_kind(path: Path) -> None:
    """Turn every statement kind on in a workspace (the part kinds too) and redraft its current edition.

    A new workspace drafts only headline, profile, roundup and blurb; tests about the behaviour of a
    part kind (standing, change, trend, leaders, movement) on a workspace turn the part kinds on first.
    """
    from stetline import settings as declared

    cli = Cli(path)
    cli("settings", "kinds", ",".join(declared.ALL_KINDS), "--by", "admin")
    if cli.json("status").get("edition"):
        cli("redraft", "--by", "admin")


def resolve_every_recheck(cli: Cli) -> None:
    """Resolve every recheck as a reviewer would: accept clean proposals, approve the rest as they are
    (confirming the contradicted claims of claim-changed ones, as the reviewer who read them). A rewrite
    whose live fields no longer render cannot be approved: its editor reverts it to the draft first."""
    for item in cli.json("list", "--status", "recheck"):
        recheck = item["recheck"]
        if "render-failed" in recheck["reasons"]:
            cli("revert", item["slot"], "--by", "editor")
            cli("approve", item["slot"], "--confirm-claims", "--by", "reviewer")
        elif recheck["clean"] and recheck["proposed"]:
            cli("approve", item["slot"], "--accept-proposed", "--by", "reviewer")
        elif recheck["contradicted"]:
            cli("approve", item["slot"], "--confirm-claims", "--by", "reviewer")
        else:
            cli("approve", item["slot"], "--by", "reviewer")
    assert cli.json("status")["by_status"]["recheck"] == 0


def signed_in(app: Any, name: str) -> Any:
    """A test client signed in as the account ``name``, as the sign-in form leaves the cookie.

    The account goes into the session cookie directly rather than through the form (checking a
    password hash is slow by design); the sign-in form has its own tests.
    """
    from stetline import accounts

    client = app.test_client()
    ws = app.extensions["stetline_workspace"]
    with ws.reading() as s:
        account = accounts.get_account(s, name)
        generation = account.session_generation if account is not None else 0
    now = int(time.time())
    with client.session_transaction() as cookie:
        cookie.update({"account": name, "gen": generation, "since": now, "seen": now})
    return client


def run_stetline(path: Path, *args: str, timeout: int = 300) -> subprocess.CompletedProcess[str]:
    """Run the installed ``stetline`` command on a workspace folder, as a separate process.

    The process is pointed at the database this test process uses for the folder (its own
    PostgreSQL database when the suite runs there), so both sides see the same workspace.
    """
    command = str(Path(sys.executable).with_name("stetline"))
    return subprocess.run([command, *args, "-w", str(path)], capture_output=True, text=True, timeout=timeout,
                          env=stetline_env(path))


def stetline_env(path: Path) -> dict[str, str]:
    """The environment for a ``stetline`` process on a workspace folder: the test's database for it."""
    import stetline.workspace as workspace_module

    return {**os.environ, "STETLINE_DATABASE_URL": workspace_module._url_for(path, None)}


#: the towns and topics of a small built workspace in which one town may go against the others
PATTERN_TOWNS = ("ashby", "brill", "colne", "dunmere", "eske", "fordham", "garth", "holm")
PATTERN_TOPICS = "topic,label,unit,better,decimals,category,target\n" + "".join(
    f"{key},{label},percent,higher,1,,\n" for key, label in
    (("parks", "Parks satisfaction"), ("recycling", "Recycling rate"), ("broadband", "Broadband coverage")))


def pattern_workspace(path: Path, against: str | None = "colne") -> Cli:
    """A new workspace of eight towns and three topics over 2024-2025 in which every town rises by two
    points on every topic except ``against``, which falls by two on all three (None: nobody does)."""
    path.mkdir(parents=True, exist_ok=True)
    (path.parent / "pattern-topics.csv").write_text(PATTERN_TOPICS, encoding="utf-8")
    (path.parent / "pattern-entities.csv").write_text(
        "entity,name,group\n" + "".join(f"{k},{k.title()},Coast\n" for k in PATTERN_TOWNS), encoding="utf-8")
    rows = ["entity,topic,period,value"]
    for t in ("parks", "recycling", "broadband"):
        for i, town in enumerate(PATTERN_TOWNS):
            rows += [f"{town},{t},2024,{50 + i}", f"{town},{t},2025,{50 + i + (-2 if town == against else 2)}"]
    (path.parent / "pattern-obs.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    cli = Cli(path / "ws")
    cli("init")
    cli("load", str(path.parent / "pattern-obs.csv"), "--topics", str(path.parent / "pattern-topics.csv"),
        "--entities", str(path.parent / "pattern-entities.csv"), "--by", "admin")
    return cli


# ---- generated panels for the property tests (hypothesis) --------------------------------------------
# One generator for every property test over panels (tests/test_claims_properties.py,
# tests/test_periods_compare.py), so that each covers what issue 14 asks of them: readings one, two and
# five years apart, quarters and months; ties; missing, withheld and absent readings, breaks; changes that
# round to zero at display precision; percent and other units, changes sized in points, per cent or the
# unit (the topics' `change` column); 2 to 200 entities. The recomputations stay in the test modules.

SPACINGS = ("year1", "year2", "year5", "quarter", "month")
PER_YEAR = {"year": 1, "quarter": 4, "month": 12}


def period_labels(spacing: str, n: int) -> tuple[list[str], str]:
    """n period labels of a spacing ("year1", "year2", "year5", "quarter", "month"), oldest first, and their format."""
    if spacing.startswith("year"):
        step = int(spacing[4:])
        return [str(1990 + step * i) for i in range(n)], "year"
    if spacing == "quarter":
        return [f"{2019 + (i // 4)}-Q{i % 4 + 1}" for i in range(n)], "quarter"
    return [f"{2019 + (i // 12)}-{i % 12 + 1:02d}" for i in range(n)], "month"


@st.composite
def panels(draw: st.DrawFn, spacings: tuple[str, ...] = SPACINGS, periods: tuple[int, int] = (2, 6),
            in_years: bool = False, entities: tuple[int, int] = (2, 200), topics: tuple[int, int] = (1, 3)) -> dict:
    """A generated panel: its rows (entity, topic, period, value, margin, status), its topics' metadata
    (dicts, with the `change` column), the period format, the labels and the number of entities.

    ``periods`` bounds the number of readings (in whole years when ``in_years``: from one reading more
    than the shorter span up to the longer span), ``entities`` and ``topics`` bound their numbers.
    """
    # the values come from a seeded generator: hypothesis picks the seed and the panel's shape
    rnd = random.Random(draw(st.integers(0, 2**32 - 1)))
    spacing = draw(st.sampled_from(spacings))
    fmt = period_labels(spacing, 1)[1]
    lo, hi = periods
    if in_years:  # a span in whole years: one more reading than the shortest span, up to the longest
        lo, hi = PER_YEAR[fmt] * lo + 1, PER_YEAR[fmt] * hi
    labels, fmt = period_labels(spacing, draw(st.integers(lo, hi)))
    few = min(entities[1], 12)
    n_entities = draw(st.one_of(st.integers(entities[0], few), st.integers(few, entities[1])))
    model = draw(st.sampled_from(["walk", "level"]))  # each reading moves from the last, or sits near a level
    seasonal = fmt != "year" and rnd.random() < 0.5  # the third quarter (or July) runs higher
    with_margins = rnd.random() < 0.3
    holes = rnd.choice([0.0, 0.04, 0.15])  # how often a reading is absent or missing
    ties = rnd.choice([0.0, 0.1, 0.3])  # how often a reading repeats the one before it in the file
    topic_rows, rows = [], []
    for k in range(draw(st.integers(*topics))):
        unit = rnd.choice(["percent", "tonnes"])
        decimals = rnd.choice([0, 1, 2])
        step = 10.0 ** -decimals
        key = f"t{k}"
        topic_rows.append({"topic": key, "label": f"Topic {k}", "unit": unit,
                           "better": rnd.choice(["higher", "lower", "neutral"]), "decimals": decimals,
                           "change": rnd.choice(["", "", "relative", "absolute"]), "category": "",
                           "target": float("nan"), "weight": 1.0, "source": "", "position": k})
        last: dict[str, float] = {}  # the latest reading written, by period: a tie copies it
        for e in range(n_entities):
            level = round(rnd.uniform(20, 80) if unit == "percent" else rnd.uniform(1, 900), decimals + 2)
            if rnd.random() < 0.2:
                level = 50.0  # ties at the start
            value = level
            for i, label in enumerate(labels):
                base = value if model == "walk" else level
                if i:
                    kind = rnd.random()
                    if kind < 0.25:
                        move = 0.0  # no change at all
                    elif kind < 0.45:  # below half a display step: rounds to zero in points or the unit
                        move = rnd.choice([-1, 1]) * 0.4 * step
                    elif kind < 0.6:  # a relative change that prints as 0.0% or 0.1%
                        move = rnd.choice([-1, 1]) * base * rnd.choice([0.0004, 0.0006])
                    elif kind < 0.75:
                        move = rnd.choice([-1, 1]) * step
                    else:
                        move = rnd.uniform(-8, 8)
                    value = min(100.0, max(0.0, base + move)) if unit == "percent" else max(0.5, base + move)
                reading = value + (3.0 if seasonal and label.endswith(("Q3", "-07")) else 0.0)
                reading = min(100.0, reading) if unit == "percent" else reading
                if i and rnd.random() < holes:
                    continue  # a gap: no row for this period
                if label in last and rnd.random() < ties:
                    reading = last[label]  # the same reading as the entity before it: a tie
                last[label] = reading
                status = rnd.choices(["", "provisional", "break", "confidential"], [90, 4, 3, 3])[0]
                shown = float("nan") if rnd.random() < holes else reading
                margin = rnd.uniform(0.1, 3.0) if with_margins and unit == "percent" else float("nan")
                rows.append((f"e{e:03d}", key, label, shown, margin, status))
    return {"rows": rows, "topics": topic_rows, "fmt": fmt, "labels": labels, "n_entities": n_entities}


def panel_frames(panel: dict) -> tuple[Any, Any, Any]:
    """A generated panel's observations, topics and entities as the engine reads them (pandas frames)."""
    import pandas as pd

    from stetline import periods

    obs = pd.DataFrame(panel["rows"], columns=["entity", "topic", "period", "value", "margin", "status"])
    obs["period"] = obs["period"].astype("str")
    obs["value"] = obs["value"].astype("float64")
    obs["margin"] = obs["margin"].astype("float64")
    obs["time"] = periods.times(obs["period"], panel["fmt"])
    obs["row"] = range(2, len(obs) + 2)
    n = panel["n_entities"]
    entities = pd.DataFrame({"entity": [f"e{e:03d}" for e in range(n)], "name": [f"Place {e}" for e in range(n)],
                             "group": ["North" if e % 2 else "South" for e in range(n)], "position": range(n)})
    return obs, pd.DataFrame(panel["topics"]), entities


# ---- the recomputations' rounding rules (plain Python, never the engine's functions) -----------------

def half_up(x: float, places: int) -> Decimal:
    """x as written (its repr), rounded half-up (Eurostat Statistics Explained, "Tutorial: Rounding of
    numbers": round at the last step)."""
    return Decimal(repr(x)).quantize(Decimal(1).scaleb(-places), rounding=ROUND_HALF_UP)


def prints_as_zero(change: float, before: float, unit: str, decimals: int, mode: str = "") -> bool:
    """Whether a change prints as zero, in the unit the statement prints it in.

    Percentage points at the topic's decimals for percentages (ONS Service Manual, "Percentages"), the
    topic's own unit at its decimals when its `change` column says ``absolute``, otherwise per cent:
    whole from 10%, one decimal below (DESIGN "Numbers and words"; issue 14, point 6, for the column).
    A relative change with no base to divide by prints the difference itself.
    """
    relative = mode == "relative" or (mode != "absolute" and unit != "percent")
    if not relative or before == 0:
        return half_up(abs(change), decimals) == 0
    size = abs(change) / abs(before)
    return size < 0.1 and half_up(size * 100, 1) == 0
