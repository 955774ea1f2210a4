"""A load writes each kind's drafts as they come, and still writes nothing when a later kind fails.

The statements of the first kinds are already in the transaction when a template of the last kind
(roundup) fails; the load must stop with the template's message and leave the workspace as it was:
no edition, no statement, no draft, in one process and in two.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from stetline import loading, workers
from stetline.errors import StetlineError
from stetline.store import ops
from stetline.workspace import init_workspace

from .test_noop_fast_path import _dump, _synthetic

#: every kind, so the failing roundup comes after eight kinds' drafts were written
ALL_KINDS = "headline,profile,roundup,blurb,standing,change,trend,leaders,movement"


@pytest.mark.parametrize("count", ["1", "2"])
def test_a_template_failing_in_the_last_kind_leaves_the_workspace_as_it_was(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch, count: str) -> None:
    monkeypatch.setenv(workers.WORKERS_ENV, count)
    data = _synthetic().write(tmp_path / "data", 12, 4, 3)
    ws = init_workspace(tmp_path / "ws")
    try:
        with ws.session() as s:
            ops.put_setting(s, "kinds", ALL_KINDS)
        loading.load_edition(ws, data["observations"], data["topics"], data["entities"], by="a")
        before = _dump(ws)
        ws.phrasing_dir.mkdir(exist_ok=True)
        (ws.phrasing_dir / "roundup.j2").write_text("{{ no_such_variable }} moved.\n")
        for files in ((data["observations2"],), (data["observations"], data["topics"], data["entities"])):
            with pytest.raises(StetlineError) as caught:
                loading.load_edition(ws, *files, by="a", label="next")
            assert "the roundup template cannot be used" in str(caught.value)
            assert _dump(ws) == before
        (ws.phrasing_dir / "roundup.j2").unlink()
        summary = loading.load_edition(ws, data["observations2"], by="a", label="next")
        assert summary.edition == "next" and summary.drafts_written > 0
        with ws.session() as s:
            counts = ops.table_counts(s)
        assert counts["draft"] == len(before["draft"]) + summary.drafts_written
    finally:
        ws.close()
