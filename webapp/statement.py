"""One statement's page: its texts, evidence, claims, recheck, notes, figures, discussion thread
and history, and the forms that act on it (rewrite, pin, annotate, suppress or lift, revert,
approve, accept the proposal, restore an earlier rewrite, comment, send back).

Every form posts the slot's version; the action runs in one transaction and the page redirects
back with a message. An engine error re-renders the page with the message next to its form.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from flask import Blueprint, abort, flash, redirect, render_template, request, url_for
from sqlalchemy.orm import Session
from werkzeug.wrappers import Response

from stetline import actions, comments, printing
from stetline.accounts import authorize
from stetline.errors import Conflict, Forbidden, NotFound, StetlineError
from stetline.livefields import FILTER_HELP, LiveFields
from stetline.loading import house_style
from stetline.store import ops
from stetline.web import charts
from stetline.web.common import acting_name, current_name, diff, markdown_html, preview_html, safe_next
from stetline.web.db import session, workspace
from stetline.web.wording import slot_title, web_message

bp = Blueprint("statement", __name__)


def _live(s: Session) -> LiveFields:
    return LiveFields(house_style(s)[0])


def review_texts(v: actions.SlotView, data: dict[str, Any]) -> tuple[str | None, str | None]:
    """The text under review in recheck and the proposed one: the layer, else the approved text."""
    recheck = data["recheck"]
    if not recheck:
        return None, None
    if data["layer"] is not None:
        current = data["layer"]["text"]
    elif v.approval is not None:
        current = v.approval.text
    else:
        current = data["current"]
    return current, recheck.get("proposed")


def _page(slot_id: str, *, errors: dict[str, str] | None = None, values: dict[str, str] | None = None,
          status: int = 200) -> tuple[str, int]:
    s = session()
    try:
        v = actions.view(s, slot_id)
    except NotFound as exc:
        abort(404, description=web_message(exc))
    data = v.to_json(s, _live(s))
    events = actions.history(s, slot_id)
    for e in events:
        changed = e["before"] is not None and e["after"] is not None and e["before"] != e["after"]
        e["diff"] = diff(e["before"], e["after"]) if changed else None
    current, proposed = review_texts(v, data)
    layer = data["layer"]
    current_rewrite = layer["text"] if layer and layer["type"] == "rewrite" else None
    for e in events:
        e["restorable"] = e["action"] == "rewrite" and bool(e["after"]) and e["after"] != current_rewrite
    values = values or {}
    rewrite_text = values.get("rewrite")
    if rewrite_text is None:
        rewrite_text = current_rewrite or data["current"] or data["draft"]
    last_text = next((e for e in reversed(events) if e["action"] in ("rewrite", "pin", "revert", "accept")), None)
    accepted_by = last_text["by"] if layer and last_text and last_text["action"] == "accept" else None
    thread = [{**c.to_json(), "html": markdown_html(c.text)} for c in comments.thread(s, slot_id)]
    sent_back = events[-1] if events and events[-1]["action"] == "send-back" else None
    html = render_template(
        "statement/show.html", s=data, approval=v.approval, events=events, errors=errors or {},
        rewrite_text=rewrite_text, note_text=values.get("annotate", ""), comment_text=values.get("comment", ""),
        published_html=markdown_html(data["text"]) if data["text"] else None,
        print_record=printing.print_record(s, slot_id),
        review_current=current, review_diff=diff(current, proposed) if proposed else None,
        filter_help=FILTER_HELP, has_draft_beside=layer is not None or data["suppressed"],
        thread=thread, sent_back=sent_back, accepted_by=accepted_by,
        entity_row=ops.get_entity(s, v.slot.entity) if v.slot.entity else None,
        topic_row=ops.get_topic(s, v.slot.topic) if v.slot.topic else None, chart_image=charts.image,
        **charts.statement_charts(s, v, workspace().url),
    )
    return html, status


@bp.get("/statements/<path:slot>")
def show(slot: str) -> tuple[str, int]:
    """Show one statement."""
    return _page(slot)


def _version() -> int:
    raw = request.form.get("version", "")
    try:
        return int(raw)
    except ValueError:
        raise StetlineError("the form did not carry the statement's version; reload the page") from None


def _act(slot_id: str, form: str, run: Callable[[Session, str, int], object], done: str,
         values: dict[str, str] | None = None) -> Response | tuple[str, int]:
    """Run one action in a transaction; redirect back, or re-render with the error."""
    by = acting_name()
    try:
        version = _version()
        with workspace().session() as s:
            run(s, by, version)
    except NotFound as exc:
        abort(404, description=web_message(exc))
    except Conflict as exc:
        return _page(slot_id, errors={form: web_message(exc)}, values=values, status=409)
    except Forbidden as exc:
        return _page(slot_id, errors={form: web_message(exc)}, values=values, status=403)
    except StetlineError as exc:
        return _page(slot_id, errors={form: web_message(exc)}, values=values, status=400)
    flash(f"{done}: {slot_title(slot_id)}")
    return redirect(safe_next(url_for("statement.show", slot=slot_id)), code=303)


@bp.post("/statements/<path:slot>/rewrite")
def rewrite(slot: str) -> Response | tuple[str, int]:
    """Replace the statement's text with the submitted rewrite; a stale save shows the conflict."""
    text = request.form.get("text", "")
    by = acting_name()
    try:
        version = _version()
        with workspace().session() as s:
            actions.rewrite(s, slot, text, by=by, version=version)
    except NotFound as exc:
        abort(404, description=web_message(exc))
    except Conflict:
        return _conflict(slot, text, request.form.get("started_from", ""), by)
    except Forbidden as exc:
        return _page(slot, errors={"rewrite": web_message(exc)}, values={"rewrite": text}, status=403)
    except StetlineError as exc:
        return _page(slot, errors={"rewrite": web_message(exc)}, values={"rewrite": text}, status=400)
    flash(f"Rewrite saved: {slot_title(slot)}")
    return redirect(safe_next(url_for("statement.show", slot=slot)), code=303)


def _conflict(slot_id: str, yours: str, started_from: str, by: str) -> tuple[str, int]:
    """The other person's change beside yours, with a merge; the refused attempt is recorded."""
    from stetline.store import ops
    from stetline.textmerge import merge3

    with workspace().session() as s:
        view = actions.view(s, slot_id)
        theirs = actions.published_text(s, view.slot, view.draft, view.layers) or view.draft.text
        last = next((e for e in reversed(actions.history(s, slot_id)) if e["action"] not in ("recheck",)), None)
        edition = ops.current_edition(s)
        if edition is not None and view.draft.edition_id == edition.id:
            loaded = actions.iso_time(edition.loaded_at)
            if last is None or last["at"] < loaded:  # a data load redrafted it after the last edit
                last = {"action": f"the load of edition {edition.label}", "by": edition.loaded_by, "at": loaded,
                        "load": True}
        ops.add_event(s, by, "conflict", slot_id, before=theirs, after=yours,
                      detail={"refused": "the statement changed since the page was opened"})
        version = view.slot.version
    merged = merge3(started_from or theirs, yours, theirs)
    return render_template(
        "statement/conflict.html", slot=slot_id, yours=yours, theirs=theirs, merged=merged,
        version=version, other=last, yours_diff=diff(theirs, yours),
    ), 409


@bp.post("/statements/<path:slot>/pin")
def pin(slot: str) -> Response | tuple[str, int]:
    """Keep the statement's current text word for word."""
    return _act(slot, "pin", lambda s, by, ver: actions.pin(s, slot, by=by, version=ver), "Text pinned")


@bp.post("/statements/<path:slot>/annotate")
def annotate(slot: str) -> Response | tuple[str, int]:
    """Attach a note to the statement."""
    text = request.form.get("text", "")
    return _act(slot, "annotate", lambda s, by, ver: actions.annotate(s, slot, text, by=by, version=ver),
                "Note added", {"annotate": text})


@bp.post("/statements/<path:slot>/suppress")
def suppress(slot: str) -> Response | tuple[str, int]:
    """Leave the statement out of the publication."""
    return _act(slot, "suppress", lambda s, by, ver: actions.suppress(s, slot, by=by, version=ver),
                "Statement suppressed")


@bp.post("/statements/<path:slot>/lift")
def lift(slot: str) -> Response | tuple[str, int]:
    """Put a suppressed statement back in the publication."""
    return _act(slot, "suppress", lambda s, by, ver: actions.suppress(s, slot, by=by, lift=True, version=ver),
                "Suppression lifted")


@bp.post("/statements/<path:slot>/revert")
def revert(slot: str) -> Response | tuple[str, int]:
    """Drop the statement's rewrite or pin."""
    return _act(slot, "revert", lambda s, by, ver: actions.revert(s, slot, by=by, version=ver),
                "Reverted to the draft")


@bp.post("/statements/<path:slot>/approve")
def approve(slot: str) -> Response | tuple[str, int]:
    """Approve the statement as it reads now; each claim the new data contradict must be ticked."""
    ticked = request.form.getlist("confirm_claim")
    return _act(slot, "approve",
                lambda s, by, ver: actions.approve(s, slot, by=by, version=ver, confirm_claims=ticked), "Approved")


@bp.post("/statements/<path:slot>/accept")
def accept(slot: str) -> Response | tuple[str, int]:
    """Take the proposed text of a statement in recheck and approve it."""
    return _act(slot, "accept",
                lambda s, by, ver: actions.approve(s, slot, by=by, accept_proposed=True, version=ver),
                "Proposed text accepted and approved")


@bp.post("/statements/<path:slot>/restore")
def restore(slot: str) -> Response | tuple[str, int]:
    """Make an earlier rewrite from the history the statement's text again (a new rewrite)."""
    text = request.form.get("text", "")
    return _act(slot, "restore", lambda s, by, ver: actions.rewrite(s, slot, text, by=by, version=ver),
                "Earlier version restored")


@bp.post("/statements/<path:slot>/choose")
def choose(slot: str) -> Response | tuple[str, int]:
    """Resolve a merged statement: one of the merged texts becomes its rewrite, or the new draft stays."""
    from stetline import renames

    raw = request.form.get("pick", "")
    pick = None if raw == "draft" else int(raw) - 1 if raw.isdigit() else -1
    return _act(slot, "choose", lambda s, by, ver: renames.choose(s, slot, pick, by=by, version=ver),
                "New draft kept" if pick is None else "Merged text chosen")


@bp.post("/statements/<path:slot>/comment")
def comment(slot: str) -> Response | tuple[str, int]:
    """Add a comment to the statement's thread."""
    text = request.form.get("text", "")
    return _act(slot, "comment", lambda s, by, _ver: comments.add_comment(s, slot, text, by),
                "Comment added", {"comment": text})


@bp.post("/statements/<path:slot>/send-back")
def send_back(slot: str) -> Response | tuple[str, int]:
    """Send the statement back with a comment instead of approving it."""
    text = request.form.get("text", "")
    return _act(slot, "comment", lambda s, by, _ver: comments.send_back(s, slot, text, by),
                "Sent back with your comment", {"comment": text})


@bp.post("/statements/<path:slot>/preview")
def preview(slot: str) -> tuple[str, int, dict[str, str]]:
    """The rewrite text as it would read (HTML fragment), or the live-field error; needs the rewrite right."""
    s = session()
    headers = {"Content-Type": "text/html; charset=utf-8"}
    try:
        authorize(s, acting_name(), "rewrite")
    except Forbidden as exc:
        return render_template("statement/preview_error.html", message=web_message(exc)), 403, headers
    try:
        v = actions.view(s, slot)
    except NotFound as exc:
        abort(404, description=web_message(exc))
    try:
        html = preview_html(_live(s), request.form.get("text", ""), v.draft.evidence)
    except StetlineError as exc:
        return render_template("statement/preview_error.html", message=web_message(exc)), 400, headers
    return html, 200, headers


@bp.post("/name")
def name() -> Response:
    """Keep the acting name in the session cookie."""
    flash(f"You act as {acting_name()}")
    return redirect(safe_next(url_for("overview.index")), code=303)


@bp.app_context_processor
def _acting() -> dict[str, Any]:
    return {"acting_name": current_name()}
