"""The statement kinds: one module each, with a Jinja2 template of the same name in templates/.

A kind module defines ``KIND`` (its name), ``PHRASINGS`` (how many wordings its template holds)
and ``candidates(ctx)``, which yields the slots it drafts with their evidence and claims.
"""

from __future__ import annotations

from pathlib import Path
from types import ModuleType

from stetline.drafting import TEMPLATES
from stetline.errors import StetlineError
from stetline.kinds import change, headline, leaders, movement, profile, standing, trend
from stetline.workspace import copy_builtin

#: every kind, in the order statements are listed within an entity or topic
KINDS: tuple[ModuleType, ...] = (headline, profile, standing, change, trend, leaders, movement)
BY_NAME = {k.KIND: k for k in KINDS}


def copy_template(folder: Path, kind: str, *, force: bool = False) -> Path:
    """Copy a kind's built-in template into a workspace's phrasing folder for the team to edit."""
    if kind not in BY_NAME:
        raise StetlineError(f"unknown statement kind {kind!r}; kinds: {', '.join(BY_NAME)}")
    return copy_builtin(TEMPLATES / f"{kind}.j2", folder, force=force)
