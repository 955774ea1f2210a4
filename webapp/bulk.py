"""Bulk work on the statements a page shows: approve, annotate or suppress all of them.

The listing pages post their selection (scope, key, filters) to the confirmation page, which
rebuilds it, says how many statements the action applies to and which it leaves alone, and
carries each statement's version to the final form: applying acts on exactly the statements
confirmed, in one transaction, and does nothing when any of them changed in between.
"""

from __future__ import annotations

from flask import Blueprint, abort, flash, redirect, render_template, request
from werkzeug.wrappers import Response

from stetline import bulk as bulk_mod
from stetline.errors import Conflict, Forbidden, NotFound, StetlineError
from stetline.store import ops
from stetline.web.common import acting_name, safe_next
from stetline.web.db import session, workspace
from stetline.web.selection import SCOPES, Selection
from stetline.web.wording import web_message

bp = Blueprint("bulk", __name__)

VERBS = {"approve": ("Approve", "approved"), "annotate": ("Annotate", "annotated"),
         "suppress": ("Suppress", "suppressed")}
MAX_NOTE = 5_000


def _selection() -> Selection:
    scope = request.form.get("scope", "")
    key = request.form.get("key") or None
    if scope not in SCOPES or (scope != "recheck" and not key):
        abort(400, description="The form did not say which statements to work on; go back to the list.")
    s = session()
    if scope == "entity" and ops.get_entity(s, key or "") is None:
        abort(404, description=f"There is no entity {key!r} in this workspace.")
    if scope == "topic" and ops.get_topic(s, key or "") is None:
        abort(404, description=f"There is no topic {key!r} in this workspace.")
    return Selection.parse(scope, key, request.form)


def _action() -> str:
    action = request.form.get("action", "")
    if action not in VERBS:
        abort(400, description="Unknown bulk action; choose approve, annotate or suppress.")
    return action


@bp.post("/bulk/confirm")
def confirm() -> tuple[str, int]:
    """Say how many statements the action applies to, and ask before doing it."""
    action, sel = _action(), _selection()
    note = (request.form.get("text") or "").strip()
    views = sel.views(session())
    plan = bulk_mod.plan(action, views)
    error = None
    if action == "annotate" and not note:
        error = "Write the note first: it is added to every statement shown."
    elif len(note) > MAX_NOTE:
        error = f"The note is {len(note):,} characters long; the limit is {MAX_NOTE:,}."
    return render_template("bulk/confirm.html", action=action, verb=VERBS[action], plan=plan, shown=len(views),
                           selection=sel, note=note, error=error), 400 if error else 200


@bp.post("/bulk/apply")
def apply() -> Response | tuple[str, int]:
    """Apply the confirmed action to the confirmed statements and their versions."""
    action, sel = _action(), _selection()
    slots, versions = request.form.getlist("slot"), request.form.getlist("version")
    try:
        if len(slots) != len(versions):
            raise StetlineError("the form lost track of the statements; go back to the list")
        items = [(slot, int(v)) for slot, v in zip(slots, versions)]
    except ValueError:
        abort(400, description="The form carried a statement version that is not a number.")
    except StetlineError as exc:
        abort(400, description=web_message(exc))
    by = acting_name()
    try:
        with workspace().session() as s:
            done = bulk_mod.apply(s, action, items, by=by, text=request.form.get("text"))
    except NotFound as exc:
        abort(404, description=web_message(exc))
    except (Conflict, StetlineError) as exc:
        return render_template("bulk/refused.html", verb=VERBS[action], message=web_message(exc), selection=sel,
                               conflict=isinstance(exc, Conflict)), _status(exc)
    n = len(done)
    flash(f"{VERBS[action][1].capitalize()} {n} statement{'' if n == 1 else 's'}.")
    return redirect(safe_next(sel.url()), code=303)


def _status(exc: StetlineError) -> int:
    return 409 if isinstance(exc, Conflict) else 403 if isinstance(exc, Forbidden) else 400
