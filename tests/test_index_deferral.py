"""A first load builds its tables' secondary indexes after inserting the rows: the same indexes after.

A first load writes into empty slot, draft and observation tables; it drops their secondary
indexes for the bulk insert and creates them again from the definitions the database held. The
workspace must end with exactly the indexes it started with, and a load that fails must leave
them in place (the drop is part of the load's transaction).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from sqlalchemy import inspect

from stetline import loading
from stetline.store import ops
from stetline.workspace import Workspace

TABLES = ("slot", "draft", "observation")


def _indexes(ws: Workspace) -> dict[str, list[tuple[str, tuple[str, ...], bool]]]:
    """Each table's indexes: name, columns, unique (as SQLAlchemy reads them from the database)."""
    found = inspect(ws.engine)
    return {t: sorted((str(i["name"]), tuple(str(c) for c in i["column_names"]), bool(i["unique"]))
                      for i in found.get_indexes(t)) for t in TABLES}


def _first_load(ws: Workspace, files: Path) -> loading.LoadSummary:
    return loading.load_edition(ws, files / "observations-2024.csv", files / "topics.csv", files / "entities.csv",
                                by="Ada")


def test_a_first_load_ends_with_every_index_it_started_with(ws: Workspace, demo_files: Path) -> None:
    before = _indexes(ws)
    assert all(before[t] for t in TABLES)  # each table has secondary indexes to defer
    summary = _first_load(ws, demo_files)
    assert summary.slots > 100
    assert _indexes(ws) == before
    loading.load_edition(ws, demo_files / "observations-2025.csv", by="Ada")  # a refresh keeps them too
    assert _indexes(ws) == before


def test_the_indexes_are_dropped_only_while_a_first_load_writes(ws: Workspace, demo_files: Path,
                                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    before = _indexes(ws)
    seen: list[dict[str, list[str]]] = []
    real = ops.store_observations

    def store_and_look(session, *args, **kwargs):  # type: ignore[no-untyped-def]
        seen.append({t: [str(i["name"]) for i in inspect(session.connection()).get_indexes(t)] for t in TABLES})
        return real(session, *args, **kwargs)

    monkeypatch.setattr(ops, "store_observations", store_and_look)
    _first_load(ws, demo_files)
    assert seen == [{t: [] for t in TABLES}]  # the first load wrote without them
    loading.load_edition(ws, demo_files / "observations-2025.csv", by="Ada")
    assert [sorted(n) for n in seen[1].values()] == [[i[0] for i in before[t]] for t in TABLES]  # a refresh keeps them


def test_a_failed_first_load_leaves_the_indexes_and_writes_nothing(ws: Workspace, demo_files: Path,
                                                                    monkeypatch: pytest.MonkeyPatch) -> None:
    before = _indexes(ws)

    def fail(*_args: object, **_kwargs: object) -> None:
        raise RuntimeError("the disk is full")

    monkeypatch.setattr(ops, "store_observations", fail)
    with pytest.raises(RuntimeError):
        _first_load(ws, demo_files)
    assert _indexes(ws) == before
    with ws.reading() as session:
        assert ops.table_counts(session)["slot"] == 0
