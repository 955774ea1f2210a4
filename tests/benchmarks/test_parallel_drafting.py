"""Drafting in several processes gives exactly the drafts of one process.

Two workspaces go through the same loads, human work and redraft, one drafting in a single
process (``STETLINE_WORKERS=1``), the other in two; every row of every table must be equal (the
text, evidence JSON and claims of every draft, the layers, the recheck reasons, the summaries).
The drafts are also compared directly, with workers forked and with workers spawned.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest

from stetline import loading, workers
from stetline import settings as declared
from stetline.dataset import load_dataset
from stetline.errors import StetlineError
from stetline.store import ops
from stetline.workspace import init_workspace

from .test_noop_fast_path import _dump, _human_work, _synthetic


def _journey(path: Path, data: dict[str, Path]) -> tuple[list[dict[str, Any]], dict[str, list[tuple[Any, ...]]]]:
    ws = init_workspace(path)
    with ws.session() as s:  # every kind, the part kinds too: the workers draft them all
        ops.put_setting(s, "kinds", ",".join(declared.ALL_KINDS))
    try:
        summaries = [loading.load_edition(ws, data["observations"], data["topics"], data["entities"], by="a")]
        _human_work(ws)
        summaries.append(loading.load_edition(ws, data["observations2"], by="a"))
        summaries.append(loading.redraft(ws, by="a"))
        return [x.to_json() for x in summaries], _dump(ws)
    finally:
        ws.close()


def test_two_workers_store_exactly_what_one_process_stores(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    data = _synthetic().write(tmp_path / "data", 30, 6, 3)
    monkeypatch.setenv(workers.WORKERS_ENV, "1")
    single = _journey(tmp_path / "one", data)
    monkeypatch.setenv(workers.WORKERS_ENV, "2")
    stages: list[str] = []
    original = workers.draft_each_kind

    def watched(*args: Any, **kwargs: Any) -> Any:
        stages.append(f"workers={args[2]}")
        return original(*args, **kwargs)

    monkeypatch.setattr(loading, "draft_each_kind", watched)
    multi = _journey(tmp_path / "two", data)
    assert stages == ["workers=2", "workers=2", "workers=2"]  # both loads and the redraft drafted in two
    assert multi[0] == single[0]
    assert multi[1].keys() == single[1].keys()
    drafts = multi[1]["draft"]
    assert len(drafts) > 500  # every kind drafted, some more than once
    for table in single[1]:
        assert multi[1][table] == single[1][table], table


@pytest.mark.parametrize("start", ["fork", "spawn"])
@pytest.mark.parametrize("every_kind", [False, True])  # True: the blurbs' worker drafts their part kinds too
def test_drafts_made_in_workers_equal_those_made_in_one_process(tmp_path: Path, ws: Any, start: str,
                                                                every_kind: bool) -> None:
    data = _synthetic().write(tmp_path / "data", 20, 5, 3)
    dataset = load_dataset(data["observations"], data["topics"], data["entities"])
    with ws.session() as session:
        if every_kind:
            ops.put_setting(session, "kinds", ",".join(declared.ALL_KINDS))
        ctx = loading.edition_context(session, dataset.observations, dataset.topics, dataset.entities, None, "x")
    one = workers.draft_kinds(ctx, None, 1)
    heard: list[tuple[str, int, int | None]] = []
    two = workers.draft_kinds(ctx, None, 2, lambda *report: heard.append(report), start=start)
    assert [d.slot for d in two] == [d.slot for d in one]
    for a, b in zip(one, two):
        assert (b.text, b.evidence_json, b.claims_json, b.digest) == (a.text, a.evidence_json, a.claims_json, a.digest)
        assert (b.evidence, b.claims, b.interest, b.phrasing) == (a.evidence, a.claims, a.interest, a.phrasing)
        assert b.facts == a.facts  # a composed draft's facts, which its rechecks are judged on
    assert sum(1 for d in two if d.kind == "blurb" and d.facts) > 50
    assert heard[-1] == ("drafting statements", len(one), None)


def test_the_number_of_workers_follows_the_setting_and_the_size(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.delenv(workers.WORKERS_ENV, raising=False)
    assert workers.worker_count(workers.PARALLEL_FROM - 1) == 1  # small editions stay in one process
    monkeypatch.setenv(workers.WORKERS_ENV, "1")
    assert workers.worker_count(10 * workers.PARALLEL_FROM) == 1
    monkeypatch.setenv(workers.WORKERS_ENV, "two")
    with pytest.raises(StetlineError, match="STETLINE_WORKERS must be a whole number"):
        workers.worker_count(10)


def test_a_template_that_fails_in_a_worker_stops_drafting_with_the_same_message(tmp_path: Path, ws: Any) -> None:
    data = _synthetic().write(tmp_path / "data", 12, 4, 3)
    dataset = load_dataset(data["observations"], data["topics"], data["entities"])
    with ws.session() as session:
        ops.put_setting(session, "kinds", ",".join(declared.ALL_KINDS))  # trend statements are a part kind
        ctx = loading.edition_context(session, dataset.observations, dataset.topics, dataset.entities, None, "x")
    phrasing = tmp_path / "phrasing"
    phrasing.mkdir()
    (phrasing / "trend.j2").write_text("{{ name }} and {{ no_such_variable }}.\n")
    messages = []
    for count in (1, 2):
        with pytest.raises(StetlineError) as caught:
            workers.draft_kinds(ctx, phrasing, count)
        messages.append(str(caught.value))
    assert messages[0] == messages[1]
    assert "the trend template cannot be used" in messages[0] and "no_such_variable" in messages[0]
