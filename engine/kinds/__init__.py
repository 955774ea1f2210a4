"""The statement kinds: one module each, with a Jinja2 template of the same name in templates/.

A kind module defines ``KIND`` (its name), ``PHRASINGS`` (how many wordings its template holds)
and ``candidates(ctx)``, which yields the slots it drafts with their evidence and claims.
"""

from __future__ import annotations

from collections.abc import Collection
from pathlib import Path
from types import ModuleType
from typing import Any

from stetline.drafting import Context
from stetline.errors import StetlineError
from stetline.kinds import (
    blurb,
    breakdown,
    change,
    headline,
    leaders,
    movement,
    profile,
    roundup,
    standing,
    trend,
)
from stetline.rendering import TEMPLATES
from stetline.workspace import copy_builtin

#: every kind, in the order statements are listed within an entity or topic
KINDS: tuple[ModuleType, ...] = (
    headline, profile, standing, change, trend, blurb, leaders, movement, roundup, breakdown,
)
BY_NAME = {k.KIND: k for k in KINDS}
#: the kinds composed from others' facts: a recheck judges only the facts their text states
COMPOSED = ("blurb", "roundup")


def composed_facts(ctx: Context, kinds: set[str], slots: Collection[str] | None = None) -> dict[str, dict[str, Any]]:
    """Every fact, stated or not, of the composed statements of some kinds, by slot (no text rendered).

    ``slots``: only these slots' facts are kept (a no-op refresh needs those with human work alone).
    """
    return {c.slot: c.facts for name in sorted(kinds & set(COMPOSED)) for c in BY_NAME[name].candidates(ctx)
            if c.facts is not None and (slots is None or c.slot in slots)}


def chosen(names: tuple[str, ...] | list[str]) -> tuple[ModuleType, ...]:
    """The kind modules a workspace drafts, in listing order (every kind when none are named)."""
    if not names:
        return KINDS
    return tuple(k for k in KINDS if k.KIND in names)


def copy_template(folder: Path, kind: str, *, force: bool = False) -> Path:
    """Copy a kind's built-in template into a workspace's phrasing folder for the team to edit."""
    if kind not in BY_NAME:
        raise StetlineError(f"unknown statement kind {kind!r}; kinds: {', '.join(BY_NAME)}")
    return copy_builtin(TEMPLATES / f"{kind}.j2", folder, force=force)
