"""The recheck queue: every statement waiting in recheck, most severe first, with filters and
one-click approve, accept-proposed and revert forms (they post to the statement's actions), and
bulk work on the statements shown."""

from __future__ import annotations

from typing import Any

from flask import Blueprint, render_template, request, url_for

from stetline import actions, comments, datachecks
from stetline.livefields import LiveFields
from stetline.loading import house_style
from stetline.reconcile import REASONS
from stetline.store import ops
from stetline.web.auth import may
from stetline.web.common import diff
from stetline.web.db import session
from stetline.web.paging import current_page
from stetline.web.selection import Selection
from stetline.web.statement import review_texts
from stetline.web.wording import entity_noun, web_message

bp = Blueprint("recheck", __name__)

#: what each recheck reason means, in the words the queue shows beside it
REASON_TEXT = {
    "claim-changed": "what the statement says no longer holds with the new data (see the facts that changed)",
    "numbers-changed": "numbers it shows changed; what it says still holds",
    "slot-gone": "it no longer applies to the current edition: its entity or topic left the data, "
                 "or its kind no longer applies",
    "merged": "several entities became one at the load: pick one of the earlier texts on the statement's page, "
              "or keep the new draft",
    "wording-changed": "only the draft's wording changed (a phrasing or house-style change); "
                       "numbers and claims are the same",
}


def proposal_state(recheck: dict[str, Any]) -> str | None:
    """How a proposed text may be taken: "clean", "conflict" (it has conflict regions) or "person"."""
    if not recheck.get("proposed"):
        return None
    if recheck.get("conflicts"):
        return "conflict"
    return "clean" if recheck.get("clean") else "person"


def human_work(v: actions.SlotView, data: dict[str, Any], thread: list[comments.ThreadEntry]) -> list[dict[str, str]]:
    """The people's work on a statement in recheck, each checked against the new data: text layer,
    notes and approval, and the latest comment of its discussion."""
    work: list[dict[str, str]] = []
    layer = data["layer"]
    if layer is not None:
        work.append({"what": layer["type"], "by": layer["by"], "at": layer["at"], "text": ""})
    work += [{"what": "note", "by": n["by"], "at": n["at"], "text": n["text"]} for n in data["notes"]]
    if v.approval is not None:
        work.append({"what": "approval", "by": v.approval.by, "at": actions.iso_time(v.approval.at), "text": ""})
    if thread:
        last = thread[-1]
        work.append({"what": "sent back" if last.kind == "send-back" else "comment", "by": last.by, "at": last.at,
                     "text": last.text})
    return work


@bp.get("/recheck")
def queue() -> str:
    """List the statements in recheck, filtered by the query string."""
    s = session()
    selection = Selection.parse("recheck", None, request.args)
    chosen = selection.filters
    total = ops.count_slots(s, ops.SlotFilter(status="recheck"))
    page = current_page(selection.count(s) if selection.filtered else total)
    live = LiveFields(house_style(s)[0])
    items: list[dict[str, Any]] = []
    for v in selection.views(s, limit=page.size, offset=page.offset):
        data = v.to_json(s, live)
        current, proposed = review_texts(v, data)
        changed = diff(current, proposed) if proposed else []
        items.append({
            **data, "severity": v.slot.severity, "review_current": current,
            "review_diff": changed if any(op != "same" for op, _ in changed) else None,  # an empty diff is hidden
            "proposal": proposal_state(data["recheck"]), "work": human_work(v, data, comments.thread(s, v.slot.id)),
        })
    # entities the drafts flag as worth a data check: a line each, in recheck or not; never printed
    checks = datachecks.data_checks(s) if may("data-check") else []
    options = {"reason": [(r, r) for r in REASONS]}
    options.update((field, ops.recheck_options(s, field)) for field in ("kind", "entity", "topic"))
    return render_template("recheck/queue.html", items=items, total=total, chosen=chosen, page=page,
                           options=options, back_to=request.full_path.rstrip("?"), selection=selection,
                           reason_text=REASON_TEXT, checks=checks, checks_title=datachecks.TITLE,
                           checks_note=datachecks.NOTE)


@bp.get("/recheck/accept-clean")
def accept_clean_form() -> str:
    """Confirm accepting every clean proposal of numbers-changed statements, saying how many."""
    s = session()
    return render_template("recheck/accept_clean.html", slots=actions.clean_proposals(s))


@bp.post("/recheck/accept-clean")
def accept_clean() -> Any:
    """Accept every clean proposal (each its own event), if the count is still the one confirmed."""
    from flask import flash, redirect

    from stetline.accounts import authorize
    from stetline.errors import Forbidden, StetlineError
    from stetline.web.common import acting_name
    from stetline.web.db import workspace

    s = session()
    expected = request.form.get("count", type=int)
    pending = actions.clean_proposals(s)
    by = acting_name()
    try:
        authorize(s, by, "accept")  # first, so that a refused account is told why, whatever the count
    except Forbidden as exc:
        return render_template("recheck/accept_clean.html", slots=pending, error=web_message(exc)), 403
    if expected != len(pending):
        return render_template("recheck/accept_clean.html", slots=pending,
                               error="The queue changed since you confirmed: check the count again."), 409
    try:
        with workspace().session() as ws_session:
            done = actions.accept_all_clean(ws_session, by=by)
    except StetlineError as exc:
        status = 403 if isinstance(exc, Forbidden) else 400
        return render_template("recheck/accept_clean.html", slots=pending, error=web_message(exc)), status
    flash(f"Accepted the proposed text of {len(done)} statement(s) and approved them")
    return redirect(url_for("recheck.queue"), code=303)


@bp.get("/changes")
def changes() -> Any:
    """What changed between two editions (default: the last two), grouped by entity and topic."""
    from stetline.changelog import changes as changelog
    from stetline.errors import StetlineError

    s = session()
    labels = [e.label for e in ops.editions(s)]
    try:
        log = changelog(s, request.args.get("from") or None, request.args.get("to") or None)
    except StetlineError as exc:
        return render_template("recheck/changes.html", log=None, error=web_message(exc), labels=labels), 200
    places = _places(s, log)
    entity, topic = request.args.get("entity") or "", request.args.get("topic") or ""
    every = [(p["key"], p["name"]) for p in places]
    topics = {c["topic"]: c["label"] for p in places for c in p["cells"] if c["topic"]}
    shown = _filtered(places, entity, topic)
    query: dict[str, Any] = {"from": log.from_edition, "to": log.to_edition, "topic": topic or None}
    for place in shown:
        place["href"] = url_for("recheck.changes", **query, entity=place["key"]) + f"#place-{place['key']}"
    return render_template("recheck/changes.html", log=log, error=None, labels=labels, places=shown,
                           noun=entity_noun(), every=every, topics=sorted(topics.items(), key=lambda t: t[1]),
                           entity=entity, topic=topic, open_all=len(shown) == 1,
                           carried=[c for c in log.carried if _about(c["slot"], entity, topic)],
                           gone=[g for g in log.gone if _about(g, entity, topic)])


def _filtered(places: list[dict[str, Any]], entity: str, topic: str) -> list[dict[str, Any]]:
    """The places of the changes page narrowed to one entity ("all": the changes across all) and topic,
    each with its counts: topics, changed values and flipped claims."""
    shown = []
    for place in places:
        cells = [c for c in place["cells"] if not topic or c["topic"] == topic]
        if cells and (not entity or place["key"] == entity):
            shown.append({**place, "cells": cells, "changed_values": sum(1 for c in cells if c["value"]),
                          "changed_claims": sum(len(c["claims"]) for c in cells)})
    return shown


#: the statement of a cell whose text the changes page quotes, when several of the cell's changed
_QUOTED_FIRST = ("blurb", "roundup", "profile", "headline")


def _place_of(slot: str) -> tuple[str | None, str | None]:
    """The entity and topic a slot is about (None for a topic's or an entity's statement as a whole)."""
    parts = slot.split("/")
    entity = parts[1] if len(parts) == 3 or (len(parts) == 2 and parts[0] == "profile") else None
    topic = parts[-1] if len(parts) == 3 or (len(parts) == 2 and parts[0] != "profile") else None
    return entity, topic


def _about(slot: str, entity: str, topic: str) -> bool:
    """True when a slot is about the entity ("all": no one entity) and topic chosen ("" for any)."""
    at, on = _place_of(slot)
    return (not entity or (at or "all") == entity) and (not topic or on == topic)


def _places(s: Any, log: Any) -> list[dict[str, Any]]:
    """The flipped claims and changed values by entity, then topic: each value and claim listed once.

    Every statement of one entity and topic (a blurb and, when drafted, its parts) states the same
    value and shares its claims, so a cell lists the value's change once, the claims once (by the
    fact they are about, whichever kind states them), and quotes one statement's text before and
    after (the composed one when it changed), with links to all of them.
    """
    names = {e.key: e.name for e in ops.entity_rows(s)}
    topics = {t.key: t.label for t in ops.topic_rows(s)}
    entity_order = {k: i for i, k in enumerate(names)}
    topic_order = {k: i for i, k in enumerate(topics)}
    cells: dict[tuple[str | None, str | None], dict[str, Any]] = {}

    def cell(slot: str) -> dict[str, Any]:
        entity, topic = _place_of(slot)
        return cells.setdefault((entity, topic), {
            "entity": entity, "topic": topic, "label": topics.get(topic or "", "All indicators"),
            "slots": [], "claims": [], "value": None, "quoted": None})

    for f in log.flipped:
        c = cell(f["slot"])
        c["slots"].append(f["slot"])
        for claim in f["claims"]:
            entry = (claim["fact"].split(".")[-1], claim["old"], claim["new"])
            if entry not in c["claims"]:
                c["claims"].append(entry)
        kind = f["slot"].split("/")[0]
        rank = _QUOTED_FIRST.index(kind) if kind in _QUOTED_FIRST else len(_QUOTED_FIRST)
        if c["quoted"] is None or rank < c["quoted"][0]:
            c["quoted"] = (rank, f)
    for n in log.numbers:
        c = cell(n["slot"])
        if n["slot"] not in c["slots"]:
            c["slots"].append(n["slot"])
        if c["value"] is None:
            c["value"] = n
    grouped: dict[str | None, list[dict[str, Any]]] = {}
    for (entity, _topic), c in sorted(cells.items(), key=lambda kv: (
            kv[0][0] is not None, entity_order.get(kv[0][0] or "", 0), topic_order.get(kv[0][1] or "", -1))):
        c["quoted"] = c["quoted"][1] if c["quoted"] else None
        grouped.setdefault(entity, []).append(c)
    return [{"entity": e, "key": e or "all", "name": names.get(e, e) if e else "Across all", "cells": cs}
            for e, cs in grouped.items()]
