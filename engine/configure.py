"""Change the workspace settings from a form: every value checked first, each change recorded.

A change to a house-style setting alters the wording of drafts only once the current edition is
redrafted; ``restyle_pending`` tells which such changes came after the drafts were last written.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from stetline import settings as settings_mod
from stetline.accounts import authorize
from stetline.errors import StetlineError
from stetline.slotstatus import recheck_unrenderable
from stetline.store import ops

MAX_TEXT = 300


@dataclass(frozen=True)
class SettingChange:
    """One setting that a save changed."""

    key: str
    old: Any
    new: Any


@dataclass
class SettingsInvalid(StetlineError):
    """Some submitted values are not valid; nothing was saved."""

    errors: dict[str, str] = field(default_factory=dict)

    def __str__(self) -> str:
        return "; ".join(f"{k}: {v}" for k, v in self.errors.items())


def _parse(spec: settings_mod.SettingSpec, text: str) -> Any:
    if isinstance(spec.default, str) and not spec.choices:
        text = text.strip()
        if not text:
            raise StetlineError(f"setting {spec.key} cannot be empty")
        if len(text) > MAX_TEXT:
            raise StetlineError(f"setting {spec.key} is at most {MAX_TEXT} characters")
    return spec.parse(text)


def save(session: Session, submitted: dict[str, str], *, by: str) -> list[SettingChange]:
    """Check every submitted value, then store the ones that changed, each with an event."""
    authorize(session, by, "settings")
    current = settings_mod.with_defaults(ops.get_settings(session))
    parsed: dict[str, Any] = {}
    errors: dict[str, str] = {}
    for key, text in submitted.items():
        try:
            parsed[key] = _parse(settings_mod.spec(key), text)
        except StetlineError as exc:
            errors[key] = str(exc)
    if errors:
        raise SettingsInvalid(errors)
    changes = [SettingChange(k, current[k], v) for k, v in parsed.items() if current[k] != v]
    for c in changes:
        ops.put_setting(session, c.key, c.new)
        ops.add_event(session, by, "setting", detail={"key": c.key, "old": c.old, "new": c.new})
    if changes:
        session.flush()
        recheck_unrenderable(session, by=by)  # a style change can send a rewrite's live fields down a failing branch
    return changes


def restyle_pending(session: Session) -> list[str]:
    """House-style settings whose value differs from the one the current drafts were written with."""
    last = ops.latest_event(session, ("load", "redraft"))
    if last is None:
        return []
    current = settings_mod.with_defaults(ops.get_settings(session))
    first_old: dict[str, Any] = {}
    for e in ops.events_after(session, "setting", last.id):
        key = (e.detail or {}).get("key")
        if key in settings_mod.STYLE_KEYS and key not in first_old:
            first_old[key] = e.detail.get("old")
    return [k for k in settings_mod.STYLE_KEYS if k in first_old and first_old[k] != current[k]]
