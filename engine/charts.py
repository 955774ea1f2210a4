"""Charts of the figures, drawn with matplotlib (Agg only): SVG for pages and HTML, PNG for Word.

What a chart shows is a ChartSpec (stetline.chartspecs: the series of a topic with one entity
among all, or every entity ranked); ``render`` draws it. A report draws a chart per entity and
topic, so drawing is made cheap: one Figure per chart kind is kept and cleared, the axes are
drawn by hand (grid lines as one collection, labels as plain texts, no tick objects), the margins
are measured from the labels instead of searched by a layout engine, and the grey lines of the
other entities are one LineCollection. SVG keeps its text as text (``svg.fonttype`` none: small,
searchable, drawn in the reader's DejaVu Sans or sans-serif); PNG is PNG_DPI dots an inch.

Rendering is deterministic (a fixed ``svg.hashsalt`` per chart, no date or software metadata),
labels are plain text (math parsing off, so "$" in a label stays a dollar sign), and every result
is kept in an in-process LRU cache keyed by the spec's digest and the format, and, inside
``folder(path)``, in files named by that key in the folder (publishing uses the workspace's
``chart-cache``), so a report published again draws only the charts whose figures changed.
"""

from __future__ import annotations

import hashlib
import io
import math
import os
import re
import tempfile
from collections import OrderedDict
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from functools import lru_cache
from pathlib import Path
from threading import Lock
from typing import Any

from stetline.chartspecs import MANY as MANY
from stetline.chartspecs import ChartSpec as ChartSpec  # re-exported: the charts' one import
from stetline.chartspecs import ranking_spec as ranking_spec
from stetline.chartspecs import series_spec as series_spec

FORMATS = ("svg", "png")
CACHE_SIZE = 1024
DISK_LIMIT = 5000  # files kept in a chart folder; the least recently used go first
DRAWING = "4"  # bump when the drawing changes, so files drawn by older code are not reused

FONT_SIZE = 10.5  # points, on a figure WIDTH inches wide: 11 px or more on a phone, 15 px on a wide screen
WIDTH = 4.4  # inches
PNG_DPI = 120  # Word prints a chart about 11.5 cm wide: 120 dots an inch is sharp at that size
PALETTE = 32  # colours of a PNG chart: its few inks and their anti-aliased edges
PAD = 4.0  # points of white round the drawing
GAP = 5.0  # points between a label and the axis it labels

INK, OTHER, GRID, MARK, AXIS, LABEL = "#1d1d1d", "#b9c2cc", "#e3e3e3", "#1f4e8c", "#555555", "#333333"

_RC: Any = {"svg.fonttype": "none", "text.parse_math": False, "text.usetex": False,
                       "font.family": ["DejaVu Sans"], "font.size": FONT_SIZE, "path.simplify": True}


@lru_cache(maxsize=4096)
def _text_size(text: str, bold: bool = False) -> tuple[float, float]:
    """The width and height of a line of text in points, as matplotlib lays it out."""
    from matplotlib.backends.backend_agg import RendererAgg
    from matplotlib.font_manager import FontProperties

    prop = FontProperties(family=_RC["font.family"], size=FONT_SIZE, weight="bold" if bold else "normal")
    width, height, _descent = RendererAgg(1, 1, 72).get_text_width_height_descent(text, prop, ismath=False)
    return float(width), float(height)


def _widest(texts: Iterable[str], bold: bool = False) -> float:
    return max((_text_size(t, bold)[0] for t in texts), default=0.0)


_canvases: dict[str, tuple[Any, Any]] = {}


def _canvas(kind: str, height: float) -> tuple[Any, Any]:
    """The kept Figure and axes of a chart kind, cleared of the last drawing and sized."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    if kind not in _canvases:
        fig = Figure(figsize=(WIDTH, height), dpi=100)
        FigureCanvasAgg(fig)
        ax = fig.add_axes((0, 0, 1, 1))
        ax.set_axis_off()
        _canvases[kind] = fig, ax
    fig, ax = _canvases[kind]
    for artist in [*ax.lines, *ax.collections, *ax.texts, *ax.patches, *fig.texts]:
        artist.remove()
    fig.set_dpi(100)
    fig.set_size_inches(WIDTH, height)
    return fig, ax


def figure(spec: ChartSpec) -> Any:
    """Draw a spec and return its matplotlib Figure (kept per chart kind: the next drawing reuses it)."""
    import matplotlib

    with matplotlib.rc_context(_RC):
        line = _text_size("0")[1]
        if spec.kind == "series":
            fig, ax = _canvas("series", 2.4)
            _draw_series(fig, ax, spec, line)
        elif len(spec.bars) > MANY:
            named = any(k == spec.marked for k, *_r in spec.bars)
            fig, ax = _canvas("strip", 1.9 if named else 2.5)
            _draw_strip(fig, ax, spec, line)
        else:
            height = (2 * PAD + 2.5 * line + GAP + (1.3 * line if spec.unit_label else 0)) / 72
            fig, ax = _canvas("ranking", height + 0.19 * max(len(spec.bars), 3))
            _draw_bars(fig, ax, spec, line)
    return fig


def _span(lo: float, hi: float) -> tuple[float, float]:
    """The limits of a value axis, widened when every value is the same (an axis needs a length)."""
    if hi > lo:
        return lo, hi
    pad = abs(lo) * 0.1 or 1.0
    return lo - pad, hi + pad


def _place(fig: Any, ax: Any, left: float, bottom: float, right: float, top: float) -> None:
    """Put the plotting area inside the figure with margins given in points."""
    w, h = fig.get_size_inches() * 72
    ax.set_position((left / w, bottom / h, 1 - (left + right) / w, 1 - (bottom + top) / h))


def _offset(ax: Any, transform: Any, x: float, y: float) -> Any:
    from matplotlib.transforms import offset_copy

    return offset_copy(transform, fig=ax.figure, x=x, y=y, units="points")


def _grid(ax: Any, spec: ChartSpec, axis: str, span: tuple[float, float]) -> None:
    """Grid lines at the value ticks, and their labels beside the plotting area."""
    from matplotlib.collections import LineCollection

    if axis == "y":
        segments = [[(span[0], t), (span[1], t)] for t, _s in spec.ticks]
        place = _offset(ax, ax.get_yaxis_transform(), -GAP, 0)
        for t, s in spec.ticks:
            ax.text(0, t, s, transform=place, ha="right", va="center", color=LABEL)
        if spec.unit_label:
            ax.text(0, 1, spec.unit_label, transform=_offset(ax, ax.transAxes, 0, GAP), ha="left", va="bottom",
                    color=LABEL)
    else:
        segments = [[(t, span[0]), (t, span[1])] for t, _s in spec.ticks]
        place = _offset(ax, ax.get_xaxis_transform(), 0, -GAP)
        for t, s in spec.ticks:
            ax.text(t, 0, s, transform=place, ha="center", va="top", color=LABEL)
        if spec.unit_label:
            line = _text_size("0")[1]
            ax.text(0.5, 0, spec.unit_label, transform=_offset(ax, ax.transAxes, 0, -GAP - 1.3 * line),
                    ha="center", va="top", color=LABEL)
    ax.add_collection(LineCollection(segments, colors=GRID, linewidths=0.8, zorder=0), autolim=False)


def _draw_series(fig: Any, ax: Any, spec: ChartSpec, line: float) -> None:
    from matplotlib.collections import LineCollection

    xs = list(range(len(spec.periods)))
    left = PAD + _widest(s for _t, s in spec.ticks) + GAP
    right = PAD + _widest(spec.periods[-1:]) / 2
    slot = (WIDTH * 72 - left - right) / (len(xs) - 0.4)  # points between two periods
    every = max(1, math.ceil((_widest(spec.periods) + 2 * GAP) / slot))  # labels never touch
    shown = [(x, p) for x, p in zip(xs, spec.periods) if (len(xs) - 1 - x) % every == 0]  # the latest always
    mine = next(ln for ln in spec.lines if ln[0] == spec.marked)
    rows = _key_rows(mine[1], spec.others, line)
    top = PAD + 1.3 * line * rows + 0.7 * line + (1.3 * line if spec.unit_label else 0)  # the key, the unit
    _place(fig, ax, left, PAD + line + GAP, right, top)
    known = [v for _k, _n, vs in spec.lines for v in vs if v is not None]
    lo, hi = _span(min([spec.ticks[0][0], *known]), max([spec.ticks[-1][0], *known]))
    ax.set_xlim(-0.3, len(xs) - 0.7)
    ax.set_ylim(lo, hi)
    _grid(ax, spec, "y", (-0.3, len(xs) - 0.7))
    if lo <= 0 <= hi:
        ax.plot([-0.3, len(xs) - 0.7], [0, 0], color=AXIS, linewidth=0.8)  # the zero line
    else:
        _broken_base(fig, ax)
    place = _offset(ax, ax.get_xaxis_transform(), 0, -GAP)
    for x, p in shown:
        ax.text(x, 0, p, transform=place, ha="center", va="top", color=LABEL)
    runs: list[list[tuple[float, float]]] = []  # every other entity's known values, as unbroken runs
    for key, _name, values in spec.lines:
        run: list[tuple[float, float]] = []
        for x, v in [*zip(xs, values), (0, None)] if key != spec.marked else []:
            if v is not None:
                run.append((x, v))
                continue
            if len(run) > 1:
                runs.append(run)
            run = []
    ax.add_collection(LineCollection(runs, colors=OTHER, linewidths=1), autolim=False)
    ys = [float("nan") if v is None else v for v in mine[2]]
    ax.plot(xs, ys, color=MARK, linewidth=2.4, marker="o", markersize=4)
    _key(fig, ax, mine[1], spec.others, line)


def _broken_base(fig: Any, ax: Any) -> None:
    """The foot of a value axis that does not start at zero: a zigzag at its left end, then the line, so
    that nobody reads the lowest grid line as zero (gid ``axis-break``, kept as an id in the SVG)."""
    w, h = fig.get_size_inches() * 72
    box = ax.get_position()
    across, up = w * box.width, h * box.height  # points across and up the plotting area
    zigzag = [(0, 0), (3, 0), (5, 3), (8, -3), (11, 3), (13, -3), (15, 0)]
    xs, ys = [x / across for x, _y in zigzag] + [1.0], [y / up for _x, y in zigzag] + [0.0]
    ax.plot(xs, ys, transform=ax.transAxes, color=AXIS, linewidth=0.8, clip_on=False, gid="axis-break")


def _key_rows(name: str, others: str, line: float) -> int:
    """How many rows the key takes: one, or two when both entries do not fit side by side."""
    wide = 20 + _widest([name], bold=True) + 12 + 20 + _widest([others])
    return 1 if not others or wide <= WIDTH * 72 - 2 * PAD else 2


def _key(fig: Any, ax: Any, name: str, others: str, line: float) -> None:
    """The key at the top left: the marked entity's line and name, then the grey lines' (below if need be)."""
    rows = _key_rows(name, others, line)
    entries = [(0.0, 0, name, MARK, 2.4, INK, "bold")]
    if others:
        start = 20 + _widest([name], bold=True) + 12 if rows == 1 else 0.0
        entries.append((start, rows - 1, others, OTHER, 1.2, LABEL, "normal"))
    for x, row, text, colour, width, ink, weight in entries:
        at = _offset(ax, fig.transFigure, PAD, -(PAD + (row + 0.5) * 1.3 * line))
        ax.add_collection(_segment(fig, at, x, x + 16, colour, width))
        ax.text(0, 1, text, transform=_offset(ax, at, x + 20, 0), va="center", color=ink, fontweight=weight)


def _segment(fig: Any, at: Any, x0: float, x1: float, colour: str, width: float) -> Any:
    """A short stroke of the key, from x0 to x1 points right of where ``at`` puts the figure's top left."""
    from matplotlib.collections import LineCollection

    w = fig.get_size_inches()[0] * 72  # points across the figure
    return LineCollection([[(x0 / w, 1), (x1 / w, 1)]], colors=colour, linewidths=width, clip_on=False,
                          transform=at)


def _draw_bars(fig: Any, ax: Any, spec: ChartSpec, line: float) -> None:
    from matplotlib.collections import PolyCollection

    names = [name for _k, name, _v, _s in spec.bars]
    values = [v for _k, _n, v, _s in spec.bars]
    marked = [name for k, name, _v, _s in spec.bars if k == spec.marked]
    left = PAD + max(_widest(names), _widest(marked, bold=True)) + GAP
    right = PAD + _widest(s for _t, s in spec.ticks[-1:]) / 2
    bottom = PAD + line + GAP + (1.3 * line if spec.unit_label else 0)
    _place(fig, ax, left, bottom, right, PAD + line / 2)
    lo, hi = _span(min([0.0, *values, *(t for t, _s in spec.ticks)]), max([*values, *(t for t, _s in spec.ticks)]))
    ax.set_xlim(lo, hi + (hi - lo) * 0.02)
    ax.set_ylim(len(names) - 0.5, -0.5)
    _grid(ax, spec, "x", (-0.5, len(names) - 0.5))
    ax.plot([0, 0], [-0.5, len(names) - 0.5], color=AXIS, linewidth=0.8)
    boxes = [[(0, i - 0.35), (v, i - 0.35), (v, i + 0.35), (0, i + 0.35)] for i, v in enumerate(values)]
    colours = [MARK if k == spec.marked else OTHER for k, _n, _v, _s in spec.bars]
    ax.add_collection(PolyCollection(boxes, facecolors=colours, linewidths=0), autolim=False)
    place = _offset(ax, ax.get_yaxis_transform(), -GAP, 0)
    for i, (key, name, _v, _s) in enumerate(spec.bars):
        mine = key == spec.marked
        ax.text(0, i, name, transform=place, ha="right", va="center", color=INK if mine else LABEL,
                fontweight="bold" if mine else "normal")


def _draw_strip(fig: Any, ax: Any, spec: ChartSpec, line: float) -> None:
    """Every entity as a dot on one value axis (rows alternate so neighbours stay apart), a few named."""
    values = [v for _k, _n, v, _s in spec.bars]
    bottom = PAD + line + GAP + (1.3 * line if spec.unit_label else 0)
    side = PAD + _widest(s for _t, s in (spec.ticks[0], spec.ticks[-1])) / 2
    _place(fig, ax, side, bottom, side, PAD)
    lo, hi = _span(min([*values, *(t for t, _s in spec.ticks)]), max([*values, *(t for t, _s in spec.ticks)]))
    ax.set_xlim(lo, hi)
    mine = [i for i, (k, *_r) in enumerate(spec.bars) if k == spec.marked]
    top = 5.6 if mine else 8.0  # room above the dots for one name, or for the first and the last
    ax.set_ylim(-0.6, top)
    _grid(ax, spec, "x", (-0.6, top))
    ax.plot([lo, hi], [-0.6, -0.6], color=AXIS, linewidth=0.8)
    rows = [i % 3 for i in range(len(values))]
    colours = [MARK if i in mine else OTHER for i in range(len(values))]
    sizes = [36 if i in mine else 16 for i in range(len(values))]
    ax.scatter(values, rows, s=sizes, c=colours, linewidths=0, clip_on=False)
    across = fig.get_size_inches()[0] * 72 * ax.get_position().width  # points across the plotting area
    for n, i in enumerate(dict.fromkeys(mine or [len(values) - 1, 0])):
        _k, name, v, shown = spec.bars[i]
        wide = _widest([name, shown], bold=True) / across * (hi - lo)  # the label's width in data units
        at = min(max(v - wide / 2, lo), hi - wide)  # centred on its dot, kept inside the plotting area
        ax.annotate(f"{name}\n{shown}", (v, rows[i]), xytext=(at, 3.3 + 2.4 * n), ha="left", va="bottom",
                    color=INK if i in mine else LABEL, fontweight="bold" if i in mine else "normal",
                    arrowprops={"arrowstyle": "-", "color": "#888888", "linewidth": 0.6, "shrinkA": 1, "shrinkB": 3})


_lock_draw = Lock()  # matplotlib's rc settings and the kept figures are shared: one drawing at a time


def _save(spec: ChartSpec, fmt: str) -> bytes:
    import matplotlib

    settings: Any = {**_RC, "svg.hashsalt": spec.digest}
    with _lock_draw, matplotlib.rc_context(settings):
        fig = figure(spec)
        buf = io.BytesIO()
        if fmt == "svg":
            fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Title": spec.title})
            return compact_svg(buf.getvalue())
        fig.set_dpi(PNG_DPI)
        fig.canvas.draw()
        _png(fig, buf)
    return buf.getvalue()


def _png(fig: Any, out: io.BytesIO) -> None:
    """The drawn figure as a PNG of PALETTE colours (a third of the full-colour size; charts have few colours)."""
    from PIL import Image

    size = fig.canvas.get_width_height(physical=True)
    image = Image.frombuffer("RGBA", size, fig.canvas.buffer_rgba()).convert("RGB")
    image.quantize(PALETTE, method=Image.Quantize.FASTOCTREE).save(out, format="png")


_PROLOG = re.compile(rb"\A.*?(?=<svg)", re.DOTALL)
_NOISE = re.compile(rb"<metadata>.*?</metadata>|<!--.*?-->", re.DOTALL)
_DIGITS = re.compile(rb"(?<![\d.])([1-9]\d*\.\d\d)\d+")  # coordinates; scales (0.085) kept whole
_SPACE = re.compile(rb"\s*\n\s*")


def compact_svg(svg: bytes) -> bytes:
    """The SVG without prolog, metadata, comments, line breaks and digits beyond a hundredth of a point."""
    svg = _NOISE.sub(b"", _PROLOG.sub(b"", svg))
    return _SPACE.sub(b" ", _DIGITS.sub(rb"\1", svg)).replace(b"> <", b"><").strip() + b"\n"


# -- the caches --------------------------------------------------------------------------------

_cache: OrderedDict[tuple[str, str], bytes] = OrderedDict()
_lock = Lock()
_folder: ContextVar[Path | None] = ContextVar("chart_folder", default=None)
_pruned: set[Path] = set()


@contextmanager
def folder(path: Path | None) -> Iterator[None]:
    """Keep the charts drawn inside this block as files in a folder too (made if missing; None: memory only)."""
    if path is not None:
        try:
            path.mkdir(mode=0o700, parents=True, exist_ok=True)  # private, like the database; made again if deleted
            if path not in _pruned:  # once a process: a page showing a chart stays quick
                _prune(path)
                _pruned.add(path)
        except OSError:
            path = None  # the folder is a cache: without it charts are drawn as before
    token = _folder.set(path)
    try:
        yield
    finally:
        _folder.reset(token)


def _prune(path: Path) -> None:
    """Remove the least recently used chart files beyond DISK_LIMIT."""
    files = [e for e in os.scandir(path) if e.is_file() and e.name.endswith(FORMATS)]
    if len(files) > DISK_LIMIT:
        files.sort(key=lambda e: e.stat().st_mtime)
        for entry in files[: len(files) - DISK_LIMIT]:
            Path(entry.path).unlink(missing_ok=True)


def _file(path: Path, spec: ChartSpec, fmt: str) -> Path:
    style = hashlib.blake2b(repr((DRAWING, sorted(_RC.items()), PNG_DPI, PALETTE, WIDTH)).encode(), digest_size=4)
    return path / f"{spec.digest}-{style.hexdigest()}.{fmt}"


def _read(path: Path | None, spec: ChartSpec, fmt: str) -> bytes | None:
    if path is None:
        return None
    file = _file(path, spec, fmt)
    try:
        data = file.read_bytes()
        os.utime(file)  # recently used
    except OSError:
        return None
    return data or None


def _write(path: Path | None, spec: ChartSpec, fmt: str, data: bytes) -> None:
    if path is None:
        return
    try:
        fd, temp = tempfile.mkstemp(dir=path, suffix=".part")
        with os.fdopen(fd, "wb") as out:
            out.write(data)
        os.replace(temp, _file(path, spec, fmt))  # a reader never sees half a file
    except OSError:
        pass  # the folder is a cache: a chart that cannot be kept is drawn again next time


def render(spec: ChartSpec, fmt: str) -> bytes:
    """The chart as SVG or PNG bytes, drawn once per process (and once per chart folder) for each digest."""
    if fmt not in FORMATS:
        raise ValueError(f"a chart is drawn as {' or '.join(FORMATS)}, not {fmt!r}")
    key = (spec.digest, fmt)
    with _lock:
        if key in _cache:
            _cache.move_to_end(key)
            return _cache[key]
    path = _folder.get()
    data = _read(path, spec, fmt)
    if data is None:
        data = _save(spec, fmt)
        _write(path, spec, fmt, data)
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
