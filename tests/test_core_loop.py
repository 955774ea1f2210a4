"""The core loop through the CLI: two editions of the demo, human work kept, rechecks raised."""

from __future__ import annotations

from pathlib import Path

import pytest
from helpers import Cli, every_kind, resolve_every_recheck

from stetline.store import ops
from stetline.workspace import open_workspace


def by_slot(items: list[dict]) -> dict[str, dict]:
    return {item["slot"]: item for item in items}


def test_status_after_demo_shows_two_editions_and_every_recheck_reason(demo_cli: Cli) -> None:
    status = demo_cli.json("status")
    assert status["edition"] == "2025"
    assert status["editions"] == 2
    reasons = status["recheck_reasons"]
    assert reasons["claim-changed"] > 0
    assert reasons["numbers-changed"] > 0
    assert reasons["slot-gone"] == 2
    assert reasons["render-failed"] == 1
    assert reasons["wording-changed"] == 1
    assert status["slots"] == sum(status["by_status"].values())
    assert set(status["by_status"]) == {"draft", "edited", "approved", "recheck", "suppressed"}


def renamed(slot: str) -> str:
    """A demo slot's id after the second load, which renames Larkholt (seed_data/renames-2025.csv)."""
    kind, _, rest = slot.partition("/")
    entity, sep, tail = rest.partition("/")
    return f"{kind}/larkholt-vale{sep}{tail}" if entity == "larkholt" else slot


def test_the_renamed_town_keeps_its_work_with_its_history(demo_cli: Cli) -> None:
    items = by_slot(demo_cli.json("list", "--entity", "larkholt-vale"))
    edited = {slot: item for slot, item in items.items() if item["layer"] is not None}
    assert edited and all(item["layer"]["by"] == "editor" for item in edited.values())
    for slot in edited:
        # the rename itself sends nothing to recheck: only a claim that changed does (stetline.demo), here the
        # quarterly run against the same quarter a year earlier, seven quarters long in 2024 and 11 in 2025
        shown = demo_cli.json("show", slot)
        assert shown["status"] == "recheck" and shown["recheck"]["reasons"] == ["claim-changed", "numbers-changed"]
        assert [c for c in shown["recheck"]["changes"] if "." in c["fact"]] == [
            {"fact": "trend.streak", "old": "improved:7:year-earlier", "new": "improved:11:year-earlier"}]
        old = demo_cli.json("show", slot.replace("/larkholt-vale", "/larkholt", 1))
        assert old["layer"] is None and old["gone"] is True
        history = demo_cli.json("history", slot)
        assert [h["action"] for h in history][:2] == ["rewrite", "move"]
        assert history[1]["detail"]["words"] == (
            f"moved from {slot.replace('/larkholt-vale', '/larkholt', 1)} on load of edition 2025")


def test_the_demo_queue_shows_every_reason_on_the_statements_a_report_prints(demo_cli: Cli) -> None:
    # the demo's human work sits on blurbs, roundups, the headline and a profile, and the second
    # edition sends them to recheck for every reason; a contradicted claim on blurbs of several towns
    from stetline.status import REASONS

    waiting = demo_cli.json("list", "--status", "recheck")
    assert {item["kind"] for item in waiting} == {"headline", "profile", "roundup", "blurb", "breakdown"}
    # every reason but `merged`: the demo's second edition renames one town and merges none
    # (seed_data/renames-2025.csv); tests/test_renames.py raises `merged`
    assert {r for item in waiting for r in item["recheck"]["reasons"]} == set(REASONS) - {"merged"}
    contradicted = {item["entity"] for item in waiting
                    if item["kind"] == "blurb" and "claim-changed" in item["recheck"]["reasons"]}
    assert {"gorse-point", "high-ferrow", "samphire-reach", "north-quay", "puffin-holm"} <= contradicted
    for reason in REASONS:  # each reason is raised on a blurb or a roundup at least once
        if reason not in ("wording-changed", "merged"):
            assert any(reason in item["recheck"]["reasons"] for item in waiting
                       if item["kind"] in ("blurb", "roundup")), reason
    # the demo drafts a new workspace's kinds and the breakdown kind; no part kind is listed
    assert {item["kind"] for item in demo_cli.json("list")} == {"headline", "profile", "roundup", "blurb", "breakdown"}


def test_the_demo_rechecks_its_breakdowns_by_age_band(demo_cli: Cli) -> None:
    # seed_data/README.md: in 2025 Tidemere's best age band turns from 65+ to 16-34 and its worst from 16-34 to
    # 35-64; North Quay's gap widens from 9 to 10 points with the same best and worst bands
    tidemere = demo_cli.json("show", "breakdown/tidemere/parks-satisfaction/age")
    assert tidemere["layer"]["type"] == "rewrite" and tidemere["recheck"]["reasons"][0] == "claim-changed"
    changes = {c["fact"]: (c["old"], c["new"]) for c in tidemere["recheck"]["changes"]}
    assert changes["best"] == (["65+"], ["16-34"]) and changes["worst"] == (["16-34"], ["35-64"])
    assert tidemere["recheck"]["clean"] is False  # a contradicted claim needs a person
    north_quay = demo_cli.json("show", "breakdown/north-quay/parks-satisfaction/age")
    assert north_quay["recheck"]["reasons"] == ["numbers-changed"]  # approved on 2024; the same groups in 2025
    changes = {c["fact"]: (c["old"], c["new"]) for c in north_quay["recheck"]["changes"]}
    assert changes["gap"] == ("9 percentage points", "10 percentage points")
    assert "best" not in changes and "worst" not in changes
    # Cairnbrook's bands carry no human work: its new draft is written silently
    assert demo_cli.json("show", "breakdown/cairnbrook/parks-satisfaction/age")["status"] == "draft"


def test_every_layer_of_the_first_edition_survives_the_refresh(demo_cli: Cli) -> None:
    from stetline import demo

    items = by_slot(demo_cli.json("list"))
    # the demo's human work (stetline.demo), listed here so that emptying it fails this test
    assert set(demo.REWRITES) == {
        "blurb/gorse-point/recycling", "blurb/heronsford/parks-satisfaction", "roundup/parks-satisfaction",
        "blurb/little-thrift/parks-satisfaction", "blurb/puffin-holm/relet-days", "blurb/larkholt/library-visits",
        "roundup/paper-timetables", "breakdown/tidemere/parks-satisfaction/age",
    }
    assert set(demo.PINS) == {"roundup/broadband", "blurb/north-quay/broadband"}
    assert set(demo.NOTES) == {
        "blurb/samphire-reach/recycling", "profile/north-quay", "blurb/wrackhaven/paper-timetables",
    }
    assert set(demo.SUPPRESS) == {"blurb/puffin-holm/new-business"}
    assert set(demo.COMMENTS) == {"blurb/gorse-point/recycling", "blurb/high-ferrow/bus-punctuality"}
    from stetline import comments

    ws = open_workspace(demo_cli.path)
    with ws.session() as s:
        for slot, thread in demo.COMMENTS.items():
            assert [(c.by, c.text) for c in comments.thread(s, slot)] == list(thread)
    ws.close()
    for slot, text in demo.REWRITES.items():
        slot = renamed(slot)
        assert items[slot]["layer"] == {**items[slot]["layer"], "type": "rewrite", "text": text, "by": "editor"}
    for slot in demo.PINS:
        assert items[renamed(slot)]["layer"]["type"] == "pin"
    for slot, note in demo.NOTES.items():
        slot = renamed(slot)
        assert [n["text"] for n in items[slot]["notes"]] == [note]
        assert items[slot]["notes"][0]["by"] == "expert"
    for slot in map(renamed, demo.SUPPRESS):
        assert items[slot]["suppressed"] is True
        assert items[slot]["status"] == "suppressed"
        assert items[slot]["text"] is None


def test_numbers_changed_rewrite_gets_a_clean_proposal_with_the_new_numbers(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "blurb/heronsford/parks-satisfaction")
    assert item["status"] == "recheck"
    recheck = item["recheck"]
    assert recheck["reasons"] == ["numbers-changed"]
    assert recheck["clean"] is True
    # the editor's own words are kept, the numbers are the 2025 edition's
    assert recheck["proposed"] == (
        "Heronsford residents remain among the most satisfied with their parks: 81% in 2025, well above the "
        "Estuary average of 67%.")
    changes = {c["fact"]: (c["old"], c["new"]) for c in recheck["changes"]}
    assert changes["value"] == ("82%", "81%")
    assert changes["group_mean"] == ("68%", "67%")


def test_each_numbers_changed_rewrite_proposes_every_new_number(demo_cli: Cli) -> None:
    checked: dict[str, int] = {}
    for item in demo_cli.json("list", "--status", "recheck"):
        recheck = item["recheck"]
        if recheck["reasons"] != ["numbers-changed"] or not item["layer"] or item["layer"]["type"] != "rewrite":
            continue
        for change in recheck["changes"]:
            old, new = change["old"], change["new"]
            if old and old in item["layer"]["text"]:
                assert new in recheck["proposed"], (item["slot"], change)
                checked[item["slot"]] = checked.get(item["slot"], 0) + 1
    # the demo's two rewrites whose only recheck reason is new numbers, and the numbers their
    # editor's text quotes: Heronsford's 82%, the Estuary's 68% and the year; the parks roundup's
    # best figure (86%), the gap (28 points) and the year (the worst, 58%, is unchanged)
    assert checked == {"blurb/heronsford/parks-satisfaction": 3, "roundup/parks-satisfaction": 3}


def test_claim_change_lists_each_claim_old_to_new(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "blurb/gorse-point/recycling")
    recheck = item["recheck"]
    assert recheck["reasons"][0] == "claim-changed"
    changes = {c["fact"]: (c["old"], c["new"]) for c in recheck["changes"]}
    # the rewrite said the rate climbed; in 2025 it fell
    assert changes["change.direction"] == ("up", "down")
    assert changes["change.better"] == ("improved", "worsened")
    # a contradicted claim is never resolved silently: the proposal is not clean
    assert recheck["clean"] is False
    assert {c["fact"] for c in recheck["contradicted"]} >= {"change.direction", "change.better"}


def test_approved_draft_whose_claims_changed_goes_to_recheck(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "blurb/high-ferrow/bus-punctuality")
    changes = {c["fact"]: (c["old"], c["new"]) for c in item["recheck"]["changes"]}
    assert changes["standing.rank_band"] == ("top", "lower")
    assert changes["standing.target"] == ("met", "missed")


def test_gone_slot_keeps_its_layers(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "roundup/paper-timetables")
    assert item["status"] == "recheck"
    assert item["recheck"]["reasons"] == ["slot-gone"]
    assert item["layer"]["type"] == "rewrite"
    note = demo_cli.json("show", "blurb/wrackhaven/paper-timetables")
    assert note["recheck"]["reasons"] == ["slot-gone"]
    assert len(note["notes"]) == 1


def test_live_field_rewrite_updates_itself_without_recheck(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "blurb/little-thrift/parks-satisfaction")
    assert item["status"] == "edited"
    assert item["text"] == (
        "In 2025, 67% of Little Thrift's residents were satisfied with their local parks, 8th of 14 towns.")
    assert item["layer"]["text"].startswith("In {{ period }}, {{ value }} of Little Thrift's")


def test_a_live_field_the_new_draft_lacks_fails_to_render_and_waits(demo_cli: Cli) -> None:
    # Puffin Holm's re-let time stopped lengthening in 2025: the blurb no longer states a streak, so the
    # rewrite's {{ streak }} cannot render; the rewrite is kept as written, and the page shows the draft
    item = demo_cli.json("show", "blurb/puffin-holm/relet-days")
    assert item["recheck"]["reasons"][:2] == ["claim-changed", "render-failed"]
    assert "'streak' is undefined" in item["render_error"]
    assert item["current"].startswith("Re-let times in Puffin Holm have lengthened for {{ streak }} years")
    assert item["text"] == item["draft"] and "63 days in 2025" in item["draft"]


def test_wording_change_of_an_approved_draft(demo_cli: Cli) -> None:
    item = demo_cli.json("show", "headline")
    assert item["recheck"]["reasons"] == ["wording-changed"]
    assert item["recheck"]["changes"] == []
    assert ", and library borrowing" in item["draft"]  # serial comma now on


def test_json_shapes_follow_the_contract(demo_cli: Cli) -> None:
    every_kind(demo_cli.path)  # the part kinds too, so that every kind's shape is checked
    items = demo_cli.json("list")
    keys = {"slot", "kind", "entity", "topic", "status", "text", "draft", "layer", "notes", "suppressed",
            "recheck", "evidence", "claims"}
    for item in items:
        assert keys <= set(item)
        assert isinstance(item["draft"], str)
        assert isinstance(item["suppressed"], bool)
        for name, entry in item["evidence"].items():
            assert set(entry) == {"value", "shown"}, name
        for value in item["claims"].values():
            assert value is None or isinstance(value, (str, bool, int, float, list))
        if item["entity"] and item["topic"]:
            assert {"value", "period"} <= set(item["evidence"])
        if item["kind"] == "standing" and item["evidence"]["value"]["value"] is not None:
            assert {"rank", "rank_of"} <= set(item["evidence"])
        if item["kind"] == "change":
            assert {"previous", "previous_period", "change"} <= set(item["evidence"])
        if item["kind"] == "blurb" and item["evidence"]["value"]["value"] is not None:
            assert {"rank", "rank_of"} <= set(item["evidence"])
            assert all("." in claim for claim in item["claims"])  # namespaced by the part kind
    # every kind, the breakdowns too: the demo's data hold breakdowns by age group (seed_data/README.md)
    assert {item["kind"] for item in items} == {"headline", "profile", "standing", "change", "trend", "blurb",
                                                "leaders", "movement", "roundup", "breakdown"}
    shown = demo_cli.json("show", "profile/north-quay")
    assert [h["action"] for h in shown["history"]][:2] == ["annotate", "recheck"]
    assert {"composite", "composite_rank"} <= set(shown["evidence"])


def test_list_filters(demo_cli: Cli) -> None:
    items = demo_cli.json("list", "--entity", "tidemere", "--kind", "blurb")
    assert {i["slot"] for i in items} == {f"blurb/tidemere/{t}" for t in {i["topic"] for i in items}}
    # seed_data/topics.csv: 11 yearly topics still reported (paper timetables stopped) and one quarterly
    assert len(items) == 12
    assert all(i["status"] == "recheck" for i in demo_cli.json("list", "--status", "recheck"))


def _snapshot(path: Path) -> dict:
    ws = open_workspace(path)
    with ws.session() as s:
        counts = ops.table_counts(s)
        layers = [(x.id, x.slot_id, x.type, x.text, x.dropped_at) for x in ops.all_active_layers(s)]
        approvals = [(a.id, a.slot_id, a.text) for a in ops.all_active_approvals(s)]
        statuses = {sl.id: (sl.status, sl.version, sl.recheck)
                    for sl, _ in ops.list_slots(s, ops.SlotFilter(include_gone=True))}
    ws.close()
    return {"counts": counts, "layers": layers, "approvals": approvals, "statuses": statuses}


def test_identical_edition_sends_nothing_to_recheck_and_writes_no_draft(demo_cli: Cli, demo_files: Path) -> None:
    before = _snapshot(demo_cli.path)
    out = demo_cli("load", str(demo_files / "observations-2025.csv"), "--json", "--by", "admin")
    import json

    summary = json.loads(out.stdout)
    assert summary["edition"] == "2025-r2"
    assert summary["sent_to_recheck"] == 0
    assert summary["drafts_written"] == 0
    assert summary["observations_written"] == 0
    after = _snapshot(demo_cli.path)
    assert after["layers"] == before["layers"]
    assert after["approvals"] == before["approvals"]
    assert after["counts"]["draft"] == before["counts"]["draft"]
    assert after["counts"]["observation"] == before["counts"]["observation"]
    assert {k: v[0] for k, v in after["statuses"].items()} == {k: v[0] for k, v in before["statuses"].items()}
    assert after["counts"]["edition"] == before["counts"]["edition"] + 1


def test_dry_run_writes_nothing(demo_cli: Cli, demo_files: Path) -> None:
    before = _snapshot(demo_cli.path)
    out = demo_cli("load", str(demo_files / "observations-2024.csv"), "--dry-run")
    assert "dry run: nothing was written" in out.stdout
    assert _snapshot(demo_cli.path) == before


BAD_FILES = {
    "missing column": ("entity,topic,value\nnorth-quay,recycling,40\n", "missing column(s) period"),
    "not a number": ("entity,topic,period,value\nnorth-quay,recycling,2025,forty\n",
                     "row 2, column 'value': the value is not a number: 'forty'"),
    "duplicate": ("entity,topic,period,value\nnorth-quay,recycling,2025,40\nnorth-quay,recycling,2025,41\n",
                  "row 3: duplicate observation"),
    "unknown topic": ("entity,topic,period,value\nnorth-quay,recyclng,2025,40\n", "did you mean 'recycling'?"),
    "mixed periods": ("entity,topic,period,value\nnorth-quay,recycling,2025,40\n"
                      "shellby-sands,recycling,2025-Q1,40\n", "row 3, column 'period': topic 'recycling' mixes period "
                      "formats: most of its rows are years (like 2025) but this one is a quarter ('2025-Q1')"),
    "empty": ("", "the file is empty"),
    "slash in key": ("entity,topic,period,value\nnorth/quay,recycling,2025,40\n", "a key may not contain '/'"),
}


@pytest.mark.parametrize("case", sorted(BAD_FILES))
def test_bad_input_gives_a_clear_error_and_changes_nothing(demo_cli: Cli, tmp_path: Path, case: str) -> None:
    content, message = BAD_FILES[case]
    bad = tmp_path / "bad.csv"
    bad.write_text(content, encoding="utf-8")
    before = _snapshot(demo_cli.path)
    result = demo_cli("load", str(bad), ok=False)
    assert result.exit_code == 1
    assert message in result.stderr
    assert "bad.csv" in result.stderr
    assert "Traceback" not in result.output
    assert _snapshot(demo_cli.path) == before


def test_unknown_slot_is_a_clear_error(demo_cli: Cli) -> None:
    result = demo_cli("show", "standing/atlantis/recycling", ok=False)
    assert result.exit_code == 1
    assert "no statement 'standing/atlantis/recycling'" in result.stderr


def test_taken_edition_label_is_refused(demo_cli: Cli, demo_files: Path) -> None:
    result = demo_cli("load", str(demo_files / "observations-2025.csv"), "--edition", "2024", ok=False)
    assert "edition '2024' already exists" in result.stderr


def test_first_load_needs_metadata(cli: Cli, demo_files: Path) -> None:
    cli("init")
    result = cli("load", str(demo_files / "observations-2024.csv"), ok=False)
    assert "give a topics file on the first load" in result.stderr


def test_resolving_every_recheck_opens_the_gate(demo_cli: Cli, tmp_path: Path) -> None:
    refused = demo_cli("publish", "--format", "md", "--by", "admin", ok=False)
    assert "publishing refused" in refused.stderr
    assert "blurb/heronsford/parks-satisfaction" in refused.stderr
    resolve_every_recheck(demo_cli)
    out = tmp_path / "report.md"
    demo_cli("publish", "--format", "md", "-o", str(out), "--by", "admin")
    report = out.read_text(encoding="utf-8")
    assert report.startswith("# Kestrel Sound Regional Council: Service Scorecard")
    assert "qualified person must check" in report
    assert ("Heronsford residents remain among the most satisfied with their parks: 81% in 2025, well above "
            "the Estuary average of 67%.") in report
    assert "Printed timetables were withdrawn" not in report  # gone slots are not published
    assert "Puffin Holm's 2025 figure" not in report


def test_rewrite_actions_and_revert(demo_cli: Cli) -> None:
    slot = "blurb/north-quay/recycling"
    demo_cli("rewrite", slot, "North Quay recycled {{ value }} of household waste in {{ period }}.", "--by", "editor")
    item = demo_cli.json("show", slot)
    assert item["status"] == "edited"
    assert item["text"] == "North Quay recycled 46.5% of household waste in 2025."
    demo_cli("approve", slot, "--by", "reviewer")
    assert demo_cli.json("show", slot)["status"] == "approved"
    demo_cli("revert", slot, "--by", "editor")
    item = demo_cli.json("show", slot)
    assert item["status"] == "draft"
    assert item["text"] == item["draft"]
    assert [h["action"] for h in item["history"]][-3:] == ["rewrite", "approve", "revert"]


@pytest.mark.parametrize("text, message", [
    ("{{ ''.__class__ }}", "refused in a live field"),
    ("{{ 'a' * 10000000 }}", "refused in a live field"),
    ("{{ nosuchfact }}", "unknown live field"),
    ("{{ value ", "syntax error"),
])
def test_rewrite_with_a_bad_live_field_is_refused(demo_cli: Cli, text: str, message: str) -> None:
    slot = "blurb/north-quay/recycling"
    before = demo_cli.json("show", slot)
    result = demo_cli("rewrite", slot, text, "--by", "editor", ok=False)
    assert result.exit_code == 1
    assert message in result.stderr
    assert demo_cli.json("show", slot)["version"] == before["version"]


def test_a_load_that_fails_while_writing_leaves_the_workspace_as_it_was(
    demo_path: Path, demo_files: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    from stetline import loading

    before = _snapshot(demo_path)

    def explode(*_args: object, **_kwargs: object) -> None:
        raise RuntimeError("disk full")

    monkeypatch.setattr(loading.ops, "apply_decisions", explode)
    ws = open_workspace(demo_path)
    with pytest.raises(RuntimeError):
        loading.load_edition(ws, demo_files / "observations-2024.csv", by="admin", label="again")
    ws.close()
    assert _snapshot(demo_path) == before


def test_a_redraft_sees_the_revisions_its_load_saw(demo_cli: Cli, demo_files: Path) -> None:
    # the 2025 edition revised Shellby Sands' 2024 recycling (seed_data/README.md); loading the
    # same file again keeps that revision on record, and so must a redraft of the reload:
    # neither may reword a statement, however often they alternate
    import json

    reload = ["load", str(demo_files / "observations-2025.csv"), "--json", "--by", "admin"]
    assert json.loads(demo_cli(*reload).stdout)["drafts_written"] == 0
    revised = demo_cli.json("show", "blurb/shellby-sands/recycling")
    assert "revised_from" in revised["evidence"]
    for _ in range(2):
        redrafted = json.loads(demo_cli("redraft", "--json", "--by", "admin").stdout)
        assert redrafted["drafts_written"] == 0 and redrafted["sent_to_recheck"] == 0
        assert json.loads(demo_cli(*reload).stdout)["drafts_written"] == 0
    assert demo_cli.json("show", "blurb/shellby-sands/recycling")["evidence"] == revised["evidence"]
