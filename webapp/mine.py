"""My statements: what an admin assigned to the signed-in person, and what of it waits on them."""

from __future__ import annotations

from flask import Blueprint, render_template

from stetline import accounts, actions
from stetline.store import ops
from stetline.web.common import acting_name
from stetline.web.db import session

bp = Blueprint("mine", __name__)

#: the statuses that wait on a person of each role (None: a one-person workspace)
WAITING = {
    "expert": ("draft", "edited", "recheck"),
    "editor": ("draft", "edited", "recheck"),
    "reviewer": ("edited", "recheck"),
    "admin": ("draft", "edited", "recheck"),
    None: ("draft", "edited", "recheck"),
}


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
        label = (ops.get_entity(s, a.entity).name if a.entity and ops.get_entity(s, a.entity) else a.entity) \
            if a.entity else (ops.get_topic(s, a.topic).label if a.topic and ops.get_topic(s, a.topic) else a.topic)
        groups.append({"what": "entity" if a.entity else "topic", "key": a.entity or a.topic, "label": label,
                       "items": [v.to_json(s) for v in views]})
    return render_template("mine/index.html", name=name, role=role, groups=groups, waiting=waiting)
