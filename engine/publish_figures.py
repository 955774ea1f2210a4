"""The figures a report prints beside its statements: each topic's values, ranks and changes, and its charts.

Read from the current edition's observations through the fact table (stetline.facts), so ranks
share ties and skip withheld values exactly as the statements do; written in the house style.
"""

from __future__ import annotations

import math
from typing import Any

import pandas as pd
from sqlalchemy.orm import Session

from stetline import charts, nesting, periods, phrasing
from stetline.facts import compute_facts
from stetline.phrasing import HouseStyle
from stetline.publication import Figures, TopicData
from stetline.store import ops


def _frames(session: Session) -> tuple[pd.DataFrame, pd.DataFrame, pd.DataFrame] | None:
    topics, entities = ops.topics_frame(session), ops.entities_frame(session)
    edition = ops.current_edition(session)
    if topics is None or entities is None or edition is None:
        return None
    obs = ops.observations_frame(session).drop(columns=["id"])
    if obs.empty:
        return None
    fmt = edition.period_format
    obs["time"] = periods.times(obs["period"], None if fmt == periods.MIXED else fmt)
    obs["status"] = obs["status"].fillna("")
    obs["row"] = range(2, len(obs) + 2)
    return obs, topics, entities


def _missing(x: Any) -> bool:
    return x is None or (isinstance(x, float) and math.isnan(x)) or x is pd.NA


def change_text(change: float, previous: float, unit: str, decimals: int, mode: str, style: HouseStyle,
                zero: bool) -> str:
    """A change with its sign, in the topic's proper unit: "+0.8 percentage points", "−4%", "no change"."""
    if zero:
        return "no change"
    size = phrasing.change_size(abs(change), previous, unit, decimals, mode, style)
    return ("+" if change > 0 else "−") + size


def topic_data(session: Session, style: HouseStyle, noun: str,
               level_nouns: tuple[str, ...] = ()) -> dict[str, TopicData]:
    """Every topic's periods, series, ranked latest values, figures and charts (topic order).

    ``level_nouns`` names an entity of each level, top first (the `level_nouns` setting): a district's
    series is drawn among the other districts and called so."""
    frames = _frames(session)
    if frames is None:
        return {}
    obs, topics, entities = frames
    facts = compute_facts(obs, topics, entities)
    names = dict(zip(entities["entity"], entities["name"]))
    order = {k: i for i, k in enumerate(entities["entity"])}
    out: dict[str, TopicData] = {}
    series = facts.series
    for meta in topics.itertuples(index=False):
        key, unit, decimals = str(meta.topic), str(meta.unit), int(meta.decimals)
        mode = "" if _missing(getattr(meta, "change", "")) else str(getattr(meta, "change", "") or "")
        rows = series.loc[series["topic"] == key]
        if rows.empty:
            continue
        spans = rows[["period", "time"]].drop_duplicates().sort_values("time", kind="stable")
        topic_periods = [str(p) for p in spans["period"]]
        at = {p: i for i, p in enumerate(topic_periods)}
        lines: dict[str, list[float | None]] = {}
        for r in rows.itertuples(index=False):
            values = lines.setdefault(str(r.entity), [None] * len(topic_periods))
            values[at[str(r.period)]] = float(r.value) if r.usable and not _missing(r.value) else None
        cells = facts.cells.loc[facts.cells["topic"] == key]

        def fmt(x: float, unit: str = unit, decimals: int = decimals) -> str:
            return phrasing.value(x, unit, decimals, style)

        figures: dict[str, Figures] = {}
        latest: list[tuple[str, float, float]] = []
        for c in cells.itertuples(index=False):
            entity = str(c.entity)
            usable = bool(c.usable) and not _missing(c.value)
            known = usable and bool(c.change_known)
            absent = "withheld" if c.status == "confidential" else "missing"
            prev_period = "" if _missing(c.prev_period) else str(c.prev_period)
            figures[entity] = Figures(
                str(c.period), fmt(float(c.value)) if usable else absent,
                None if _missing(c.rank) else int(c.rank), int(c.rank_of) if usable else None,
                change_text(float(c.change), float(c.prev_value), unit, decimals, mode, style, bool(c.change_zero))
                if known else "",
                fmt(float(c.prev_value)) if known else "", prev_period,
                periods.period_label(str(c.period), "short", style.locale),
                periods.period_label(prev_period, "short", style.locale))
            if usable and int(c.depth) == facts.main_depth:  # the topic ranks the main level: towns, not districts
                latest.append((entity, float(c.value), float(c.rank)))
        latest.sort(key=lambda t: (t[2], order.get(t[0], 0)))
        period = topic_periods[-1]
        label = str(meta.label)
        entry_lines = [(e, names.get(e, e), lines[e]) for e in sorted(lines, key=lambda e: order.get(e, 0))]
        depth_of = {str(c.entity): int(c.depth) for c in cells.itertuples(index=False)}
        data = TopicData(key, label, unit, str(meta.category or ""), str(meta.better), period, topic_periods,
                         lines, [(e, v) for e, v, _r in latest], figures,
                         period_shown=periods.period_label(period, "short", style.locale))
        data.ranking = charts.ranking_spec(label, unit, period, [(e, names.get(e, e), v) for e, v, _r in latest],
                                           None, fmt, noun, data.better, style.locale)
        for entity in lines:  # an entity's series among the entities of its own level
            depth = depth_of.get(entity, 0)
            level = [line for line in entry_lines if depth_of.get(line[0], 0) == depth]
            data.series_charts[entity] = charts.series_spec(label, unit, topic_periods, level, entity, fmt,
                                                            nesting.level_noun(level_nouns, depth, noun), style.locale)
        out[key] = data
    return out
