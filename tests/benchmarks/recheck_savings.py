"""How much reviewing a refresh leaves to a person, against a naive rule, with nothing unsafe skipped.

Replays a revised edition (the same periods; every value moved by less than display precision,
5% moved by more) on a workspace where every statement was approved, and a fifth of the
standing statements were rewritten with live fields. It prints:

* rechecks raised by Stetline, and how many of them have a clean proposal;
* rechecks a naive rule ("any fact changed") would raise;
* the share of the naive rechecks that Stetline does not raise;
* missed claim changes: skipped statements whose claims did change (must be 0).

Run: ``python tests/benchmarks/recheck_savings.py [--entities E --topics T --periods P]``;
without sizes it replays the demo's 2025 edition.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from stetline import actions, demo, loading
from stetline.reconcile import claim_changes
from stetline.store import ops
from stetline.workspace import init_workspace

BIG_SHARE = 0.05


def revised(observations: Path, topics: Path, out: Path, seed: int = 7) -> Path:
    """The same observations, every value nudged below display precision, 5% moved for real."""
    obs = pd.read_csv(observations, dtype={"entity": "str", "topic": "str", "period": "str"},
                      keep_default_na=False, na_values=[""])
    decimals = pd.read_csv(topics, dtype={"topic": "str"}).set_index("topic")["decimals"]
    rng = np.random.default_rng(seed)
    step = 10.0 ** -obs["topic"].map(decimals).astype("float64")
    tiny = rng.uniform(-0.2, 0.2, len(obs)) * step  # never enough to change a rounded value by itself
    big = rng.random(len(obs)) < BIG_SHARE
    moved = np.where(big, obs["value"] * rng.uniform(0.85, 1.15, len(obs)), obs["value"] + tiny)
    percent = obs["topic"].map(pd.read_csv(topics, dtype={"topic": "str"}).set_index("topic")["unit"]) == "percent"
    moved = np.where(percent, np.clip(moved, 0, 100), moved)
    obs["value"] = np.where(obs["value"].isna(), np.nan, moved)
    obs.to_csv(out, index=False)
    return out


def replay(workdir: Path, observations: Path, topics: Path, entities: Path) -> dict[str, float]:
    """Load, approve everything, rewrite some with live fields, load the revision, count."""
    ws = init_workspace(workdir / "ws")
    loading.load_edition(ws, observations, topics, entities, by="bench")
    with ws.session() as s:
        views = actions.views(s, ops.SlotFilter())
        for i, v in enumerate(views):
            if v.slot.kind == "standing" and i % 5 == 0 and v.draft.evidence.get("value", {}).get("value") is not None:
                actions.rewrite(s, v.slot.id, "The figure was {{ value }} in {{ period }}.", by="bench")
            if not any(x.type == "suppress" for x in v.layers):
                actions.approve(s, v.slot.id, by="bench")
        before = {v.slot.id: v.draft for v in actions.views(s, ops.SlotFilter())}
    loading.load_edition(ws, revised(observations, topics, workdir / "revised.csv"), by="bench", label="revised")
    with ws.session() as s:
        after = {v.slot.id: (v.slot, v.draft) for v in actions.views(s, ops.SlotFilter(include_gone=True))}
    ws.close()
    raised = clean = naive = missed = 0
    for slot_id, old in before.items():
        slot, new = after[slot_id]
        any_fact = any(old.evidence.get(k, {}).get("value") != new.evidence.get(k, {}).get("value")
                       for k in set(old.evidence) | set(new.evidence))
        naive += any_fact
        if slot.status == "recheck":
            raised += 1
            clean += bool((slot.recheck or {}).get("clean"))
        elif claim_changes(old.claims, new.claims):
            missed += 1
    skipped = max(naive - raised, 0)
    return {"statements": len(before), "naive": naive, "raised": raised, "clean": clean,
            "avoided_share": skipped / naive if naive else 0.0, "missed_claim_changes": missed}


def main(argv: list[str] | None = None) -> int:
    """Print the recheck counts of a replayed revision (demo, or a synthetic size)."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--entities", type=int)
    parser.add_argument("--topics", type=int)
    parser.add_argument("--periods", type=int, default=5)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        if args.entities and args.topics:
            import synthetic

            files = synthetic.write(work / "data", args.entities, args.topics, args.periods)
            source = (files["observations"], files["topics"], files["entities"])
            name = f"synthetic {args.entities} x {args.topics} x {args.periods}"
        else:
            source = (demo.data_file("observations-2025.csv"), demo.data_file("topics.csv"),
                      demo.data_file("entities.csv"))
            name = "demo"
        result = replay(work, *source)
    print(f"recheck savings on {name}: {result['statements']} statements, all approved")
    print(f"  naive rule (any fact changed) would raise: {result['naive']}")
    print(f"  rechecks raised: {result['raised']} ({result['clean']} with a clean proposal)")
    print(f"  share of naive rechecks not raised: {result['avoided_share']:.0%}")
    print(f"  missed claim changes: {result['missed_claim_changes']} (target 0) "
          + ("PASS" if result["missed_claim_changes"] == 0 else "FAIL"))
    return 0 if result["missed_claim_changes"] == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
