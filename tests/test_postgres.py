"""PostgreSQL only: two people saving the same statement at once, each in their own session.

Runs when STETLINE_TEST_DATABASE_URL names a PostgreSQL server (CI sets it); skipped otherwise.
"""

from __future__ import annotations

import threading

import pytest
from helpers import ON_POSTGRES, TEST_URL_VARIABLE
from sqlalchemy import select

from stetline import actions
from stetline.errors import Conflict
from stetline.store.models import Event, Slot
from stetline.workspace import Workspace

pytestmark = pytest.mark.skipif(not ON_POSTGRES, reason=f"needs PostgreSQL: set {TEST_URL_VARIABLE}")

SLOT = "blurb/heronsford/parks-satisfaction"


def test_two_concurrent_saves_of_one_version_one_wins_the_other_conflicts(demo_ws: Workspace) -> None:
    assert demo_ws.engine.dialect.name == "postgresql"
    with demo_ws.session() as s:
        version = s.get(Slot, SLOT).version
    texts = {"ada": "Heronsford led on recycling, by Ada.", "bo": "Heronsford led on recycling, by Bo."}
    start = threading.Barrier(len(texts))
    outcome: dict[str, object] = {}

    def save(person: str) -> None:
        try:
            start.wait(timeout=10)
            with demo_ws.session() as s:
                actions.rewrite(s, SLOT, texts[person], by=person, version=version)
            outcome[person] = "saved"
        except Exception as exc:
            outcome[person] = exc

    threads = [threading.Thread(target=save, args=(person,)) for person in texts]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=60)

    winners = [p for p, r in outcome.items() if r == "saved"]
    losers = [p for p, r in outcome.items() if isinstance(r, Conflict)]
    assert len(winners) == 1 and len(losers) == 1, outcome
    assert "changed since you opened it" in str(outcome[losers[0]])

    with demo_ws.session() as s:
        slot = s.get(Slot, SLOT)
        assert slot.version == version + 1
        saved = s.scalars(select(Event).where(Event.slot_id == SLOT, Event.action == "rewrite",
                                              Event.after.in_(list(texts.values())))).all()
    assert [(e.by, e.after) for e in saved] == [(winners[0], texts[winners[0]])]
