"""The composed kinds: blurb (entity × topic) and roundup (topic), their claims, their rechecks, and
the `kinds` setting that says which kinds a workspace drafts."""

from __future__ import annotations

from decimal import ROUND_HALF_UP, Decimal
from pathlib import Path

import pandas as pd
import pytest
from helpers import Cli
from hypothesis import given, settings
from hypothesis import strategies as st
from test_kinds import draft_panel

from stetline import demo
from stetline import settings as declared
from stetline.drafting import Draft
from stetline.errors import StetlineError
from stetline.kinds import BY_NAME
from stetline.reconcile import Basis, HumanWork, SlotState, decide

ENTITIES = pd.DataFrame({
    "entity": ["a", "b", "c", "d", "e", "f"], "name": ["Ashby", "Brill", "Colne", "Dunmere", "Eske", "Fenn"],
    "group": ["North", "North", "North", "South", "South", "South"], "position": range(6),
})
TOPICS = [{"topic": "recycling", "label": "Recycling rate", "unit": "percent", "better": "higher", "decimals": 1,
           "category": "", "target": 50.0, "weight": 1.0, "source": ""}]


def drafts(rows: list[tuple], entities: pd.DataFrame = ENTITIES, topics: list[dict] = TOPICS) -> dict[str, Draft]:
    """Every draft of a small panel: rows are (entity, topic, period, value[, status])."""
    full = [(*r[:4], float("nan"), r[4] if len(r) > 4 else "") for r in rows]
    return {d.slot: d for d in draft_panel(full, topics, entities)}


def panel(latest: dict[str, float], earlier: dict[str, float] | None = None, status: dict[str, str] | None = None,
          ) -> list[tuple]:
    before = earlier or {"a": 40.0, "b": 45.0, "c": 30.0, "d": 35.0, "e": 33.0, "f": 38.0}
    rows: list[tuple] = [(k, "recycling", 2024, v) for k, v in before.items()]
    rows += [(k, "recycling", 2025, v, (status or {}).get(k, "")) for k, v in latest.items()]
    return rows


LATEST = {"a": 52.0, "b": 44.0, "c": 30.04, "d": 36.5, "e": 33.0, "f": 39.0}


@pytest.fixture(scope="module")
def base() -> dict[str, Draft]:
    return drafts(panel(LATEST))


def test_blurbs_state_standing_and_change_in_one_paragraph(base: dict[str, Draft]) -> None:
    # the most newsworthy first: Ashby is the best of all and meets the target, so its standing leads
    # and its rise follows as "it"; Colne's change rounds to zero as printed and is said as unchanged
    # (DESIGN: steady by the rounded change), joined to the lead by a semicolon in this slot's phrasing;
    # the change clause takes the wording this slot's stable hash picks (one of four)
    assert base["blurb/a/recycling"].text == (
        "The recycling rate in Ashby was 52.0% in 2025, the best of six towns, above the North average (42.0%), "
        "and it met the target of 50.0%. It rose by 12.0 percentage points on the 2024 figure of 40.0%, "
        "an improvement.")
    assert base["blurb/c/recycling"].text == (
        "In 2025, the recycling rate in Colne stood at 30.0%: the worst of six towns, below the North average "
        "(42.0%), and it missed the target of 50.0% by 20.0 percentage points; it was unchanged from 2024.")


def test_a_blurb_without_a_value_says_so_only(base: dict[str, Draft]) -> None:
    d = drafts(panel({**LATEST, "e": float("nan")}))["blurb/e/recycling"]
    assert d.text == "No 2025 figure for the recycling rate is available for Eske."
    assert set(d.claims) == {"standing.rank_band", "standing.vs_group", "standing.target"}


def test_blurb_claims_are_its_parts_claims_namespaced(base: dict[str, Draft]) -> None:
    blurb = base["blurb/a/recycling"]
    assert blurb.claims == {
        **{f"change.{k}": v for k, v in base["change/a/recycling"].claims.items()},
        **{f"standing.{k}": v for k, v in base["standing/a/recycling"].claims.items()},
    }
    assert blurb.claims["change.direction"] == "up" and blurb.claims["standing.rank_band"] == "top"
    # evidence keeps the contract's names; numbers the paragraph never prints are left out
    assert blurb.evidence["value"]["shown"] == "52.0%" and blurb.evidence["change"]["shown"] == "12.0 percentage points"
    assert "mean_change" not in blurb.evidence


def test_roundup_states_leaders_and_movement(base: dict[str, Draft]) -> None:
    roundup = base["roundup/recycling"]
    assert roundup.text == (
        "Between 2024 and 2025, the recycling rate improved in three, worsened in one and held steady in two of "
        "six towns; the biggest improvement was in Ashby (12.0 percentage points), "
        "the only deterioration in "
        "Brill (1.0 percentage points). The average change was a rise of 2.3 percentage points. Ashby had the best "
        "figure (52.0%) and Colne the worst (30.0%), 22.0 percentage points apart.")
    # the topic's average change is said here, once, not in every change statement: (12 - 1 + 0.04 + 1.5 + 0 + 1) / 6
    assert roundup.evidence["mean_change"]["value"] == pytest.approx(13.54 / 6)
    assert roundup.claims == {"movement.majority": "improved", "movement.exceptions": ["b"],
                              "leaders.leader": "a", "leaders.laggard": "c"}


def _work(kind: str, d: Draft, text: str | None = None) -> HumanWork:
    if kind == "rewrite":
        return HumanWork(1, "rewrite", text or d.text.replace("rose by", "climbed by"), d.text, Basis.of(d))
    return HumanWork(2, "approval", d.text, None, Basis.of(d))


def _decide(kind: str, old: Draft, new: Draft) -> tuple[str, list[str]]:
    status = "edited" if kind == "rewrite" else "approved"
    decision = decide(SlotState(old.slot, old.digest, False, status, [_work(kind, old)]), new)
    if decision is None:
        return status, []
    return decision.status, decision.reasons


# Each row: human work on Ashby's blurb, then a second edition that changes a stated fact, a number the
# text prints, a fact the text does not state, or only which facts lead (issue, point 2)
@pytest.mark.parametrize("work", ["rewrite", "approval"])
def test_recheck_table_of_composed_statements(work: str) -> None:
    old = drafts(panel(LATEST))["blurb/a/recycling"]
    # a stated claim the new data contradict: the rise becomes a fall
    fell = drafts(panel({**LATEST, "a": 39.0}, {**dict.fromkeys("abcdef", 30.0), "a": 40.0}))["blurb/a/recycling"]
    assert _decide(work, old, fell)[1][0] == "claim-changed"
    # a printed number changed, every claim still true: numbers-changed with a proposal
    more = drafts(panel({**LATEST, "a": 53.0}))["blurb/a/recycling"]
    status, reasons = _decide(work, old, more)
    assert (status, reasons) == ("recheck", ["numbers-changed"])
    state = SlotState(old.slot, old.digest, False, "edited", [_work(work, old)])
    proposed = decide(state, more).recheck["proposed"]  # type: ignore[union-attr]
    assert "53.0%" in proposed and "13.0 percentage points" in proposed and "52.0%" not in proposed
    if work == "rewrite":
        assert "climbed by" in proposed  # the editor's words stay

@pytest.mark.parametrize("work", ["rewrite", "approval"])
def test_only_a_new_lead_rechecks_approvals_not_rewrites(work: str) -> None:
    # Dunmere (South) rose by 6.5 points, news against a spread of 22 points, so its change leads; then
    # Colne (North, already the worst) falls to 0: the spread widens and Dunmere's standing leads, its own
    # claims and printed numbers unchanged
    earlier = {"a": 40.0, "b": 45.0, "c": 30.0, "d": 30.0, "e": 33.0, "f": 38.0}
    old = drafts(panel(LATEST, earlier))["blurb/d/recycling"]
    assert old.text.startswith("The recycling rate in Dunmere rose by 6.5 percentage points to 36.5% in 2025")
    led = drafts(panel({**LATEST, "c": 0.0}, earlier))["blurb/d/recycling"]
    assert led.text.startswith("In 2025, the recycling rate in Dunmere stood at 36.5%: the third worst of six towns")
    assert led.text.endswith("; it rose by 6.5 percentage points from 30.0% in 2024, an improvement.")
    assert led.claims == old.claims
    assert _decide(work, old, led) == (("edited", []) if work == "rewrite" else ("recheck", ["wording-changed"]))


def test_a_fact_the_blurb_does_not_state_changing_sends_nothing_to_recheck() -> None:
    # a break in Ashby's series: the blurb states no change; a revised 2024 figure changes only the change facts
    old = drafts(panel(LATEST, status={"a": "break"}))["blurb/a/recycling"]
    revised = drafts(panel(LATEST, {"a": 41.0, "b": 45.0, "c": 30.0, "d": 35.0, "e": 33.0, "f": 38.0},
                           status={"a": "break"}))["blurb/a/recycling"]
    assert not any(k.startswith("change.") for k in old.claims)
    assert revised.facts is not None and revised.facts["evidence"]["previous"]["shown"] == "41.0%"
    for work in ("rewrite", "approval"):
        assert _decide(work, old, revised)[1] == []
    # the standalone change statement does notice it
    assert drafts(panel(LATEST, status={"a": "break"}))["change/a/recycling"].evidence["previous"]["shown"] == "40.0%"


def _rank(values: list[float], i: int) -> int:
    """Competition rank (1, 2, 2, 4) of values[i], higher is better (common practice)."""
    return 1 + sum(1 for v in values if v > values[i])


def _rounded(x: float, decimals: int) -> Decimal:
    return Decimal(repr(x)).quantize(Decimal(1).scaleb(-decimals), rounding=ROUND_HALF_UP)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 1000), st.integers(0, 1000)), min_size=4, max_size=6))
def test_every_blurb_claim_is_its_part_claim_recomputed(pairs: list[tuple[int, int]]) -> None:
    keys = list("abcdef")[: len(pairs)]
    rows = [(k, "recycling", 2024, p[0] / 10) for k, p in zip(keys, pairs)]
    rows += [(k, "recycling", 2025, p[1] / 10) for k, p in zip(keys, pairs)]
    out = drafts(rows, ENTITIES.iloc[: len(keys)])
    latest = [p[1] / 10 for p in pairs]
    for i, k in enumerate(keys):
        blurb = out[f"blurb/{k}/recycling"]
        rank = _rank(latest, i)
        assert blurb.evidence["rank"]["value"] == rank
        band = ("top", "upper", "lower", "bottom")[min(3, 4 * (rank - 1) // len(keys))]
        assert blurb.claims["standing.rank_band"] == band
        change = _rounded(p1 := pairs[i][1] / 10, 1) - _rounded(pairs[i][0] / 10, 1)
        assert p1 == latest[i]
        assert blurb.claims["change.direction"] == ("up" if change > 0 else "down" if change < 0 else "flat")
        assert blurb.claims["standing.target"] == ("met" if latest[i] >= 50.0 else "missed")


def test_the_declared_kinds_are_the_engine_kinds() -> None:
    assert declared.ALL_KINDS == tuple(BY_NAME)


def test_an_unknown_kind_is_refused_naming_the_kinds() -> None:
    with pytest.raises(StetlineError, match="unknown kind 'blurbs'; the kinds are: headline, profile"):
        declared.spec("kinds").parse("headline, blurbs")
    assert declared.spec("kinds").parse(" headline , blurb,headline") == "headline,blurb"


def test_turning_a_kind_off_keeps_its_work_and_on_again_brings_it_back(demo_path: Path) -> None:
    cli = Cli(demo_path)
    cli("settings", "kinds", "headline,profile,standing,change,trend,leaders,movement,roundup,blurb", "--by", "admin")
    cli("redraft", "--by", "admin")
    cli("rewrite", "blurb/north-quay/recycling", "North Quay recycles well.", "--by", "editor")
    cli("settings", "kinds", "headline,profile,roundup", "--by", "admin")
    cli("redraft", "--by", "admin")
    kept = cli.json("show", "blurb/north-quay/recycling")
    assert kept["status"] == "recheck" and kept["recheck"]["reasons"] == ["slot-gone"]
    assert kept["layer"]["text"] == "North Quay recycles well."
    items = cli.json("list")
    listed = {item["slot"] for item in items}
    assert "blurb/north-quay/recycling" in listed and "roundup/recycling" in listed
    # the kinds turned off: only slots carrying human work are listed, none as a plain draft
    off = [i for i in items if i["kind"] not in ("headline", "profile", "roundup")]
    assert off and all(i["status"] in ("recheck", "suppressed") for i in off)
    assert "blurb/tidemere/recycling" not in listed and len(off) < 40
    cli("settings", "kinds", "headline,profile,roundup,blurb", "--by", "admin")
    cli("redraft", "--by", "admin")
    back = cli.json("show", "blurb/north-quay/recycling")
    assert back["status"] == "edited" and back["text"] == "North Quay recycles well."
    refused = cli("settings", "kinds", "headline,blurbs", "--by", "admin", ok=False)
    assert "unknown kind 'blurbs'" in refused.output


def test_a_workspace_made_before_the_setting_keeps_its_kinds(demo_path: Path) -> None:
    # the demo as a workspace from before revision 0008: its database taken back to 0007 without the
    # setting; opening it upgrades it, and it drafts what it drafted before: no blurb, no roundup
    from alembic import command
    from sqlalchemy import delete

    from stetline.store import db, ops
    from stetline.store.models import Setting
    from stetline.workspace import open_workspace

    ws = open_workspace(demo_path)
    with ws.session() as s:  # test set-up only: the demo stores its kinds, a workspace before 0008 had none
        s.execute(delete(Setting).where(Setting.key == "kinds"))
    with ws.session() as s:
        assert "kinds" not in ops.get_settings(s)
    command.downgrade(db.alembic_config(ws.url), "0007")
    ws.close()
    cli = Cli(demo_path)
    assert cli("settings", "kinds").stdout.strip() == '"headline,profile,standing,change,trend,leaders,movement"'
    cli("redraft", "--by", "admin")
    items = cli.json("list")
    assert {i["kind"] for i in items if not i["gone"]} == {
        "headline", "profile", "standing", "change", "trend", "leaders", "movement"}
    # the demo's work on blurbs and roundups (a made-new workspace's kinds) is kept, waiting as gone: the
    # rewrites, the quarterly blurb a reviewer approved, the renamed town's rewrite (stetline.demo)
    composed = [i for i in items if i["kind"] in ("blurb", "roundup")]
    assert composed and all(i["gone"] for i in composed)
    assert all(i["recheck"]["reasons"] == ["slot-gone"] for i in composed if i["status"] != "suppressed")
    assert {"blurb/gorse-point/recycling", *demo.SEASONAL_APPROVALS, "blurb/larkholt-vale/library-visits"} <= {
        i["slot"] for i in composed}


def test_a_new_workspace_drafts_the_composed_kinds_and_the_headline_and_profiles(tmp_path: Path) -> None:
    cli = Cli(tmp_path / "new")
    cli("init")
    assert cli("settings", "kinds").stdout.strip() == '"headline,profile,roundup,blurb"'
    told = cli("settings", "kinds", "headline,profile,roundup,blurb,standing", "--by", "admin").stdout
    assert "changes which statements are drafted: run `stetline redraft`" in told
    assert "wording" not in told
