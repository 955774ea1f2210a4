"""A blurb drafted on its own reads its parts' candidates as they come, and gets the same drafts.

A worker drafting only the blurb kind must not hold every standing, change and trend candidate
of the edition at once (at 100,000 cells that was most of a refresh's peak memory); a pass that
drafts the part kinds too keeps them, so each is computed once. Both give the same blurbs, and a
part kind yielding its cells out of the fact table's order stops drafting with an error instead
of leaving a part out.
"""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest

from stetline import loading
from stetline.dataset import load_dataset
from stetline.drafting import Context, draft_all
from stetline.kinds import blurb, change, standing, trend
from stetline.rendering import Renderer

from .test_noop_fast_path import _synthetic


@pytest.fixture
def ctx(tmp_path: Path, ws: Any) -> Context:
    data = _synthetic().write(tmp_path / "data", 20, 5, 3)
    dataset = load_dataset(data["observations"], data["topics"], data["entities"])
    with ws.session() as session:
        return loading.edition_context(session, dataset.observations, dataset.topics, dataset.entities, None, "x")


def _rows(drafts: Iterator[Any]) -> list[tuple[Any, ...]]:
    return [(d.slot, d.text, d.evidence_json, d.claims_json, d.digest, d.facts) for d in drafts]


def test_a_blurb_alone_keeps_no_part_and_drafts_what_a_full_pass_drafts(ctx: Context,
                                                                         monkeypatch: pytest.MonkeyPatch) -> None:
    renderer = Renderer(ctx.style, None)
    full_pass = _rows(draft_all(ctx, renderer, [standing, change, trend, blurb]))
    together = [r for r in full_pass if r[0].startswith("blurb/")]
    kept: list[str] = []
    original = Context.kept

    def watched(self: Context, kind: Any) -> Any:
        kept.append(kind.KIND)
        return original(self, kind)

    monkeypatch.setattr(Context, "kept", watched)
    alone = _rows(draft_all(ctx, renderer, [blurb]))
    assert kept == []  # the parts were read as they came
    assert len(alone) == len(ctx.facts.cells) > 50
    assert alone == together


def test_a_part_out_of_order_stops_drafting(ctx: Context, monkeypatch: pytest.MonkeyPatch) -> None:
    real = trend.candidates
    monkeypatch.setattr(trend, "candidates", lambda c: reversed(list(real(c))))
    with pytest.raises(RuntimeError, match="out of the fact table's order"):
        list(draft_all(ctx, Renderer(ctx.style, None), [blurb]))
