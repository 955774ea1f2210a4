"""Small inline SVG charts for the statement page, with their text alternatives.

The series chart draws one entity's values on one topic over the periods; the strip places every
entity's latest value on one axis and marks this statement's entity with its own shape and a
label, so it does not rest on colour. Each chart comes with a title, a one-sentence description
(the SVG's <desc> and the figure's caption) and its figures as rows for a table.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from stetline import phrasing

Format = Callable[[float], str]


@dataclass
class Chart:
    """Everything a template needs to draw one chart and say what it shows."""

    id: str
    title: str
    desc: str
    width: int
    height: int
    path: str = ""
    points: list[dict[str, object]] = field(default_factory=list)
    y_ticks: list[tuple[float, str]] = field(default_factory=list)
    x_labels: list[tuple[float, str]] = field(default_factory=list)
    rows: list[tuple[str, str, bool]] = field(default_factory=list)  # label, shown value, marked
    axis_y: float = 0.0
    left: float = 0.0
    right: float = 0.0


def _scale(lo: float, hi: float) -> tuple[float, float]:
    if hi == lo:
        pad = abs(hi) * 0.05 or 1.0
        return lo - pad, hi + pad
    pad = (hi - lo) * 0.12
    return lo - pad, hi + pad


def series_chart(label: str, name: str, periods: list[str], values: list[float | None], fmt: Format) -> Chart | None:
    """A line over the periods of one entity's values on one topic (None when nothing to draw)."""
    known = [(p, v) for p, v in zip(periods, values) if v is not None]
    if not known:
        return None
    width, height, left, right, top, bottom = 380, 170, 58, 18, 14, 30
    lo, hi = _scale(min(v for _p, v in known), max(v for _p, v in known))
    n = len(periods)
    step = (width - left - right) / max(n - 1, 1)

    def x(i: int) -> float:
        return left + (i * step if n > 1 else (width - left - right) / 2)

    def y(v: float) -> float:
        return top + (hi - v) / (hi - lo) * (height - top - bottom)

    chart = Chart("series-chart", f"{label} in {name}, {known[0][0]} to {known[-1][0]}", "", width, height,
                  axis_y=height - bottom, left=left, right=width - right)
    parts: list[str] = []
    for i, (p, v) in enumerate(zip(periods, values)):
        if v is None:
            continue
        parts.append(("M" if not parts else "L") + f"{x(i):.1f},{y(v):.1f}")
        chart.points.append({"x": round(x(i), 1), "y": round(y(v), 1), "label": p, "shown": fmt(v),
                             "last": i == n - 1})
        chart.rows.append((p, fmt(v), i == n - 1))
    chart.path = " ".join(parts)
    vmin, vmax = min(v for _p, v in known), max(v for _p, v in known)
    chart.y_ticks = [(round(y(vmax), 1), fmt(vmax))] + ([(round(y(vmin), 1), fmt(vmin))] if vmin != vmax else [])
    every = 1 if n <= 8 else max(1, n // 6)
    chart.x_labels = [(round(x(i), 1), p) for i, p in enumerate(periods) if i % every == 0 or i == n - 1]
    first, last = known[0], known[-1]
    if len(known) == 1:
        chart.desc = f"{label} in {name} was {fmt(last[1])} in {last[0]}."
    else:
        trend = "up from" if last[1] > first[1] else "down from" if last[1] < first[1] else "the same as"
        chart.desc = (f"{label} in {name}: {fmt(last[1])} in {last[0]}, {trend} {fmt(first[1])} in {first[0]}; "
                      f"lowest {fmt(vmin)}, highest {fmt(vmax)}.")
    return chart


def strip_chart(label: str, period: str, values: list[tuple[str, str, float]], marked: str | None,
                fmt: Format, noun: str) -> Chart | None:
    """Every entity's value in the latest period on one axis, the marked entity drawn as a diamond."""
    if not values:
        return None
    width, height, left, right = 380, 92, 22, 22
    lo, hi = _scale(min(v for *_k, v in values), max(v for *_k, v in values))

    def x(v: float) -> float:
        return left + (v - lo) / (hi - lo) * (width - left - right)

    axis = 58.0
    chart = Chart("strip-chart", f"{label}, {period}: every {noun}", "", width, height, axis_y=axis,
                  left=left, right=width - right)
    ordered = sorted(values, key=lambda t: -t[2])
    for key, name, v in ordered:
        chart.points.append({"x": round(x(v), 1), "y": axis, "label": name, "shown": fmt(v), "marked": key == marked})
        chart.rows.append((name, fmt(v), key == marked))
    chart.points.sort(key=lambda p: bool(p["marked"]))  # the marked one drawn last, on top
    vmin, vmax = ordered[-1][2], ordered[0][2]
    chart.x_labels = [(round(x(vmin), 1), fmt(vmin)), (round(x(vmax), 1), fmt(vmax))] if vmin != vmax else [
        (round(x(vmin), 1), fmt(vmin))]
    n = len(ordered)
    many = phrasing.noun_plural(noun, n)
    span = f"from {fmt(vmin)} ({ordered[-1][1]}) to {fmt(vmax)} ({ordered[0][1]})"
    if marked is not None and any(k == marked for k, _n, _v in ordered):
        rank = next(i for i, (k, _n, _v) in enumerate(ordered, 1) if k == marked)
        name, v = next((nm, v) for k, nm, v in ordered if k == marked)
        place = "the highest" if rank == 1 else "the lowest" if rank == n else f"the {phrasing.ordinal(rank)} highest"
        chart.desc = f"{name} ({fmt(v)}) is {place} of {n} {many} in {period}; values run {span}."
    else:
        chart.desc = f"{label} in {period} across {n} {many} runs {span}."
    return chart
