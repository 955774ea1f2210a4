"""The two-person rule follows the words, not the last click.

The author of a text is whoever wrote its words, whatever later layer keeps them: a pin on a
rewrite, an accepted proposal merged from a rewrite, a restored earlier rewrite, a worksheet cell
holding it. Each attack below goes through the web app (Flask test client, signed in as the demo's
accounts) or the CLI run as a subprocess; the approval is refused with a 403 naming the rule, and
the statement is left as it was.
"""

from __future__ import annotations

import html as html_mod
import re
import subprocess
from collections.abc import Iterator
from pathlib import Path

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import run_stetline, signed_in
from openpyxl import load_workbook
from werkzeug.datastructures import MultiDict

from stetline import actions
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

SLOT = "blurb/cairnbrook/recycling"  # a draft nobody worked on in the demo


@pytest.fixture
def team(team_path: Path) -> Iterator[Workspace]:
    ws = open_workspace(team_path)
    yield ws
    ws.close()


@pytest.fixture
def app(team: Workspace) -> Flask:
    return create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})




def state(ws: Workspace, slot: str = SLOT) -> tuple[str, int, str | None, int]:
    """Status, version, the text layer's text and how many approvals are active (0 or 1)."""
    with ws.reading() as s:
        v = actions.view(s, slot)
        layer = next((x for x in v.layers if x.type in ("rewrite", "pin")), None)
        return v.slot.status, v.slot.version, layer.text if layer else None, int(v.approval is not None)


def post(client: FlaskClient, ws: Workspace, action: str, slot: str = SLOT, **form: str) -> int:
    response = client.post(f"/statements/{slot}/{action}", data={"version": str(state(ws, slot)[1]), **form})
    assert response.status_code in (303, 403), response.get_data(as_text=True)[:2000]
    return response.status_code


def refused_approval(client: FlaskClient, ws: Workspace, author: str, slot: str = SLOT) -> None:
    before = state(ws, slot)
    page = client.get(f"/statements/{slot}").get_data(as_text=True)
    ticked = [("confirm_claim", c) for c in re.findall(r'name="confirm_claim" value="([^"]+)"', page)]
    # every contradicted claim ticked, as the author would: the refusal is the two-person rule's alone
    response = client.post(f"/statements/{slot}/approve", data=MultiDict([("version", str(before[1])), *ticked]))
    body = html_mod.unescape(response.get_data(as_text=True))
    assert response.status_code == 403, body[:2000]
    assert f"{author} wrote this text and may not also approve it (two-person rule" in body
    assert state(ws, slot) == before


def stetline(ws_path: Path, *args: str) -> subprocess.CompletedProcess[str]:
    return run_stetline(ws_path, *args)


def test_a_reviewer_who_pins_their_own_rewrite_cannot_approve_it(app: Flask, team: Workspace) -> None:
    reviewer = signed_in(app, "reviewer")
    assert post(reviewer, team, "rewrite", text="Cairnbrook recycles well, the reviewer says.") == 303
    assert post(reviewer, team, "pin") == 303
    assert state(team)[2] == "Cairnbrook recycles well, the reviewer says."
    refused_approval(reviewer, team, "reviewer")


def test_a_pin_by_someone_else_keeps_the_rewrites_author(app: Flask, team: Workspace) -> None:
    reviewer, editor = signed_in(app, "reviewer"), signed_in(app, "editor")
    assert post(reviewer, team, "rewrite", text="Cairnbrook recycles well, the reviewer says.") == 303
    assert post(editor, team, "pin") == 303
    refused_approval(reviewer, team, "reviewer")
    admin = signed_in(app, "admin")
    assert post(admin, team, "approve") == 303  # another reviewer may
    assert state(team)[0] == "approved"


def test_a_pin_on_the_machine_draft_can_be_approved_by_the_pinner(app: Flask, team: Workspace) -> None:
    reviewer = signed_in(app, "reviewer")
    assert post(reviewer, team, "pin") == 303
    assert post(reviewer, team, "approve") == 303  # the words are the machine's
    assert state(team)[0] == "approved"


def test_a_restored_rewrite_keeps_its_first_author(app: Flask, team: Workspace) -> None:
    reviewer, editor = signed_in(app, "reviewer"), signed_in(app, "editor")
    mine = "Cairnbrook recycles well, the reviewer says."
    assert post(reviewer, team, "rewrite", text=mine) == 303
    assert post(editor, team, "rewrite", text="Cairnbrook recycles, says the editor.") == 303
    assert post(editor, team, "restore", text=mine) == 303
    assert state(team)[2] == mine
    refused_approval(reviewer, team, "reviewer")


def test_a_worksheet_cell_holding_an_earlier_rewrite_keeps_its_author(app: Flask, team: Workspace,
                                                                      team_path: Path, tmp_path: Path) -> None:
    reviewer, editor = signed_in(app, "reviewer"), signed_in(app, "editor")
    mine = "Cairnbrook recycles well, the reviewer says."
    assert post(reviewer, team, "rewrite", text=mine) == 303
    assert post(editor, team, "rewrite", text="Cairnbrook recycles, says the editor.") == 303
    sheet_file = tmp_path / "sheet.xlsx"
    done = stetline(team_path, "worksheet", "--output", str(sheet_file), "--entity", "cairnbrook")
    assert done.returncode == 0, done.stderr
    wb = load_workbook(sheet_file)
    sheet = wb["statements"]
    header = [c.value for c in sheet[1]]
    for row in sheet.iter_rows(min_row=2):
        if row[header.index("slot")].value == SLOT:
            row[header.index("new text")].value = mine
    wb.save(sheet_file)
    done = stetline(team_path, "apply-worksheet", str(sheet_file), "--by", "editor")
    assert done.returncode == 0, done.stderr
    assert state(team)[2] == mine
    refused_approval(reviewer, team, "reviewer")


def test_an_accepted_proposal_keeps_the_rewrites_author(app: Flask, team: Workspace, team_path: Path,
                                                         demo_files: Path) -> None:
    reviewer = signed_in(app, "reviewer")
    with team.reading() as s:
        draft = actions.view(s, SLOT).draft.text
    assert post(reviewer, team, "rewrite", text=draft + " A steady performer.") == 303
    older = stetline(team_path, "load", str(demo_files / "observations-2024.csv"), "--by", "admin")
    assert older.returncode == 0, older.stderr
    assert state(team)[0] == "recheck"
    # the older data contradict the blurb's claims, so the proposal is not offered in one click on the web;
    # the admin reads it, confirms the claims and takes the proposal with its numbers
    accepted = stetline(team_path, "approve", SLOT, "--accept-proposed", "--confirm-claims", "--by", "admin")
    assert accepted.returncode == 0, accepted.stderr
    assert state(team)[0] == "approved"
    newer = stetline(team_path, "load", str(demo_files / "observations-2025.csv"), "--by", "admin")
    assert newer.returncode == 0, newer.stderr
    assert state(team)[0] == "recheck"
    refused_approval(reviewer, team, "reviewer")


def test_the_setting_self_approval_still_allows_it(app: Flask, team: Workspace, team_path: Path) -> None:
    done = stetline(team_path, "settings", "self_approval", "true", "--by", "admin")
    assert done.returncode == 0, done.stderr
    reviewer = signed_in(app, "reviewer")
    assert post(reviewer, team, "rewrite", text="Cairnbrook recycles well, the reviewer says.") == 303
    assert post(reviewer, team, "pin") == 303
    assert post(reviewer, team, "approve") == 303
    assert state(team)[0] == "approved"

