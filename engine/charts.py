"""Charts of the figures, drawn with matplotlib (Agg only): SVG for pages and HTML, PNG for Word.

Two charts: the series of one topic over the periods with one entity highlighted among all the
others (``series_spec``), and every entity ranked on one topic (``ranking_spec``). A spec is plain
data (labels, values and the caption that states the numbers, used as the text alternative);
``render`` draws it. Rendering is deterministic (a fixed ``svg.hashsalt`` per chart, no date or
software metadata), labels are plain text (math parsing off, so "$" in a label stays a dollar
sign), and every result is kept in an in-process LRU cache keyed by the spec's digest and the format,
so a page or a report never draws the same chart twice in one process.
"""

from __future__ import annotations

import hashlib
import io
import json
import re
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import asdict, dataclass, field
from threading import Lock
from typing import Any

from stetline import phrasing

Format = Callable[[float], str]
FORMATS = ("svg", "png")
CACHE_SIZE = 1024
LONG_UNIT = 8  # units longer than this go on the axis label instead of every tick label

INK, OTHER, GRID, MARK = "#1d1d1d", "#b9c2cc", "#e3e3e3", "#1f4e8c"


@dataclass(frozen=True)
class ChartSpec:
    """What one chart shows: its kind, title, axis unit, the values and the caption (text alternative)."""

    kind: str  # "series" or "ranking"
    title: str
    caption: str
    unit_label: str  # the unit as the axis shows it ("" when every tick label carries it)
    ticks: tuple[tuple[float, str], ...]  # value axis ticks and their labels (units included when short)
    periods: tuple[str, ...] = ()
    lines: tuple[tuple[str, str, tuple[float | None, ...]], ...] = ()  # key, name, value per period
    bars: tuple[tuple[str, str, float, str], ...] = ()  # key, name, value, shown; ranked, best first
    marked: str | None = None
    rows: tuple[tuple[str, str, bool], ...] = field(default=())  # the figures as a table: label, shown, marked

    @property
    def digest(self) -> str:
        """A fingerprint of everything drawn: equal digests draw the same chart."""
        data = json.dumps(asdict(self), sort_keys=True, ensure_ascii=False, default=str)
        return hashlib.blake2b(data.encode("utf-8"), digest_size=16).hexdigest()


def _nice_ticks(lo: float, hi: float, count: int = 4) -> list[float]:
    """Round tick values spanning lo..hi (steps of 1, 2, 2.5 or 5 times a power of ten)."""
    import math

    if hi == lo:
        return [lo]
    raw = (hi - lo) / count
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 2.5, 5, 10) if m * power >= raw)
    first = math.floor(lo / step) * step
    ticks, t = [], first
    while t <= hi + step * 0.5:
        ticks.append(round(t, 10))
        t += step
    return ticks


def _axis(values: list[float], unit: str, fmt: Format) -> tuple[str, tuple[tuple[float, str], ...]]:
    """The unit label and the ticks of a value axis: short units on every tick, long ones on the axis."""
    lo, hi = min(values), max(values)
    ticks = _nice_ticks(min(lo, 0.0) if lo >= 0 and lo < (hi - lo) else lo, hi)
    if len(unit) <= LONG_UNIT or unit in ("percent", "%"):
        return "", tuple((t, fmt(t)) for t in ticks)
    bare = [fmt(t).removesuffix(" " + unit) for t in ticks]
    return unit, tuple(zip(ticks, bare))


def series_spec(label: str, unit: str, periods: list[str], lines: list[tuple[str, str, list[float | None]]],
                marked: str, fmt: Format, noun: str) -> ChartSpec | None:
    """A topic's series over the periods, one line per entity, the marked entity drawn dark and labelled."""
    mine = next((ln for ln in lines if ln[0] == marked), None)
    known = [(p, v) for p, v in zip(periods, mine[2]) if v is not None] if mine else []
    values = [v for _k, _n, vs in lines for v in vs if v is not None]
    if mine is None or not known:
        return None
    name = mine[1]
    first, last = known[0], known[-1]
    if len(known) == 1:
        caption = f"{label} in {name}: {fmt(last[1])} in {last[0]}."
    else:
        how = "up from" if last[1] > first[1] else "down from" if last[1] < first[1] else "the same as"
        caption = f"{label} in {name}: {fmt(last[1])} in {last[0]}, {how} {fmt(first[1])} in {first[0]}."
    others = [vs[periods.index(last[0])] for k, _n, vs in lines if k != marked]
    others_known = [v for v in others if v is not None]
    if others_known:
        many = phrasing.noun_plural(noun, len(others_known))
        caption += (f" The other {len(others_known)} {many} ranged from {fmt(min(others_known))} "
                    f"to {fmt(max(others_known))} in {last[0]}.")
    unit_label, ticks = _axis(values, unit, fmt)
    rows = tuple((p, fmt(v), i == len(known) - 1) for i, (p, v) in enumerate(known))
    return ChartSpec("series", f"{label} in {name}, {first[0]} to {last[0]}", caption, unit_label, ticks,
                     tuple(periods), tuple((k, n, tuple(vs)) for k, n, vs in lines), (), marked, rows)


def ranking_spec(label: str, unit: str, period: str, values: list[tuple[str, str, float]], marked: str | None,
                 fmt: Format, noun: str, better: str = "higher") -> ChartSpec | None:
    """Every entity's value in one period as ranked bars (best first), the marked entity drawn dark."""
    if not values:
        return None
    ranked = sorted(values, key=lambda t: (t[2] if better == "lower" else -t[2], t[1]))
    n = len(ranked)
    many = phrasing.noun_plural(noun, n)
    top, bottom = ranked[0], ranked[-1]
    word = ("best", "worst") if better in ("higher", "lower") else ("highest", "lowest")
    caption = f"{label} in {period}, {n} {many} ranked: {word[0]} {top[1]} ({fmt(top[2])})"
    caption += f", {word[1]} {bottom[1]} ({fmt(bottom[2])})." if n > 1 else "."
    if marked is not None and any(k == marked for k, _n, _v in ranked):
        name, v = next((nm, v) for k, nm, v in ranked if k == marked)
        rank = 1 + sum(1 for *_k, other in ranked if (other < v if better == "lower" else other > v))
        caption += f" {name}: {fmt(v)}, {phrasing.ordinal(rank)} of {n}."
    drawn = [v for *_k, v in ranked]
    unit_label, ticks = _axis(drawn + [0.0] if min(drawn) >= 0 else drawn, unit, fmt)  # bars start at zero
    bars = tuple((k, nm, v, fmt(v)) for k, nm, v in ranked)
    rows = tuple((nm, shown, k == marked) for k, nm, _v, shown in bars)
    return ChartSpec("ranking", f"{label}, {period}: every {noun}", caption, unit_label, ticks,
                     (period,), (), bars, marked, rows)


# -- drawing ---------------------------------------------------------------------------------

_RC: dict[str, Any] = {"svg.fonttype": "path", "text.parse_math": False, "text.usetex": False,
       "font.family": "DejaVu Sans",
       "font.size": 8.5, "axes.edgecolor": "#555555", "axes.linewidth": 0.8, "xtick.color": "#333333",
       "ytick.color": "#333333", "axes.spines.top": False, "axes.spines.right": False}


def figure(spec: ChartSpec) -> Any:
    """Draw a spec on a new matplotlib Figure (Agg canvas, constrained layout) and return the figure."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    rows = len(spec.bars)
    height = 2.3 if spec.kind == "series" else 0.5 + 0.2 * max(rows, 3)
    fig = Figure(figsize=(5.2, height), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    ax.grid(True, axis="y" if spec.kind == "series" else "x", color=GRID, linewidth=0.8)
    ax.set_axisbelow(True)
    ticks = [t for t, _s in spec.ticks]
    if spec.kind == "series":
        _draw_series(ax, spec)
        ax.set_yticks(ticks, [s for _t, s in spec.ticks])
        if spec.unit_label:
            ax.set_ylabel(spec.unit_label)
    else:
        _draw_bars(ax, spec)
        ax.set_xticks(ticks, [s for _t, s in spec.ticks])
        if spec.unit_label:
            ax.set_xlabel(spec.unit_label)
    return fig


def _draw_series(ax: Any, spec: ChartSpec) -> None:
    xs = list(range(len(spec.periods)))
    for key, _name, values in spec.lines:
        if key == spec.marked:
            continue
        ax.plot(xs, [float("nan") if v is None else v for v in values], color=OTHER, linewidth=1)
    mine = next(ln for ln in spec.lines if ln[0] == spec.marked)
    ys = [float("nan") if v is None else v for v in mine[2]]
    ax.plot(xs, ys, color=MARK, linewidth=2.4, marker="o", markersize=4, label=mine[1])
    ax.set_xticks(xs, list(spec.periods))
    if len(xs) > 8:
        every = max(1, len(xs) // 6)
        for i, tick in enumerate(ax.get_xticklabels()):
            tick.set_visible(i % every == 0 or i == len(xs) - 1)
    ax.set_xlim(-0.3, len(xs) - 0.7)
    ax.legend(handles=[ax.lines[-1]], loc="best", frameon=False, fontsize=8)


def _draw_bars(ax: Any, spec: ChartSpec) -> None:
    names = [name for _k, name, _v, _s in spec.bars]
    values = [v for _k, _n, v, _s in spec.bars]
    colours = [MARK if k == spec.marked else OTHER for k, _n, _v, _s in spec.bars]
    positions = list(range(len(names)))
    ax.barh(positions, values, color=colours, height=0.7)
    ax.set_yticks(positions, names)
    ax.invert_yaxis()
    ax.tick_params(axis="y", length=0)
    for label, (key, *_rest) in zip(ax.get_yticklabels(), spec.bars):
        if key == spec.marked:
            label.set_fontweight("bold")
    lo, hi = min([0.0, *values, *(t for t, _s in spec.ticks)]), max([*values, *(t for t, _s in spec.ticks)])
    ax.set_xlim(lo, hi + (hi - lo) * 0.02)


def _save(spec: ChartSpec, fmt: str) -> bytes:
    import matplotlib

    settings: Any = {**_RC, "svg.hashsalt": spec.digest}
    with matplotlib.rc_context(settings):
        fig = figure(spec)
        buf = io.BytesIO()
        if fmt == "svg":
            fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Title": spec.title})
            return compact_svg(buf.getvalue())
        else:
            fig.savefig(buf, format="png", dpi=150, metadata={"Software": None})
    return buf.getvalue()


_PROLOG = re.compile(rb"\A.*?(?=<svg)", re.DOTALL)
_NOISE = re.compile(rb"<metadata>.*?</metadata>|<!--.*?-->", re.DOTALL)
_DIGITS = re.compile(rb"(?<![\d.])([1-9]\d*\.\d\d)\d+")  # coordinates; scales (0.085) kept whole
_SPACE = re.compile(rb"\s*\n\s*")


def compact_svg(svg: bytes) -> bytes:
    """The SVG without prolog, metadata, comments, line breaks and digits beyond a hundredth of a point."""
    svg = _NOISE.sub(b"", _PROLOG.sub(b"", svg))
    return _SPACE.sub(b" ", _DIGITS.sub(rb"\1", svg)).replace(b"> <", b"><").strip() + b"\n"


_cache: OrderedDict[tuple[str, str], bytes] = OrderedDict()
_lock = Lock()


def render(spec: ChartSpec, fmt: str) -> bytes:
    """The chart as SVG or PNG bytes, drawn once per process for each (spec digest, format)."""
    if fmt not in FORMATS:
        raise ValueError(f"a chart is drawn as {' or '.join(FORMATS)}, not {fmt!r}")
    key = (spec.digest, fmt)
    with _lock:
        if key in _cache:
            _cache.move_to_end(key)
            return _cache[key]
    data = _save(spec, fmt)
    with _lock:
        _cache[key] = data
        while len(_cache) > CACHE_SIZE:
            _cache.popitem(last=False)
    return data


def cached(spec: ChartSpec, fmt: str) -> bool:
    """True when the chart is in the cache (drawn before in this process)."""
    with _lock:
        return (spec.digest, fmt) in _cache


def data_uri(spec: ChartSpec) -> str:
    """The chart as an SVG data: address for an <img> (pages forbid inline styles; images keep their own)."""
    import base64

    return "data:image/svg+xml;base64," + base64.b64encode(render(spec, "svg")).decode("ascii")
