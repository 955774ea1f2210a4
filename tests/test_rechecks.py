"""The reviewer's homework: the number audit, accepting every clean proposal, the changelog."""

from __future__ import annotations

import json

from helpers import Cli, resolve_every_recheck


def test_audit_names_every_untraced_number_of_the_demo(demo_cli: Cli) -> None:
    # the audit reads what a publication would print: while their rechecks wait, the stale rewrite
    # and note are not printed (the new drafts are), so their typed numbers are not audited
    waiting = {a["slot"]: a for a in demo_cli.json("audit")}
    assert waiting["blurb/gorse-point/recycling"]["untraced"] == []
    assert waiting["profile/north-quay"]["untraced"] == []
    for slot in ("blurb/gorse-point/recycling", "profile/north-quay"):
        demo_cli("approve", slot, "--confirm-claims", "--by", "reviewer")
    results = {a["slot"]: a for a in demo_cli.json("audit")}
    # a typed year no fact backs, in an editor's rewrite and in an expert's note
    assert "2020" in results["blurb/gorse-point/recycling"]["untraced"]
    assert results["profile/north-quay"]["untraced"] == ["2023"]
    # machine drafts trace completely: every number comes from a fact or a label
    drafted = [a for slot, a in results.items() if a["untraced"] and not slot.startswith(
        ("blurb/gorse-point", "profile/north-quay"))]
    assert drafted == []
    units = [n for n in results["blurb/heronsford/new-business"]["numbers"] if n["text"] == "1,000"]
    assert units and all(n["fact"] is not None for n in units)  # part of a shown value or the unit label


def test_accept_all_clean_asks_first_then_records_one_event_each(demo_cli: Cli) -> None:
    refused = demo_cli("approve", "--all-clean", "--by", "reviewer", input="n\n", ok=False)
    assert refused.exit_code == 1
    assert demo_cli.json("show", "blurb/heronsford/parks-satisfaction")["status"] == "recheck"
    out = demo_cli("approve", "--all-clean", "--yes", "--by", "reviewer")
    # numbers only: two rewrites, an approved roundup and an approved breakdown (North Quay's gap widens)
    assert "4 statement(s) approved" in out.stdout
    assert "breakdown/north-quay/parks-satisfaction/age: approved (proposed text accepted)" in out.stdout
    item = demo_cli.json("show", "blurb/heronsford/parks-satisfaction")
    assert item["status"] == "approved"
    assert item["text"].startswith("Heronsford residents remain among the most satisfied with their parks: 81%")
    assert item["history"][-1]["action"] == "accept"
    # claim changes and conflicts are never accepted in bulk
    assert demo_cli.json("show", "blurb/gorse-point/recycling")["status"] == "recheck"
    assert demo_cli.json("show", "blurb/high-ferrow/bus-punctuality")["status"] == "recheck"
    assert demo_cli.json("show", "breakdown/tidemere/parks-satisfaction/age")["status"] == "recheck"


def test_a_contradicted_proposal_cannot_be_accepted_as_it_is(demo_cli: Cli) -> None:
    result = demo_cli("approve", "blurb/gorse-point/recycling", "--accept-proposed", "--by", "reviewer", ok=False)
    assert result.exit_code == 1 and "the new data contradict" in result.stderr
    assert demo_cli.json("show", "blurb/gorse-point/recycling")["status"] == "recheck"


def test_changelog_between_the_two_demo_editions(demo_cli: Cli) -> None:
    log = json.loads(demo_cli("changes", "--format", "json").stdout)
    assert (log["from_edition"], log["to_edition"]) == ("2024", "2025")
    assert "roundup/paper-timetables" in log["gone"] and "blurb/wrackhaven/paper-timetables" in log["gone"]
    # gone: the discontinued indicator's statements only
    assert all("paper-timetables" in s for s in log["gone"])
    # Larkholt is renamed Larkholt Vale (seed_data/renames-2025.csv): its statements moved, neither gone nor added
    moved = {m["from"]: m for m in log["moved"]}
    assert moved["profile/larkholt"]["to"] == "profile/larkholt-vale" and "profile/larkholt-vale" not in log["added"]
    assert {m["names"] for m in log["moved"]} == {"Larkholt → Larkholt Vale"}
    assert not any("larkholt" in s for s in log["added"])
    assert "profile/larkholt" not in log["gone"]  # its paper timetables blurb is gone with the indicator
    # with its change in numbers: the quarterly visits (observations-2025.csv, larkholt-vale 2025-Q3)
    visits = moved["blurb/larkholt/library-visits"]
    assert visits["to"] == "blurb/larkholt-vale/library-visits"
    assert visits["value"] == {"old": "1,214 per 1,000 residents", "new": "1,236 per 1,000 residents"}
    flipped = {f["slot"]: f for f in log["flipped"]}
    gorse = flipped["blurb/gorse-point/recycling"]
    assert {"fact": "change.direction", "old": "up", "new": "down"} in gorse["claims"]
    assert "down 1.1 percentage points" in gorse["new_text"]
    carried = {c["slot"]: c for c in log["carried"]}
    assert carried["blurb/heronsford/parks-satisfaction"]["layers"] == ["rewrite"]
    assert carried["blurb/heronsford/parks-satisfaction"]["outcome"] == "recheck: numbers-changed"
    md = demo_cli("changes").stdout
    assert md.startswith("# Changes from edition 2024 to 2025")
    assert ("- blurb/larkholt/library-visits → blurb/larkholt-vale/library-visits (Larkholt → Larkholt Vale): "
            "value 1,214 per 1,000 residents → 1,236 per 1,000 residents") in md


def test_publish_warns_on_untraced_numbers_and_can_refuse_them(demo_cli: Cli, tmp_path) -> None:
    resolve_every_recheck(demo_cli)  # keeps the Gorse Point rewrite, whose claims the reviewer confirms
    out = demo_cli("publish", "-o", str(tmp_path / "r.md"), "--by", "admin")
    assert "blurb/gorse-point/recycling: untraced number(s) 1.4, 2020" in out.stderr
    demo_cli("settings", "untraced_numbers", "refuse", "--by", "admin")
    refused = demo_cli("publish", "-o", str(tmp_path / "r2.md"), "--by", "admin", ok=False)
    assert "numbers that match no fact" in refused.stderr
    assert not (tmp_path / "r2.md").exists()
