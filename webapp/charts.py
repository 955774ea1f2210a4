"""The statement page's charts: the topic's series with this entity among all, and every entity ranked.

Drawn by stetline.charts (matplotlib) as SVG and shown as <img> with a data: address, so the
page's Content-Security-Policy (no inline styles) does not apply inside the drawing and no text
from the data can become page markup; the caption stating the numbers is the alt text. The
specs of a statement are kept in an LRU cache keyed by the workspace, the slot, its digest and the
current edition, and each drawing in stetline.charts' own cache keyed by the spec's digest and in
the workspace's chart folder: a page shown again draws nothing and reads no observations, and
after a restart a chart drawn before is read from its file.
"""

from __future__ import annotations

from collections import OrderedDict
from threading import Lock
from typing import Any

from sqlalchemy.orm import Session

from stetline import charts, nesting, phrasing
from stetline.actions import SlotView
from stetline.loading import house_style
from stetline.store import ops
from stetline.web.db import workspace

CACHE_SIZE = 512
_specs: OrderedDict[tuple[str, ...], dict[str, Any]] = OrderedDict()
_lock = Lock()


def _build(s: Session, v: SlotView) -> dict[str, Any]:
    out: dict[str, Any] = {"series": None, "ranking": None}
    topic = ops.get_topic(s, v.slot.topic) if v.slot.topic else None
    if topic is None:
        return out
    style, values = house_style(s)

    def fmt(x: float) -> str:
        return phrasing.value(x, topic.unit, topic.decimals, style)

    rows = ops.entity_rows(s)
    names = {e.key: e.name for e in rows}
    parents = {e.key: e.parent for e in rows}
    period, latest = ops.latest_values(s, topic.key)
    depth = _depth_shown(v, parents, [k for k, _x in latest])
    noun = nesting.level_noun(nesting.nouns_of(str(values["level_nouns"])), depth, str(values["entity_noun"]))

    def level(key: str) -> bool:  # a chart compares the entities of one level: towns with towns
        return len(nesting.ancestors(parents, key)) == depth

    if v.slot.entity:
        lines, periods = ops.topic_series(s, topic.key)
        out["series"] = charts.series_spec(
            topic.label, topic.unit, periods, [(k, names.get(k, k), vs) for k, vs in lines.items() if level(k)],
            v.slot.entity, fmt, noun, style.locale)
    if period is not None:
        out["ranking"] = charts.ranking_spec(topic.label, topic.unit, period,
                                             [(k, names.get(k, k), x) for k, x in latest if level(k)],
                                             v.slot.entity, fmt, noun, topic.better, style.locale)
    return out


def _depth_shown(v: SlotView, parents: dict[str, str], with_data: list[str]) -> int:
    """The level a statement's charts compare: its entity's, its slot's level token's, else the deepest with data."""
    if v.slot.entity:
        return len(nesting.ancestors(parents, v.slot.entity))
    token = next((part for part in v.slot.id.split("/") if part.startswith(nesting.LEVEL_PREFIX)), "")
    if token[len(nesting.LEVEL_PREFIX):].isdigit():
        return int(token[len(nesting.LEVEL_PREFIX):]) - 1
    return max((len(nesting.ancestors(parents, k)) for k in with_data), default=0)


def statement_charts(s: Session, v: SlotView, workspace_key: str) -> dict[str, Any]:
    """The slot's chart specs (series and ranking, None when there is nothing to draw), cached by digest."""
    edition = ops.current_edition(s)
    key = (workspace_key, v.slot.id, v.slot.digest, str(edition.id if edition else ""))
    with _lock:
        if key in _specs:
            _specs.move_to_end(key)
            return _specs[key]
    specs = _build(s, v)
    with _lock:
        _specs[key] = specs
        while len(_specs) > CACHE_SIZE:
            _specs.popitem(last=False)
    return specs


def image(spec: charts.ChartSpec) -> str:
    """The chart's SVG as a data: address for an <img> (drawn once, kept in the workspace's chart folder)."""
    with charts.folder(workspace().chart_dir):
        return charts.data_uri(spec)
