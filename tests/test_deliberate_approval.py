"""Approving against a contradiction takes a deliberate act.

A statement whose claims the new data contradict (`claim-changed`) is approved as it reads only
when each contradicted claim is confirmed: `--confirm-claims` in the CLI, one ticked checkbox per
claim on the web. Bulk approval (a CLI selection, "approve all N shown") skips `claim-changed`,
`slot-gone` and conflicting proposals and says how many it skipped. Accepting a proposed text keeps
the rewrite's author and names the approver.
"""

from __future__ import annotations

import html as html_mod
import re
from typing import Any

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import CONFLICTED, Cli
from werkzeug.datastructures import MultiDict

from stetline import actions, bulk
from stetline.errors import StetlineError
from stetline.store.models import Slot
from stetline.web import create_app
from stetline.workspace import Workspace

# The demo after its second edition (see engine/demo.py):
SAMPHIRE = "blurb/samphire-reach/recycling"  # approved draft whose direction flipped: claim-changed
# its claims, namespaced by the part of the paragraph that states them, and in the words the refusal uses;
# the sibling band is its place among the towns of its district (Eastmarch District, seed_data/entities.csv)
SAMPHIRE_KEYS = ["change.better", "change.direction", "standing.sibling_band", "trend.record", "trend.streak"]
SAMPHIRE_CLAIMS = ["better: improved → worsened", "direction: up → down", "sibling band: lower → bottom",
                   "record: highest-on-record → lowest-since:2021", "streak: improved:4 → none"]
GORSE = "blurb/gorse-point/recycling"  # a rewrite whose claims flipped
ROUNDUP = "roundup/recycling"  # approved roundup whose exceptions changed: claim-changed
HIGH_FERROW = "blurb/high-ferrow/bus-punctuality"  # approved draft: rank band, target, group and district flipped
HERONSFORD = "blurb/heronsford/parks-satisfaction"  # a rewrite whose numbers changed; clean proposal, same claims
GONE = "blurb/wrackhaven/paper-timetables"  # its indicator left the data: slot-gone


@pytest.fixture
def app(demo_ws: Workspace) -> Flask:
    return create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})


@pytest.fixture
def client(app: Flask) -> FlaskClient:
    return app.test_client()


def state(ws: Workspace, slot: str) -> dict[str, Any]:
    with ws.reading() as s:
        data = actions.view(s, slot).to_json(s)
        data["history"] = actions.history(s, slot)
        return data


def approve_form(html: str, slot: str) -> str:
    """The approve form of one statement on a page (its HTML up to </form>)."""
    start = html.index(f'action="/statements/{slot}/approve"')
    return html[start: html.index("</form>", start)]


# -- the CLI ----------------------------------------------------------------------------------

def test_cli_refuses_a_claim_changed_approval_listing_the_claims_until_confirmed(demo_cli: Cli) -> None:
    before = demo_cli.json("show", SAMPHIRE)
    assert before["status"] == "recheck" and "claim-changed" in before["recheck"]["reasons"]
    refused = demo_cli("approve", SAMPHIRE, "--by", "reviewer", ok=False)
    assert refused.exit_code == 1
    assert all(claim in refused.stderr for claim in SAMPHIRE_CLAIMS), refused.stderr
    assert "--confirm-claims" in refused.stderr
    after = demo_cli.json("show", SAMPHIRE)
    assert (after["status"], after["version"], after["history"]) == ("recheck", before["version"], before["history"])

    demo_cli("approve", SAMPHIRE, "--confirm-claims", "--by", "reviewer")
    done = demo_cli.json("show", SAMPHIRE)
    assert done["status"] == "approved" and done["recheck"] is None
    assert done["history"][-1]["by"] == "reviewer"
    assert done["history"][-1]["detail"]["confirmed_claims"] == SAMPHIRE_CLAIMS  # the record says what was confirmed


def test_accepting_the_proposal_of_a_claim_changed_statement_also_needs_the_confirmation(demo_cli: Cli) -> None:
    item = demo_cli.json("show", HIGH_FERROW)
    assert item["recheck"]["proposed"] and [c["fact"] for c in item["recheck"]["contradicted"]] == [
        "change.better", "change.direction", "standing.rank_band", "standing.sibling_band", "standing.target",
        "standing.vs_group", "standing.vs_parent", "trend.record", "trend.streak"]
    refused = demo_cli("approve", HIGH_FERROW, "--accept-proposed", "--by", "reviewer", ok=False)
    assert "rank band: top → lower" in refused.stderr and "target: met → missed" in refused.stderr
    assert demo_cli.json("show", HIGH_FERROW)["status"] == "recheck"


def test_a_statement_whose_claims_still_hold_is_approved_without_confirmation(demo_cli: Cli) -> None:
    assert demo_cli.json("show", HERONSFORD)["recheck"]["contradicted"] == []
    demo_cli("approve", HERONSFORD, "--by", "reviewer")
    assert demo_cli.json("show", HERONSFORD)["status"] == "approved"


def test_cli_approves_a_selection_after_asking_and_skips_what_needs_reading(demo_cli: Cli) -> None:
    listed = {i["slot"]: i for i in demo_cli.json("list", "--topic", "recycling")}
    refused = demo_cli("approve", "--topic", "recycling", "--by", "reviewer", input="n\n", ok=False)
    assert refused.exit_code == 1 and "statement(s)? (" in refused.output and "skipped)" in refused.output
    assert {i["slot"]: i["status"] for i in demo_cli.json("list", "--topic", "recycling")} == {
        slot: i["status"] for slot, i in listed.items()}  # answering no changes nothing

    out = demo_cli("approve", "--topic", "recycling", "--by", "reviewer", "--yes").stdout
    for slot in (GORSE, SAMPHIRE, ROUNDUP):
        assert f"skipped {slot}: the new data contradict its claims" in out
    n_done, n_skipped = map(int, re.search(r"(\d+) statement\(s\): approve done; (\d+) skipped", out).groups())
    assert n_done + n_skipped == len(listed) and n_skipped == out.count("skipped ")
    after = {i["slot"]: i for i in demo_cli.json("list", "--topic", "recycling")}
    assert after[GORSE]["status"] == after[SAMPHIRE]["status"] == after[ROUNDUP]["status"] == "recheck"
    assert after["blurb/tidemere/recycling"]["status"] == "approved"  # a draft nobody had approved yet
    waiting = [s for s, i in after.items() if i["status"] not in ("approved", "suppressed")]
    assert sorted(waiting) == [GORSE, SAMPHIRE, ROUNDUP]


def test_cli_selection_by_kind_skips_gone_and_claim_changed_statements(demo_cli: Cli) -> None:
    out = demo_cli("approve", "--kind", "blurb", "--by", "reviewer", "--yes").stdout
    assert f"skipped {GONE}: it no longer applies to the current edition" in out
    assert f"skipped {HIGH_FERROW}: the new data contradict its claims" in out
    assert demo_cli.json("show", GONE)["status"] == demo_cli.json("show", HIGH_FERROW)["status"] == "recheck"
    assert demo_cli.json("show", "blurb/tidemere/recycling")["status"] == "approved"  # numbers changed only


def test_cli_approve_refuses_mixed_requests(demo_cli: Cli) -> None:
    assert "give one of" in demo_cli("approve", SAMPHIRE, "--topic", "recycling", "--by", "reviewer", ok=False).stderr
    assert "take one statement" in demo_cli("approve", "--topic", "recycling", "--confirm-claims", "--by", "reviewer",
                                            ok=False).stderr
    assert demo_cli.json("show", SAMPHIRE)["status"] == "recheck"


# -- the engine's bulk rule -------------------------------------------------------------------

def test_bulk_apply_refuses_a_claim_changed_statement_even_when_a_list_names_it(demo_ws: Workspace) -> None:
    with demo_ws.reading() as s:
        items = [(slot, actions.view(s, slot).slot.version) for slot in (HERONSFORD, SAMPHIRE)]
    with pytest.raises(StetlineError, match=f"{SAMPHIRE} cannot be approved in bulk"):
        with demo_ws.session() as s:
            bulk.apply(s, "approve", items, by="reviewer")
    assert state(demo_ws, HERONSFORD)["status"] == "recheck"  # the whole list was refused, nothing approved


def test_bulk_plan_skips_a_conflicting_proposal(conflict_ws: Workspace) -> None:
    # A conflict needs a part kind (composed statements never conflict), and comes with a claim change;
    # the rule is checked on a copy of that recheck with the claim change taken out (a detached slot,
    # never stored).
    with conflict_ws.reading() as s:
        v = actions.view(s, CONFLICTED)
        assert v.slot.recheck and v.slot.recheck["conflicts"]
        recheck = {**v.slot.recheck, "reasons": ["numbers-changed"]}
        alone = actions.SlotView(Slot(id=CONFLICTED, kind="change", status="recheck", gone=False, recheck=recheck,
                                      version=v.slot.version), v.draft, v.layers, v.approval)
        planned = bulk.plan("approve", [alone])
    assert planned.todo == [] and [why for _v, why in planned.skipped] == [
        "its proposed text has a conflict: resolve it with a rewrite first"]


# -- the web app ------------------------------------------------------------------------------

def test_statement_page_asks_to_tick_each_contradicted_claim(client: FlaskClient) -> None:
    html = client.get(f"/statements/{SAMPHIRE}").get_data(as_text=True)
    form = approve_form(html, SAMPHIRE)
    boxes = re.findall(r'<input type="checkbox" id="([^"]+)" name="confirm_claim" value="([^"]+)" required>', form)
    assert [value for _id, value in boxes] == SAMPHIRE_KEYS
    labels = [html_mod.unescape(re.search(f'<label for="{box_id}">([^<]+)</label>', form).group(1))  # type: ignore[union-attr]
              for box_id, _v in boxes]
    assert labels == SAMPHIRE_CLAIMS
    assert "confirm_claim" not in approve_form(client.get(f"/statements/{HERONSFORD}").get_data(as_text=True),
                                               HERONSFORD)


def test_web_refuses_a_claim_changed_approval_unless_every_claim_is_ticked(client: FlaskClient,
                                                                           demo_ws: Workspace) -> None:
    before = state(demo_ws, SAMPHIRE)
    version = str(before["version"])
    crafted = client.post(f"/statements/{SAMPHIRE}/approve", data={"version": version})
    assert crafted.status_code == 400
    html = html_mod.unescape(crafted.get_data(as_text=True))
    assert "Nothing was changed" in html and all(claim in html for claim in SAMPHIRE_CLAIMS)
    half = client.post(f"/statements/{SAMPHIRE}/approve", data=MultiDict(
        [("version", version)] + [("confirm_claim", key) for key in SAMPHIRE_KEYS if key != "change.better"]))
    assert half.status_code == 400
    error = re.search(r'id="approve-error" class="field-error">([^<]+)<', half.get_data(as_text=True))
    assert error and "better: improved → worsened" in html_mod.unescape(error.group(1))
    assert "direction: up → down" not in html_mod.unescape(error.group(1))  # only the one left unticked
    after = state(demo_ws, SAMPHIRE)
    assert (after["status"], after["version"], after["history"]) == ("recheck", before["version"], before["history"])

    done = client.post(f"/statements/{SAMPHIRE}/approve", data=MultiDict(
        [("version", version), *[("confirm_claim", key) for key in SAMPHIRE_KEYS], ("by", "reviewer")]))
    assert done.status_code == 303
    approved = state(demo_ws, SAMPHIRE)
    assert approved["status"] == "approved"
    assert approved["history"][-1]["by"] == "reviewer"
    assert approved["history"][-1]["detail"]["confirmed_claims"] == SAMPHIRE_CLAIMS


def test_recheck_queue_puts_the_claim_checkboxes_in_the_approve_forms(client: FlaskClient) -> None:
    html = client.get("/recheck").get_data(as_text=True)
    samphire = approve_form(html, SAMPHIRE)
    assert samphire.count('name="confirm_claim"') == len(SAMPHIRE_KEYS)
    assert "direction: up → down" in html_mod.unescape(samphire)
    assert approve_form(html, HIGH_FERROW).count('name="confirm_claim"') == 9  # the nine facts listed above
    assert "confirm_claim" not in approve_form(html, HERONSFORD)
    ids = re.findall(r'id="([^"]+-claim-\d+)"', html)
    assert ids and len(ids) == len(set(ids))  # every checkbox has its own label target


def test_approve_all_shown_skips_claim_changed_gone_and_conflicting_statements(client: FlaskClient,
                                                                               demo_ws: Workspace) -> None:
    html = client.post("/bulk/confirm", data={"action": "approve", "scope": "recheck"}).get_data(as_text=True)
    todo = re.search(r'<section aria-labelledby="todo-h">(.*?)</section>', html, re.S).group(1)  # type: ignore[union-attr]
    skipped = re.search(r'<section aria-labelledby="skip-h">(.*?)</section>', html, re.S).group(1)  # type: ignore[union-attr]
    for slot in (SAMPHIRE, GORSE, HIGH_FERROW, GONE):
        shown = f'<code class="slot-id">{slot}</code>'  # beside the statement's title
        assert shown in skipped and shown not in todo
    assert f'<code class="slot-id">{HERONSFORD}</code>' in todo
    n_skipped = int(re.search(r"Left as they are \((\d+)\)", html).group(1))  # type: ignore[union-attr]
    assert f"and {n_skipped} left as they are" in html and "never approved in bulk" in html

    # a crafted form that adds a claim-changed statement to the confirmed list is refused whole
    start = html.index('action="/bulk/apply"')
    form = html[start: html.index("</form>", start)]
    fields = re.findall(r'<input[^>]*name="([^"]+)"[^>]*value="([^"]*)"', form)
    fields += [("slot", SAMPHIRE), ("version", str(state(demo_ws, SAMPHIRE)["version"]))]
    response = client.post("/bulk/apply", data=MultiDict([(n, html_mod.unescape(v)) for n, v in fields]))
    assert response.status_code == 400
    assert "cannot be approved in bulk" in html_mod.unescape(response.get_data(as_text=True))
    assert state(demo_ws, HERONSFORD)["status"] == state(demo_ws, SAMPHIRE)["status"] == "recheck"


def test_accepting_a_proposal_keeps_the_rewrites_author_and_names_the_approver(client: FlaskClient,
                                                                               demo_ws: Workspace) -> None:
    before = state(demo_ws, HERONSFORD)
    assert before["layer"]["by"] == "editor"
    response = client.post(f"/statements/{HERONSFORD}/accept", data={"version": str(before["version"]),
                                                                      "by": "reviewer"})
    assert response.status_code == 303
    after = state(demo_ws, HERONSFORD)
    assert after["status"] == "approved" and after["text"] == before["recheck"]["proposed"]
    assert after["layer"]["by"] == "editor"  # the words are still the editor's
    last = after["history"][-1]
    assert (last["action"], last["by"], last["detail"]["author"]) == ("accept", "reviewer", "editor")
    html = client.get(f"/statements/{HERONSFORD}").get_data(as_text=True)
    assert "rewrite by editor, proposal accepted by reviewer" in html


def test_cli_show_names_the_rewrites_author_and_who_accepted_the_proposal(demo_cli: Cli) -> None:
    demo_cli("approve", HERONSFORD, "--accept-proposed", "--by", "reviewer")
    out = demo_cli("show", HERONSFORD).stdout
    assert "rewrite by editor, proposal accepted by reviewer at " in out
