"""The recheck queue's "worth a data check" lines: an entity that went against most others on most
topics is named there, with those topics and a link to its profile, whether or not anything waits in
recheck; on the web page for the roles that fix or sign off statements (editor, reviewer, admin), in
the CLI's list; never in a publication."""

from __future__ import annotations

import html as html_mod
import json
from pathlib import Path

import pytest
from helpers import Cli, pattern_workspace, signed_in

from stetline.web import create_app
from stetline.workspace import open_workspace

LINE = ("Worth a data check:</strong> Colne went against most others on 3 of 3 indicators compared: "
        "Parks satisfaction, Recycling rate and Broadband coverage.")
CLI_LINE = ("Worth a data check: Colne (colne) went against most others on 3 of 3 indicators compared: "
            "Parks satisfaction, Recycling rate and Broadband coverage; see profile/colne")


def queue_page(path: Path, as_role: str | None = None) -> str:
    ws = open_workspace(path)
    try:
        app = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
        client = signed_in(app, as_role) if as_role else app.test_client()
        response = client.get("/recheck")
        assert response.status_code == 200
        return html_mod.unescape(response.get_data(as_text=True))
    finally:
        ws.close()


def test_the_queue_names_the_entity_its_topics_and_links_its_profile(tmp_path: Path) -> None:
    cli = pattern_workspace(tmp_path / "against")
    assert cli.json("status")["by_status"].get("recheck", 0) == 0  # nothing waits: the line shows all the same
    page = queue_page(cli.path)
    assert "Nothing waits in recheck." in page
    assert LINE in page
    assert ('<a href="/statements/profile/colne" aria-label="Read the profile that says it of Colne">'
            'Read its profile</a>') in page
    assert "it is never printed" in page
    # the CLI's list shows the same line, under the statements, for the queue and for the whole list
    for args in (("list", "--status", "recheck"), ("list",), ("list", "--entity", "colne")):
        out = cli(*args).output
        assert CLI_LINE in out, args
    assert "Worth a data check" not in cli("list", "--status", "draft").output  # another status asked for
    assert "Worth a data check" not in cli("list", "--entity", "ashby").output
    assert "Worth a data check" not in cli("list", "--json").output  # the JSON contract is unchanged


def test_no_line_when_no_entity_is_an_exception(tmp_path: Path) -> None:
    cli = pattern_workspace(tmp_path / "along", against=None)
    assert "Worth a data check" not in queue_page(cli.path)
    assert "Worth a data check" not in cli("list").output
    # one exception on one topic of three is no pattern either
    data = tmp_path / "one.csv"
    rows = (tmp_path / "pattern-obs.csv").read_text(encoding="utf-8").splitlines()
    rows = [r.replace("colne,parks,2025,54", "colne,parks,2025,50") for r in rows]
    data.write_text("\n".join(rows) + "\n", encoding="utf-8")
    cli("load", str(data), "--by", "admin")
    assert cli.json("show", "roundup/parks")["claims"]["movement.exceptions"] == ["colne"]
    assert "Worth a data check" not in queue_page(cli.path) and "Worth a data check" not in cli("list").output


def test_a_refresh_that_ends_the_pattern_removes_the_line(tmp_path: Path) -> None:
    cli = pattern_workspace(tmp_path / "against")
    assert CLI_LINE in cli("list").output
    rows = (tmp_path / "pattern-obs.csv").read_text(encoding="utf-8").replace(
        "colne,parks,2025,50", "colne,parks,2025,54").replace("colne,recycling,2025,50", "colne,recycling,2025,54")
    (tmp_path / "fixed.csv").write_text(rows, encoding="utf-8")
    cli("load", str(tmp_path / "fixed.csv"), "--by", "admin")
    assert "Worth a data check" not in cli("list").output and "Worth a data check" not in queue_page(cli.path)


@pytest.mark.parametrize(("role", "sees"), [("editor", True), ("reviewer", True), ("admin", True), ("expert", False)])
def test_editors_and_reviewers_see_it_an_expert_does_not(tmp_path: Path, role: str, sees: bool) -> None:
    cli = pattern_workspace(tmp_path / "team")
    for name in dict.fromkeys(("admin", role)):  # the first account must be an admin
        cli("user", "add", name, "--role", name, "--password-stdin", "--by", "admin", input="tide-pool-lantern-9\n")
    page = queue_page(cli.path, role)
    assert (LINE in page) is sees
    assert ("Worth a data check" in page) is sees


@pytest.mark.parametrize("fmt", ["md", "html", "json", "csv"])
def test_a_publication_never_carries_it(tmp_path: Path, fmt: str) -> None:
    cli = pattern_workspace(tmp_path / "against")
    out = tmp_path / f"report.{fmt}"
    cli("publish", "--format", fmt, "-o", str(out), "--by", "admin")
    text = out.read_text(encoding="utf-8")
    assert "Colne" in text  # the pattern is said as fact in the profile ...
    assert "it moved the opposite way to most other areas, and it was the only one to do so" in text
    # ... but the reviewer's note is not printed, nor the claim behind it
    assert "data check" not in text.lower() and "data_check" not in text
    if fmt == "json":
        assert "data_check" not in json.dumps(json.loads(text))


def test_cli_list_narrowed_to_the_entity(tmp_path: Path) -> None:
    cli: Cli = pattern_workspace(tmp_path / "against")
    out = cli("list", "--entity", "colne", "--status", "recheck").output
    assert out.splitlines()[0] == CLI_LINE  # nothing of colne waits in recheck: the line alone, then its note
    assert "it is never printed" in out.splitlines()[1]


def test_without_a_headline_or_a_profile_the_other_draft_names_it(tmp_path: Path) -> None:
    cli = pattern_workspace(tmp_path / "against")
    cli("settings", "kinds", "profile,blurb", "--by", "admin")  # no headline: the profiles are read
    cli("redraft", "--by", "admin")
    assert CLI_LINE in cli("list").output
    cli("settings", "kinds", "headline,roundup", "--by", "admin")  # no profile: the headline names it
    cli("redraft", "--by", "admin")
    out = cli("list").output
    assert "Worth a data check: Colne (colne) went against most others on most indicators compared; see headline" in out
    page = queue_page(cli.path)
    assert "Colne went against most others on most indicators compared." in page
    assert 'aria-label="Read the headline that says it of Colne">Read the headline</a>' in page
