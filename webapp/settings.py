"""The settings page: every workspace setting with its help text and a control, and a redraft
after a house-style change."""

from __future__ import annotations

from typing import Any

from flask import Blueprint, flash, redirect, render_template, request, url_for
from werkzeug.wrappers import Response

from stetline import configure, loading
from stetline import settings as settings_mod
from stetline.errors import Forbidden, StetlineError
from stetline.store import ops
from stetline.web.common import acting_name
from stetline.web.db import session, workspace
from stetline.web.wording import web_message

bp = Blueprint("settings", __name__)

GROUPS = (("publication", "The publication"), ("drafted", "What is drafted"),
          ("style", "House style: the wording of drafts"), ("rules", "Rules and the web app"))


def _group(key: str) -> str:
    if key == "kinds":  # which statements exist, not how they are worded (a redraft follows it all the same)
        return "drafted"
    if key in settings_mod.STYLE_KEYS:
        return "style"
    return "publication" if key == "title" else "rules"


def _control(spec: settings_mod.SettingSpec) -> str:
    if isinstance(spec.default, bool):
        return "checkbox"
    if spec.choices:
        return "select"
    if isinstance(spec.default, int):
        return "number"
    return "text"


def _page(*, errors: dict[str, str] | None = None, submitted: dict[str, str] | None = None,
          refused: str | None = None, status: int = 200) -> tuple[str, int]:
    s = session()
    values = settings_mod.with_defaults(ops.get_settings(s))
    rows: list[dict[str, Any]] = []
    for spec in settings_mod.SETTINGS:
        value: Any = values[spec.key]
        if submitted is not None and spec.key in submitted:
            value = submitted[spec.key]
            if isinstance(spec.default, bool):
                value = value == "true"
        rows.append({"spec": spec, "control": _control(spec), "value": value, "group": _group(spec.key),
                     "label": spec.label,
                     "style": spec.key in settings_mod.STYLE_KEYS, "default": spec.default})
    groups = [(title, [r for r in rows if r["group"] == key]) for key, title in GROUPS]
    return render_template("settings/page.html", groups=[g for g in groups if g[1]], errors=errors or {},
                           refused=refused,
                           pending=configure.restyle_pending(s), edition=ops.current_edition(s)), status


@bp.get("/settings")
def page() -> tuple[str, int]:
    """Show every setting."""
    return _page()


@bp.post("/settings")
def save() -> Response | tuple[str, int]:
    """Check and store the submitted settings (nothing is stored when any value is refused)."""
    submitted: dict[str, str] = {}
    for spec in settings_mod.SETTINGS:
        if isinstance(spec.default, bool):
            submitted[spec.key] = "true" if request.form.get(spec.key) else "false"
        elif spec.key in request.form:
            submitted[spec.key] = request.form[spec.key]
    by = acting_name()
    try:
        with workspace().session() as s:
            changes = configure.save(s, submitted, by=by)
    except configure.SettingsInvalid as exc:
        return _page(errors=exc.errors, submitted=submitted, status=400)
    except StetlineError as exc:  # the account may not change settings
        return _page(refused=web_message(exc), submitted=submitted, status=403)
    if not changes:
        flash("Nothing changed.")
    for c in changes:
        flash(f"Saved {c.key}: {c.old!r} → {c.new!r}")
    return redirect(url_for("settings.page"), code=303)


@bp.post("/settings/redraft")
def redraft() -> Response | tuple[str, int]:
    """Redraft the current edition so that drafts follow the house style."""
    try:
        summary = loading.redraft(workspace(), by=acting_name())
    except Forbidden as exc:  # the account may not redraft: a refusal, not a message after the fact
        return _page(refused=web_message(exc), status=403)
    except StetlineError as exc:
        flash(f"Nothing was redrafted: {web_message(exc)}")
        return redirect(url_for("settings.page"), code=303)
    flash(f"Redrafted edition {summary.edition}: {summary.updated} updated silently, "
          f"{summary.sent_to_recheck} sent to recheck, {summary.unchanged} unchanged.")
    return redirect(url_for("settings.page"), code=303)
