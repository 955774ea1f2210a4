"""A reload that would redraft nothing skips drafting, and leaves the workspace exactly as a full
redraft would: the same rows in every table, the same summaries.

Two workspaces go through the same loads, human work and setting change; in one, every load
drafts in full (the fingerprint of the drafting inputs never matches), in the other, reloads of
unchanged inputs take the fast path. Only the stored fingerprints may differ.
"""

from __future__ import annotations

import importlib.util
import sys
import uuid
from pathlib import Path
from typing import Any

import pytest
from sqlalchemy import select

from stetline import actions, loading
from stetline.store import ops
from stetline.store.models import Base, Slot
from stetline.workspace import Workspace, init_workspace

TIMES = {"loaded_at", "updated_at", "at", "dropped_at"}


def _synthetic() -> Any:
    path = Path(__file__).resolve().parent / "synthetic.py"
    spec = importlib.util.spec_from_file_location("stetline_bench_synthetic", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # its dataclasses look their module up
    spec.loader.exec_module(module)
    return module


def _dump(ws: Workspace) -> dict[str, list[tuple[Any, ...]]]:
    out: dict[str, list[tuple[Any, ...]]] = {}
    with ws.session() as s:
        for table in Base.metadata.sorted_tables:
            cols = [c for c in table.columns if c.name not in TIMES]
            rows = s.execute(select(*cols).order_by(*table.primary_key.columns)).all()
            out[table.name] = [tuple(r) for r in rows]
    out["edition"] = [
        tuple({k: v for k, v in value.items() if k != loading.DRAFTED_FROM} if isinstance(value, dict) else value
              for value in row)
        for row in out["edition"]
    ]
    return out


def _human_work(ws: Workspace) -> None:
    with ws.session() as s:
        slots = list(s.scalars(select(Slot.id).order_by(Slot.id)))
        picks = slots[::max(1, len(slots) // 24)]
        for i, slot in enumerate(picks):
            what = i % 5
            if what == 0:
                actions.rewrite(s, slot, "An editor's wording, figure {{ value }}." if slot.startswith("standing/")
                                else "An editor's wording.", by="editor")
            elif what == 1:
                actions.pin(s, slot, by="editor")
            elif what == 2:
                actions.annotate(s, slot, "A note.", by="expert")
            elif what == 3:
                actions.approve(s, slot, by="reviewer")
            else:
                actions.suppress(s, slot, by="editor")


def _journey(path: Path, data: dict[str, Path]) -> tuple[list[dict[str, Any]], dict[str, list[tuple[Any, ...]]]]:
    ws = init_workspace(path)
    try:
        summaries = [loading.load_edition(ws, data["observations"], data["topics"], data["entities"], by="a")]
        _human_work(ws)
        second = data["observations2"]
        summaries.append(loading.load_edition(ws, second, by="a"))
        summaries.append(loading.load_edition(ws, second, by="a", dry_run=True))
        summaries.append(loading.load_edition(ws, second, by="a"))
        with ws.session() as s:
            waiting = [sl.id for sl, _ in ops.list_slots(s, ops.SlotFilter(status="recheck"))][:3]
            for slot in waiting:  # a reviewer who read them, contradicted claims included
                actions.approve(s, slot, by="reviewer", confirm_claims=True)
        summaries.append(loading.load_edition(ws, second, by="a"))
        with ws.session() as s:
            ops.put_setting(s, "serial_comma", True)
        summaries.append(loading.load_edition(ws, second, by="a"))
        summaries.append(loading.load_edition(ws, second, by="a"))
        summaries.append(loading.redraft(ws, by="a"))
        summaries.append(loading.load_edition(ws, second, by="a"))
        summaries.append(loading.load_edition(ws, data["observations"], by="a"))
        summaries.append(loading.load_edition(ws, data["observations"], by="a"))
        return [x.to_json() for x in summaries], _dump(ws)
    finally:
        ws.close()


def test_reloading_unchanged_inputs_matches_a_full_redraft(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    data = _synthetic().write(tmp_path / "data", 24, 6, 3)
    fast_calls: list[int] = []
    original = loading._reconcile_as_drafted

    def counted(*args: Any, **kwargs: Any) -> Any:
        fast_calls.append(1)
        return original(*args, **kwargs)

    monkeypatch.setattr(loading, "_reconcile_as_drafted", counted)
    fast = _journey(tmp_path / "fast", data)
    assert len(fast_calls) >= 4, "the reloads of unchanged inputs took the fast path"

    fast_calls.clear()
    monkeypatch.setattr(loading, "drafting_inputs", lambda *_a, **_k: uuid.uuid4().hex)
    full = _journey(tmp_path / "full", data)
    assert not fast_calls

    assert fast[0] == full[0]
    assert fast[1].keys() == full[1].keys()
    for table in full[1]:
        assert fast[1][table] == full[1][table], table
