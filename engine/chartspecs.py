"""What a chart shows, as plain data: the series of a topic with one entity among all, or every entity ranked.

``series_spec`` and ``ranking_spec`` build a ChartSpec (labels, axis ticks in the house style,
values, and the caption that states the numbers, used as the text alternative); stetline.charts
draws it. Quarters and months are labelled in their short form on the axis, in the title and in the
figures' table ("Q3 2025", "Mar 2025") and in their long form in the caption, which is prose ("in
the third quarter of 2025"); both come from stetline.periods.period_label. Years print as written.
A spec's digest fingerprints everything drawn, so drawings are cached by it.
"""

from __future__ import annotations

import hashlib
import json
import re
from collections.abc import Callable
from dataclasses import asdict, dataclass, field
from functools import cached_property

from stetline import phrasing
from stetline.periods import period_label

Format = Callable[[float], str]
MANY = 40  # a ranking of more entities than this is a dot strip (bars would be too thin to read)
LONG_UNIT = 8  # units longer than this go on the axis label instead of every tick label
BLANK = 0.25  # a series axis that does not start at zero leaves at most this share of it blank below the data
MAX_TICKS = 7  # value ticks of a series chart: more would crowd its labels (the plotting area is ~1.5 in tall)


@dataclass(frozen=True)
class ChartSpec:
    """What one chart shows: its kind, title, axis unit, the values and the caption (text alternative)."""

    kind: str  # "series" or "ranking"
    title: str
    caption: str
    unit_label: str  # the unit as the axis shows it ("" when every tick label carries it)
    ticks: tuple[tuple[float, str], ...]  # value axis ticks and their labels (units included when short)
    periods: tuple[str, ...] = ()  # the x axis' labels, as printed ("Q3 2025")
    lines: tuple[tuple[str, str, tuple[float | None, ...]], ...] = ()  # key, name, value per period
    bars: tuple[tuple[str, str, float, str], ...] = ()  # key, name, value, shown; ranked, best first
    marked: str | None = None
    rows: tuple[tuple[str, str, bool], ...] = field(default=())  # the figures as a table: label, shown, marked
    others: str = ""  # the key's words for the grey lines of a series ("the other 13 towns")

    @cached_property
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


def _from_zero(lo: float, hi: float) -> bool:
    """True when a series' value axis should start at zero: the values are all of one sign and zero lies
    near enough that the data still fill at least half the axis, so their changes stay visible."""
    return (lo >= 0 and lo < hi - lo) or (hi <= 0 and -hi < hi - lo)


def _series_ticks(lo: float, hi: float) -> list[float]:
    """The ticks of a series' value axis: from zero when zero is near the data (``_from_zero``), otherwise
    from a round value just below the least value, so that the blank band under the lowest line takes
    at most BLANK of the axis (finer steps are tried, up to MAX_TICKS ticks, before a coarser one is kept)."""
    if _from_zero(lo, hi):
        return _nice_ticks(min(lo, 0.0), max(hi, 0.0))
    choices = [_nice_ticks(lo, hi, count) for count in (4, 5, 6)]
    for ticks in choices:
        bottom, top = ticks[0], max(ticks[-1], hi)
        if len(ticks) <= MAX_TICKS and lo - bottom <= BLANK * (top - bottom):
            return ticks
    return choices[0]


_WHOLE = re.compile(r"(?<=\d)\.0+(?!\d)")


def _labels(ticks: list[float], fmt: Format) -> list[str]:
    """The tick labels; when every tick is a whole number, without the ".0" the figures' decimals add."""
    labels = [fmt(t) for t in ticks]
    if all(t == int(t) and _WHOLE.search(label) for t, label in zip(ticks, labels)):
        return [_WHOLE.sub("", label, count=1) for label in labels]
    return labels


def _axis(values: list[float], unit: str, fmt: Format,
          series: bool = False) -> tuple[str, tuple[tuple[float, str], ...]]:
    """The unit label and the ticks of a value axis: short units on every tick, long ones on the axis."""
    lo, hi = min(values), max(values)
    ticks = _series_ticks(lo, hi) if series else _nice_ticks(
        min(lo, 0.0) if lo >= 0 and lo < (hi - lo) else lo, hi)
    labels = _labels(ticks, fmt)
    if len(unit) <= LONG_UNIT or unit in ("percent", "%"):
        return "", tuple(zip(ticks, labels))
    bare = [label.removesuffix(" " + unit) for label in labels]
    return unit, tuple(zip(ticks, bare))


def series_spec(label: str, unit: str, periods: list[str], lines: list[tuple[str, str, list[float | None]]],
                marked: str, fmt: Format, noun: str, locale: str = "en_GB") -> ChartSpec | None:
    """A topic's series over the periods, one line per entity, the marked entity drawn dark and labelled.

    ``periods`` are the labels as the data hold them ("2025-Q3"); ``locale`` is the house style's."""
    def short(p: str) -> str:
        return period_label(p, "short", locale)

    def long(p: str) -> str:
        return period_label(p, "long", locale)

    mine = next((ln for ln in lines if ln[0] == marked), None)
    known = [(p, v) for p, v in zip(periods, mine[2]) if v is not None] if mine else []
    values = [v for _k, _n, vs in lines for v in vs if v is not None]
    if mine is None or not known:
        return None
    name = mine[1]
    first, last = known[0], known[-1]
    if len(known) == 1:
        caption = f"{label} in {name}: {fmt(last[1])} in {long(last[0])}."
    else:
        how = "up from" if last[1] > first[1] else "down from" if last[1] < first[1] else "the same as"
        caption = f"{label} in {name}: {fmt(last[1])} in {long(last[0])}, {how} {fmt(first[1])} in {long(first[0])}."
    others = [vs[periods.index(last[0])] for k, _n, vs in lines if k != marked]
    others_known = [v for v in others if v is not None]
    if others_known:
        many = phrasing.noun_plural(noun, len(others_known))
        caption += (f" The other {len(others_known)} {many} ranged from {fmt(min(others_known))} "
                    f"to {fmt(max(others_known))} in {long(last[0])}.")
    unit_label, ticks = _axis(values, unit, fmt, series=True)
    rows = tuple((short(p), fmt(v), i == len(known) - 1) for i, (p, v) in enumerate(known))
    n_others = len(lines) - 1
    others_key = f"the other {n_others} {phrasing.noun_plural(noun, n_others)}" if n_others else ""
    return ChartSpec("series", f"{label} in {name}, {short(first[0])} to {short(last[0])}", caption, unit_label,
                     ticks, tuple(short(p) for p in periods), tuple((k, n, tuple(vs)) for k, n, vs in lines), (),
                     marked, rows, others_key)


def ranking_spec(label: str, unit: str, period: str, values: list[tuple[str, str, float]], marked: str | None,
                 fmt: Format, noun: str, better: str = "higher", locale: str = "en_GB") -> ChartSpec | None:
    """Every entity's value in one period as ranked bars (best first), the marked entity drawn dark.

    ``period`` is the label as the data hold it; the title shows its short form, the caption its long one."""
    if not values:
        return None
    ranked = sorted(values, key=lambda t: (t[2] if better == "lower" else -t[2], t[1]))
    n = len(ranked)
    many = phrasing.noun_plural(noun, n)
    top, bottom = ranked[0], ranked[-1]
    word = ("best", "worst") if better in ("higher", "lower") else ("highest", "lowest")
    caption = f"{label} in {period_label(period, 'long', locale)}, {n} {many} ranked: "
    caption += f"{word[0]} {top[1]} ({fmt(top[2])})"
    caption += f", {word[1]} {bottom[1]} ({fmt(bottom[2])})." if n > 1 else "."
    if marked is not None and any(k == marked for k, _n, _v in ranked):
        name, v = next((nm, v) for k, nm, v in ranked if k == marked)
        rank = 1 + sum(1 for *_k, other in ranked if (other < v if better == "lower" else other > v))
        caption += f" {name}: {fmt(v)}, {phrasing.ordinal(rank)} of {n}."
    drawn = [v for *_k, v in ranked]
    bars_from_zero = min(drawn) >= 0 and n <= MANY  # a dot strip spans the values only
    unit_label, ticks = _axis(drawn + [0.0] if bars_from_zero else drawn, unit, fmt)
    bars = tuple((k, nm, v, fmt(v)) for k, nm, v in ranked)
    rows = tuple((nm, shown, k == marked) for k, nm, _v, shown in bars)
    shown = period_label(period, "short", locale)
    return ChartSpec("ranking", f"{label}, {shown}: every {noun}", caption, unit_label, ticks,
                     (shown,), (), bars, marked, rows)
