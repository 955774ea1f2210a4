"""Renamed and merged entities at a load (`stetline load OBS --renames MAP.csv`): human work moves."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest
from helpers import Cli

from stetline import comments
from stetline.store import ops
from stetline.workspace import open_workspace

TOPICS = """topic,label,unit,better,decimals,category,target
parks,Satisfaction with parks,percent,higher,1,Leisure,
recycling,Household recycling rate,percent,higher,1,Environment,
"""
# invented towns; east leads on parks, so the leaders statement names it
VALUES = {
    "east": (70.0, 74.0, 50.0, 52.0), "west": (60.0, 61.0, 45.0, 47.0), "north": (55.0, 56.0, 40.0, 41.0),
    "south": (50.0, 50.5, 35.0, 36.0), "mid": (45.0, 44.0, 30.0, 31.0),
}


def _observations(path: Path, keys: dict[str, str], changed: dict[str, float] | None = None) -> Path:
    """Write observations for 2023-2024, each town under the key ``keys`` gives it (dropped when absent)."""
    lines = ["entity,topic,period,value"]
    for town, (p23, p24, r23, r24) in VALUES.items():
        if town not in keys:
            continue
        key = keys[town]
        p24 = (changed or {}).get(town, p24)
        lines += [f"{key},parks,2023,{p23}", f"{key},parks,2024,{p24}",
                  f"{key},recycling,2023,{r23}", f"{key},recycling,2024,{r24}"]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _entities(path: Path, extra: dict[str, str]) -> Path:
    rows = [f"{k},{k.title()},Coast" for k in VALUES] + [f"{k},{name},Coast" for k, name in extra.items()]
    path.write_text("entity,name,group\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return path


def _map(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture
def started(cli: Cli, tmp_path: Path) -> Cli:
    """A workspace with its first edition and human work on the town `east` (and `west`)."""
    cli("init")
    # the kinds drafted, set explicitly: entity-keyed composed slots and a topic slot naming a leader
    cli("settings", "kinds", "profile,blurb,leaders", "--by", "admin")
    topics = tmp_path / "topics.csv"
    topics.write_text(TOPICS, encoding="utf-8")
    cli("load", str(_observations(tmp_path / "obs1.csv", {k: k for k in VALUES})), "--topics", str(topics),
        "--entities", str(_entities(tmp_path / "entities.csv", {"east-vale": "East Vale", "twin-towns": "Twin Towns"})),
        "--by", "admin")
    cli("rewrite", "blurb/east/parks", "East is the town most content with its parks: 74.0% are satisfied.",
        "--by", "ann")
    cli("approve", "blurb/east/parks", "--by", "rev")
    cli("annotate", "profile/east", "The new lido opened in spring.", "--by", "exp")
    cli("approve", "leaders/parks", "--by", "rev")
    cli("rewrite", "blurb/west/parks", "West comes second on parks, at 61.0%.", "--by", "bob")
    cli("approve", "blurb/west/recycling", "--by", "rev")
    ws = open_workspace(cli.path)
    try:
        with ws.session() as session:
            comments.add_comment(session, "profile/east", "Check the lido date with the council.", "exp")
    finally:
        ws.close()
    return cli


def _snapshot(cli: Cli) -> dict[str, Any]:
    """Everything a person sees of the workspace, and the row count of every table a load writes."""
    ws = open_workspace(cli.path)
    try:
        with ws.reading() as session:
            counts = ops.table_counts(session)
            thread = [c.text for c in ops.comments_for(session, "profile/east")]
    finally:
        ws.close()
    return {"status": cli.json("status"), "list": cli.json("list"), "tables": counts, "thread": thread}


def test_a_rename_with_the_same_data_moves_every_piece_of_work_and_raises_nothing(
        started: Cli, tmp_path: Path) -> None:
    renames = _map(tmp_path / "renames.csv", "old,new\neast,east-vale\n")
    out = started("load", str(_observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"})),
                  "--renames", str(renames), "--by", "admin").stdout
    assert "sent to recheck:            0" in out
    assert "blurb/east/parks → blurb/east-vale/parks: 1 layer, 1 approval, 0 comments" in out
    assert "profile/east → profile/east-vale: 1 layer, 0 approvals, 1 comment" in out
    assert started.json("status")["by_status"]["recheck"] == 0
    blurb = started.json("show", "blurb/east-vale/parks")
    assert blurb["status"] == "approved"
    assert blurb["layer"]["type"] == "rewrite" and blurb["layer"]["by"] == "ann"
    assert blurb["text"] == "East is the town most content with its parks: 74.0% are satisfied."
    moved = [h for h in blurb["history"] if h["action"] == "move"]
    assert moved and moved[0]["detail"]["words"] == "moved from blurb/east/parks on load of edition 2024-r2"
    assert [h["action"] for h in blurb["history"]][:2] == ["rewrite", "approve"]  # its earlier history came along
    profile = started.json("show", "profile/east-vale")
    assert profile["status"] == "edited"
    assert [n["text"] for n in profile["notes"]] == ["The new lido opened in spring."]
    ws = open_workspace(started.path)
    try:
        with ws.reading() as session:
            assert [c.text for c in ops.comments_for(session, "profile/east-vale")] == [
                "Check the lido date with the council."]
            assert ops.comments_for(session, "profile/east") == []
    finally:
        ws.close()
    # the leaders statement named east as the leader; it now names east-vale, and stays approved
    assert started.json("show", "leaders/parks")["status"] == "approved"
    old = started.json("show", "blurb/east/parks")
    assert old["layer"] is None and old["status"] == "draft"
    # the next refresh with the same data finds nothing to recheck either (the bases were stored renamed)
    started("load", str(tmp_path / "obs2.csv"), "--by", "admin")
    assert started.json("status")["by_status"]["recheck"] == 0


def test_a_rename_with_changed_numbers_sends_the_moved_work_to_recheck(started: Cli, tmp_path: Path) -> None:
    obs = _observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"}, {"east": 75.0})
    started("load", str(obs), "--renames", str(_map(tmp_path / "m.csv", "old,new\neast,east-vale\n")), "--by", "admin")
    blurb = started.json("show", "blurb/east-vale/parks")
    assert blurb["status"] == "recheck"
    assert blurb["recheck"]["reasons"] == ["numbers-changed"]
    assert {"fact": "parks.value", "old": "74.0%", "new": "75.0%"} in blurb["recheck"]["changes"] or any(
        c["old"] == "74.0%" and c["new"] == "75.0%" for c in blurb["recheck"]["changes"])
    assert "75.0%" in blurb["recheck"]["proposed"]
    assert blurb["layer"]["by"] == "ann"
    # the changelog lists the statement as moved, with its new number, not as one gone and one added
    log = json.loads(started("changes", "--format", "json").stdout)
    moved = {m["from"]: m for m in log["moved"]}["blurb/east/parks"]
    assert (moved["to"], moved["names"], moved["value"]) == (
        "blurb/east-vale/parks", "East → East Vale", {"old": "74.0%", "new": "75.0%"})
    assert "blurb/east/parks" not in log["gone"] and "blurb/east-vale/parks" not in log["added"]


def test_a_merger_shows_both_old_texts_for_a_person_to_choose(started: Cli, tmp_path: Path) -> None:
    keys = {**{k: k for k in VALUES}, "east": "twin-towns"}
    del keys["west"]
    started("load", str(_observations(tmp_path / "obs2.csv", keys)),
            "--renames", str(_map(tmp_path / "m.csv", "old,new\neast,twin-towns\nwest,twin-towns\n")), "--by", "admin")
    merged = started.json("show", "blurb/twin-towns/parks")
    assert merged["status"] == "recheck" and merged["recheck"]["reasons"] == ["merged"]
    choices = merged["recheck"]["merged"]
    assert [(c["slot"], c["text"], c["author"]) for c in choices] == [
        ("blurb/east/parks", "East is the town most content with its parks: 74.0% are satisfied.", "ann"),
        ("blurb/west/parks", "West comes second on parks, at 61.0%.", "bob"),
    ]
    assert merged["layer"] is None  # the draft shows until a person chooses
    shown = started("show", "blurb/twin-towns/parks").stdout
    assert "merged text 2, from blurb/west/parks (rewrite by bob): West comes second on parks, at 61.0%." in shown
    started("choose", "blurb/twin-towns/parks", "--text", "2", "--by", "ed")
    chosen = started.json("show", "blurb/twin-towns/parks")
    assert chosen["text"] == "West comes second on parks, at 61.0%."
    assert chosen["status"] == "edited" and chosen["recheck"] is None
    # an untouched draft merged with an approved one: both drafts are offered; keep the new draft
    blurb = started.json("show", "blurb/twin-towns/recycling")
    assert [(c["type"], c["approved"]) for c in blurb["recheck"]["merged"]] == [("draft", False), ("draft", True)]
    started("choose", "blurb/twin-towns/recycling", "--draft", "--by", "ed")
    kept = started.json("show", "blurb/twin-towns/recycling")
    assert (kept["status"], kept["recheck"], kept["text"]) == ("draft", None, kept["draft"])
    refused = started("choose", "blurb/twin-towns/recycling", "--draft", "--by", "ed", ok=False)
    assert "blurb/twin-towns/recycling holds no merged texts to choose from" in refused.stderr
    # notes are not texts to choose between: they move, and are judged against the new draft as usual
    profile = started.json("show", "profile/twin-towns")
    assert profile["notes"][0]["text"] == "The new lido opened in spring."
    assert "merged" not in (profile["recheck"] or {}).get("reasons", [])


def test_the_texts_to_choose_from_outlast_every_other_edit_until_a_choice_rewrite_or_revert(
        started: Cli, tmp_path: Path) -> None:
    _merge(started, tmp_path)
    slot = "blurb/twin-towns/parks"
    choices = started.json("show", slot)["recheck"]["merged"]
    # a note, a pin and a later load of the same data leave the choice waiting, with the same texts
    started("annotate", slot, "The two towns share one parks team from 2025.", "--by", "exp")
    started("pin", slot, "--by", "ed")
    started("load", str(tmp_path / "obs2.csv"), "--by", "admin")
    waiting = started.json("show", slot)
    assert waiting["status"] == "recheck" and "merged" in waiting["recheck"]["reasons"]
    assert waiting["recheck"]["merged"] == choices and waiting["layer"]["type"] == "pin"
    # a reviewer cannot sign it off past the choice
    refused = started("approve", slot, "--by", "rev", ok=False)
    assert f"several statements were merged into {slot}: choose a text first" in refused.stderr
    assert started.json("show", slot)["recheck"]["merged"] == choices
    # the choice is made: the text chosen is the rewrite, the note stays, the texts to choose from are gone
    started("choose", slot, "--text", "1", "--by", "ed")
    chosen = started.json("show", slot)
    assert chosen["text"] == "East is the town most content with its parks: 74.0% are satisfied."
    assert chosen["status"] == "edited" and chosen["recheck"] is None
    assert [n["text"] for n in chosen["notes"]] == ["The two towns share one parks team from 2025."]
    # a rewrite of one's own replaces the choice, and the history says so
    other = "blurb/twin-towns/recycling"
    started("rewrite", other, "The twin towns recycle about half their household waste.", "--by", "ed")
    rewritten = started.json("show", other)
    assert rewritten["status"] == "edited" and rewritten["recheck"] is None
    aside = next(h for h in rewritten["history"] if h["action"] == "set-aside-merged")
    assert aside["detail"]["words"] == "the merged texts to choose from were set aside by a rewrite"
    assert [c["slot"] for c in aside["detail"]["merged"]] == ["blurb/east/recycling", "blurb/west/recycling"]
    refused = started("choose", other, "--text", "1", "--by", "ed", ok=False)
    assert f"{other} holds no merged texts to choose from" in refused.stderr


def test_a_revert_of_a_merged_statement_keeps_the_new_draft_and_says_why(started: Cli, tmp_path: Path) -> None:
    _merge(started, tmp_path)
    slot = "blurb/twin-towns/parks"
    started("revert", slot, "--by", "ed")  # no rewrite or pin on it yet: the revert sets the merged texts aside
    kept = started.json("show", slot)
    assert (kept["status"], kept["recheck"], kept["text"]) == ("draft", None, kept["draft"])
    aside = next(h for h in kept["history"] if h["action"] == "set-aside-merged")
    assert aside["detail"]["words"] == "the merged texts to choose from were set aside by a revert"
    # nothing is lost: the earlier texts stay in the history of the merged statement
    texts = {h["after"] for h in kept["history"] if h["action"] == "rewrite"}
    assert "West comes second on parks, at 61.0%." in texts


BAD_MAPS = [
    ("old,new\nnowhere,east-vale\n", "renames.csv, row 2, column 'old': the workspace holds no entity 'nowhere'"),
    ("old,new\neast,elsewhere\n", "renames.csv, row 2, column 'new': the new data hold no entity 'elsewhere'"),
    ("old,new\neast,east-vale\neast,twin-towns\n",
     "renames.csv, row 3, column 'old': 'east' is mapped twice (rows 2 and 3)"),
    ("old,new\neast,east-vale\neast-vale,twin-towns\n",
     "renames.csv, row 2, column 'new': 'east-vale' is itself mapped to 'twin-towns' on row 3: a chain or cycle; "
     "map 'east' straight to the key it ends as"),
    ("old,new\neast,west\nwest,east\n",  # a cycle: each row names the other
     "renames.csv, row 3, column 'new': 'east' is itself mapped to 'west' on row 2: a chain or cycle; "
     "map 'west' straight to the key it ends as"),
    ("old,new\nwest,east-vale\n",
     "renames.csv, row 2, column 'old': 'west' is still in the new data: only a key that leaves the data can be "
     "renamed"),
    ("from,to\neast,east-vale\n",
     "renames.csv, row 1: the mapping needs the columns old and new; missing: old, new (found: from, to)"),
    ("old,new\neast,\n", "renames.csv, row 2, column 'new': the key is empty"),
]


@pytest.mark.parametrize(("text", "message"), BAD_MAPS)
def test_a_bad_mapping_is_refused_with_its_row_and_column_and_changes_nothing(
        started: Cli, tmp_path: Path, text: str, message: str) -> None:
    obs = _observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"})
    before = _snapshot(started)
    mapping = _map(tmp_path / "renames.csv", text)
    result = started("load", str(obs), "--renames", str(mapping), "--by", "admin", ok=False)
    assert result.exit_code == 1
    assert message in result.stderr
    assert "nothing was written" in result.stderr
    assert _snapshot(started) == before


def test_a_dry_run_shows_what_would_move_and_writes_nothing(started: Cli, tmp_path: Path) -> None:
    obs = _observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"})
    before = _snapshot(started)
    out = started("load", str(obs), "--renames", str(_map(tmp_path / "m.csv", "old,new\neast,east-vale\n")),
                  "--dry-run", "--by", "admin").stdout
    assert out.startswith("dry run: nothing was written")
    assert "statements whose human work moves to a new key: 2" in out  # the untouched blurb is not listed
    assert "blurb/east/recycling" not in out
    assert "blurb/east/parks → blurb/east-vale/parks: 1 layer, 1 approval, 0 comments" in out
    assert _snapshot(started) == before


def test_without_a_mapping_the_dropped_key_keeps_its_work_under_slot_gone(started: Cli, tmp_path: Path) -> None:
    started("load", str(_observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"})),
            "--by", "admin")
    old = started.json("show", "blurb/east/parks")
    assert old["recheck"]["reasons"] == ["slot-gone"]
    assert old["layer"]["by"] == "ann"
    assert started.json("show", "blurb/east-vale/parks")["layer"] is None


# -- the web app: the merged texts on the statement page, and the mapping on the data page ---------

def _merge(cli: Cli, tmp_path: Path) -> None:
    keys = {**{k: k for k in VALUES}, "east": "twin-towns"}
    del keys["west"]
    cli("load", str(_observations(tmp_path / "obs2.csv", keys)),
        "--renames", str(_map(tmp_path / "m.csv", "old,new\neast,twin-towns\nwest,twin-towns\n")), "--by", "admin")


def _csrf(html: str) -> str:
    return html.split('name="csrf-token" content="', 1)[1].split('"', 1)[0]


def test_the_statement_page_offers_the_merged_texts_to_an_editor_only(started: Cli, tmp_path: Path) -> None:
    from helpers import signed_in

    from stetline.web import create_app

    _merge(started, tmp_path)
    for name, role in (("admin", "admin"), ("ed", "editor"), ("exp", "expert")):
        started("user", "add", name, "--role", role, "--password-stdin", "--by", "admin", input="long-password-1\n")
    ws = open_workspace(started.path)
    try:
        app = create_app(ws, {"TESTING": True})  # CSRF on, as in production
        url = "/statements/blurb/twin-towns/parks"
        expert = signed_in(app, "exp")
        html = expert.get(url).get_data(as_text=True)
        assert "Texts of the merged statements" in html
        assert "East is the town most content with its parks: 74.0% are satisfied." in html
        assert "rewrite by ann" in html and "rewrite by bob" in html
        assert "Use this text" not in html  # an expert may not choose a text
        version = started.json("show", "blurb/twin-towns/parks")["version"]
        form = {"version": str(version), "pick": "2", "csrf_token": _csrf(html)}
        refused = expert.post(f"{url}/choose", data=form)
        assert refused.status_code == 403
        assert started.json("show", "blurb/twin-towns/parks")["layer"] is None
        editor = signed_in(app, "ed")
        html = editor.get(url).get_data(as_text=True)
        assert html.count("Use this text") == 2 and "Keep the new draft" in html
        no_token = editor.post(f"{url}/choose", data={"version": str(version), "pick": "2"})
        assert no_token.status_code == 400
        assert started.json("show", "blurb/twin-towns/parks")["layer"] is None
        done = editor.post(f"{url}/choose", data={**form, "csrf_token": _csrf(html)})
        assert done.status_code == 303
        history = editor.get(url).get_data(as_text=True)
        assert "moved from blurb/east/parks on load of edition 2024-r2" in history  # the page's history says it
    finally:
        ws.close()
    chosen = started.json("show", "blurb/twin-towns/parks")
    assert chosen["text"] == "West comes second on parks, at 61.0%." and chosen["layer"]["by"] == "ed"
    assert chosen["history"][-1]["action"] == "choose-merged"


def test_the_data_page_takes_a_mapping_beside_the_observations(started: Cli, tmp_path: Path) -> None:
    import io
    import re

    from stetline.web import create_app

    obs = _observations(tmp_path / "obs2.csv", {**{k: k for k in VALUES}, "east": "east-vale"}).read_bytes()
    ws = open_workspace(started.path)
    try:
        client = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
        assert 'name="renames"' in client.get("/data").get_data(as_text=True)

        def upload(mapping: bytes) -> Any:
            return client.post("/data", content_type="multipart/form-data", data={
                "observations": (io.BytesIO(obs), "obs2.csv"), "renames": (io.BytesIO(mapping), "renames.csv"),
                "by": "admin"})

        bad = upload(b"old,new\nnowhere,east-vale\n")
        assert bad.status_code == 400
        assert ("<td>renames.csv</td><td>2</td><td>old</td><td>the workspace holds no entity &#39;nowhere&#39;</td>"
                in bad.get_data(as_text=True))
        checked = upload(b"old,new\neast,east-vale\n")
        html = checked.get_data(as_text=True)
        assert checked.status_code == 200 and "This is a dry run" in html
        assert "blurb/east/parks → blurb/east-vale/parks: 1 layer, 1 approval, 0 comments" in html
        assert started.json("show", "blurb/east/parks")["layer"] is not None  # nothing moved yet
        token = re.search(r'name="token" value="([0-9a-f]+)"', html)
        assert token is not None
        assert client.post("/data/load", data={"token": token.group(1), "by": "admin"}).status_code == 303
    finally:
        ws.close()
    moved = started.json("show", "blurb/east-vale/parks")
    assert moved["status"] == "approved" and moved["layer"]["by"] == "ann"
