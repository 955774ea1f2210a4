"""``trend`` (entity × topic): the run of the series up to the latest period.

Says how many periods in a row the value improved or worsened (rose or fell for neutral topics):
in years, quarters or months when every step of the run is one such period, else in readings
with the period the run started from ("at each of the three readings since 1992"). Says
whether the latest value is the highest or lowest since some earlier period, and the yearly rate
since the start of the series (or its last break), over the real time between the periods: the
compound annual growth rate for counts and amounts, the average yearly change in percentage
points for percentages. A quarter or a month sets a record only against the same quarter or month
of earlier years ("the highest third quarter since 2019"; seasons.py), read back year by year
until a year without a usable figure. A step is judged on its change as it would print; a break in series, a
missing value or a gap wider than the topic's usual spacing ends a run.

A quarter or a month counts its run against the comparison its change statement leads with: with
the ``compare_with`` setting at ``year-earlier`` (the default) and a change on a year earlier to
state, each period of the run is compared with the same period a year earlier ("worse than in the
same quarter a year earlier for three quarters in a row"); otherwise with the period before, said
plainly ("improved quarter on quarter for two quarters in a row"). A missing or absent period ends
either run. Its yearly rate runs between readings of the same season, whole years apart (never from
a first quarter to a third, which would read the season's swing as growth); none without one.

Claims: ``streak`` ("improved:3", "worsened:2", "rose:4", "fell:2" for runs of two or more
periods on the period before; "improved:3:readings" when counted in readings;
"worsened:3:year-earlier" when counted against the same period a year earlier; else "none"),
``record`` ("highest-on-record", "lowest-on-record", "highest-since:2021", "lowest-since:2021" or
"none"; for quarters and months against the same season: "highest-since:2019-Q3").
"""

from __future__ import annotations

from collections.abc import Iterator

import pandas as pd

from stetline import periods, phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.facts import trend_facts
from stetline.kinds.common import caveat, cell_wide, missing
from stetline.seasons import season_records, year_earlier_streaks

KIND = "trend"
PHRASINGS = 2
MIN_POINTS = 3  # a trend needs at least three values


def _labels_by_format(series: pd.DataFrame) -> dict[str, dict[float, str]]:
    """The label of each time, per period format (a workspace's topics may differ: 2025.0 is "2025"
    in a yearly topic and "2025-Q1" in a quarterly one)."""
    pairs = series[["time", "period"]].drop_duplicates()
    kinds = periods.classify(pairs["period"].astype("str"))
    out: dict[str, dict[float, str]] = {}
    for kind, time, label in zip(kinds, pairs["time"], pairs["period"]):
        out.setdefault(str(kind), {})[float(time)] = str(label)
    return out


def _period_word(period: str, n: int, natural: bool) -> str:
    """'years', 'quarters' or 'months' when the run steps one calendar period at a time, else 'readings'."""
    word = "quarter" if "-Q" in period else ("month" if "-" in period else "year")
    return phrasing.noun_plural(word if natural else "reading", n)


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One trend statement per entity × topic cell with at least three values since a break."""
    style = ctx.style
    cells = ctx.facts.cells
    trends = trend_facts(cells, ctx.facts.series)
    by_format = _labels_by_format(ctx.facts.series)
    seasons = season_records(cells, ctx.facts.series)
    yearly = year_earlier_streaks(cells, ctx.facts.series)
    ctx.write_values(cells["topic"], trends["first_value"])  # the series' first values, a column at a time
    for c, t, r, y in zip(cells.itertuples(index=False), trends.itertuples(index=False),
                          seasons.itertuples(index=False), yearly.itertuples(index=False)):
        if not c.usable or missing(t.points) or int(t.points) < MIN_POINTS:
            continue
        meta = ctx.topics[c.topic]
        wide = cell_wide(c) or ctx.wide(t.first_value)  # one form for the figures of a statement
        labels = by_format.get(periods.period_format(str(c.period)) or "", {})
        neutral = c.better == "neutral"
        value = float(c.value)
        season = ctx.when(c.period, "season")
        # the run is counted against the comparison the change statement leads with
        against = "year-earlier" if ctx.compare_with == "year-earlier" and y.year_state == "stated" else (
            "previous" if season else "")
        if against == "year-earlier":
            streak, up = int(y.year_streak), float(y.year_streak_sign) > 0
        else:
            streak, up = (0 if missing(t.streak) else int(t.streak)), (t.streak_sign or 0) > 0
        words = ("rose", "fell") if neutral else ("improved", "worsened")
        word = words[0] if up else words[1]
        record = "none"
        since = ""
        prev_time = None if missing(c.prev_time) else float(c.prev_time)
        if season:
            record, since = _season_record(r, float(c.time), labels)
        elif missing(t.higher_before):
            record, since = "highest-on-record", str(t.first_period)
        elif missing(t.lower_before):
            record, since = "lowest-on-record", str(t.first_period)
        elif prev_time is not None and float(t.higher_before) < prev_time:
            since = labels.get(float(t.higher_before), "")
            record = f"highest-since:{since}"
        elif prev_time is not None and float(t.lower_before) < prev_time:
            since = labels.get(float(t.lower_before), "")
            record = f"lowest-since:{since}"
        start_period, start_value, start_time = str(t.first_period), float(t.first_value), float(t.first_time)
        if season:  # a yearly rate between readings of the same season, whole years apart (none without one)
            based = not missing(r.season_base_time)
            start_time = float(r.season_base_time) if based else float(c.time)
            start_value = float(r.season_base_value) if based else value
            start_period = labels.get(start_time, "") if based else str(c.period)
        evidence = {
            "period": ev(c.period, str(c.period)),
            "value": ev(value, ctx.value(c.topic, value, wide)),
            "first_period": ev(start_period, start_period),
            "first_value": ev(start_value, ctx.value(c.topic, start_value, wide)),
            "streak": ev(streak, phrasing.count(streak, style)),
        }
        if since:
            evidence["record_since"] = ev(since, since)
            since = since[:4] if season else ctx.when(since)  # a season's record names the year only
        years = float(c.time) - start_time
        rate_text = ""
        if years > 0:
            if meta["unit"] == "percent":
                per_year = (value - start_value) / years
                evidence["yearly_change"] = ev(per_year, ctx.amount(c.topic, per_year, wide))
                if phrasing.round_half_up(abs(per_year), int(meta["decimals"])) == 0:
                    rate_text = "changed little on average"
                else:
                    moved = "risen" if per_year > 0 else "fallen"
                    rate_text = f"{moved} by an average of {evidence['yearly_change']['shown']} a year"
            elif start_value > 0 and value > 0:
                cagr = (value / start_value) ** (1 / years) - 1
                evidence["yearly_growth"] = ev(cagr, phrasing.relative(abs(cagr), style))
                shown = evidence["yearly_growth"]["shown"]
                rate_text = (
                    f"grown at a compound rate of {shown} a year" if cagr > 0
                    else f"fallen at a compound rate of {shown} a year"
                )
                if phrasing.round_half_up(abs(cagr), 3) == 0:  # prints as 0.0%
                    rate_text = "changed little on average"
        natural = bool(t.streak_natural) if not missing(t.streak_natural) else False
        run_since = "" if missing(t.streak_since) else labels.get(float(t.streak_since), "")
        if against == "year-earlier":  # every period of the run is one step after the last: no gap
            natural, run_since = True, ""
        # a run of readings further apart than the calendar's own step is counted in readings
        streak_claim = f"{word}:{streak}" if natural else f"{word}:{streak}:readings"
        if against == "year-earlier":
            streak_claim = f"{word}:{streak}:year-earlier"
        if streak >= 2 and not natural and run_since:
            evidence["streak_since"] = ev(run_since, run_since)
        claims = {
            "streak": streak_claim if streak >= 2 else "none",
            "record": record,
        }
        variables = {
            "name": ctx.name(c.entity), "prep": ctx.preposition, "label": ctx.label(c.topic),
            "lower_label": ctx.lower_label(c.topic),
            "period": ctx.when(c.period), "caveat": caveat(c.status), "streak": streak, "streak_word": word,
            "periods_word": _period_word(str(c.period), streak, natural), "natural": natural,
            "run_since": ctx.when(run_since), "season": season,
            "participle": {"rose": "risen", "fell": "fallen"}.get(word, word),
            "record": record.split(":")[0], "since": since, "rate_text": rate_text,
            "first_period": ctx.when(start_period), **_against_words(against, str(c.period), up, neutral),
        }
        # a run of quarters or months may end on a figure that is low for its season: "has risen for three
        # quarters in a row, to 216.39 points …, though that was the lowest third-quarter figure since 2007"
        value_up = up if c.better != "lower" else not up
        variables["contrary"] = streak >= 2 and record.startswith("lowest" if value_up else "highest")
        variables["season_adj"] = season.replace(" quarter", "-quarter")  # "third-quarter figure", "March figure"
        interest = 0.25 + 0.05 * min(streak, 5) + (0.25 if record != "none" else 0.0)
        yield Candidate(slot_id(KIND, c.entity, c.topic), KIND, c.entity, c.topic, evidence, claims, interest,
                        variables)


def _against_words(against: str, period: str, up: bool, neutral: bool) -> dict[str, str]:
    """What a run is counted against, as the templates say it.

    ``versus`` for a run against a year earlier ("worse than in the same quarter a year earlier");
    ``step_words`` for a quarter's or a month's run on the period before ("quarter on quarter").
    """
    unit = "quarter" if "-Q" in period else "month"
    if against == "year-earlier":
        word = ("higher" if up else "lower") if neutral else ("better" if up else "worse")
        return {"against": against, "versus": f"{word} than in the same {unit} a year earlier", "step_words": ""}
    if against == "previous":
        return {"against": against, "versus": "", "step_words": f"{unit} on {unit}"}
    return {"against": "", "versus": "", "step_words": ""}


def _season_record(r: object, now: float, labels: dict[float, str]) -> tuple[str, str]:
    """The record a quarter or a month sets against the same season of earlier years, and the period it names.

    On record: higher (lower) than every earlier reading of its season, at least two, back to the
    first; "since": higher (lower) than the year before at least, up to a reading at or above
    (below) it, all years between them having a figure. Else none.
    """
    readings = int(getattr(r, "season_readings"))
    higher, lower = getattr(r, "season_higher"), getattr(r, "season_lower")
    complete = bool(getattr(r, "season_complete"))
    first = getattr(r, "season_first")
    if readings >= 2 and complete and missing(higher):
        return "highest-on-record", labels.get(float(first), "")
    if readings >= 2 and complete and missing(lower):
        return "lowest-on-record", labels.get(float(first), "")
    if not missing(higher) and float(higher) < now - 1.5:
        return f"highest-since:{labels.get(float(higher), '')}", labels.get(float(higher), "")
    if not missing(lower) and float(lower) < now - 1.5:
        return f"lowest-since:{labels.get(float(lower), '')}", labels.get(float(lower), "")
    return "none", ""
