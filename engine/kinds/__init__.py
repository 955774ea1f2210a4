"""The statement kinds: one module each, with a Jinja2 template of the same name in templates/.

A kind module defines ``KIND`` (its name), ``PHRASINGS`` (how many wordings its template holds)
and ``candidates(ctx)``, which yields the slots it drafts with their evidence and claims.
"""

from __future__ import annotations

from types import ModuleType

from engine.kinds import change, headline, leaders, movement, profile, standing, trend

#: every kind, in the order statements are listed within an entity or topic
KINDS: tuple[ModuleType, ...] = (headline, profile, standing, change, trend, leaders, movement)
BY_NAME = {k.KIND: k for k in KINDS}
