"""My statements: what an admin assigned to the signed-in person, and what of it waits on them."""

from __future__ import annotations

from flask import Blueprint, render_template
from sqlalchemy.orm import Session

from stetline import accounts, actions
from stetline.status import Status
from stetline.store import ops
from stetline.web.common import acting_name
from stetline.web.db import session

bp = Blueprint("mine", __name__)

#: the statuses that wait on a person of each role (None: a one-person workspace)
_OPEN = (Status.DRAFT, Status.EDITED, Status.RECHECK)
WAITING = {"expert": _OPEN, "editor": _OPEN, "reviewer": (Status.EDITED, Status.RECHECK), "admin": _OPEN, None: _OPEN}


@bp.get("/mine")
def index() -> str:
    """The statements of the entities and topics assigned to me that wait on me."""
    s = session()
    name = acting_name()
    role = accounts.role_of(s, name)
    assigned = accounts.assignments(s, name)
    waiting = WAITING.get(role, WAITING[None])
    groups = []
    for a in assigned:
        f = ops.SlotFilter(entity=a.entity, topic=a.topic)
        views = [v for v in actions.views(s, f, order="interest") if v.slot.status in waiting]
        label = _label(s, a.entity, a.topic)
        groups.append({"what": "entity" if a.entity else "topic", "key": a.entity or a.topic, "label": label,
                       "items": [v.to_json(s) for v in views]})
    return render_template("mine/index.html", name=name, role=role, groups=groups, waiting=waiting)


def _label(s: Session, entity: str | None, topic: str | None) -> str:
    """The name of an assigned entity, or the label of an assigned topic (the key if it left the data)."""
    if entity:
        row = ops.get_entity(s, entity)
        return row.name if row is not None else entity
    found = ops.get_topic(s, topic) if topic else None
    return found.label if found is not None else (topic or "")
