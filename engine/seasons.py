"""Facts of quarterly and monthly series that respect the season (pandas; no loops over observations).

A quarter or a month is compared with the same quarter or month a year earlier as well as with the
previous period of its series, and its record is judged against the same quarter or month of
earlier years ("the highest third quarter since 2019"). A run of periods is counted against the same
comparison ("worse than in the same quarter a year earlier for three quarters in a row"), and a yearly
rate is taken between readings of the same season, whole years apart. Yearly series have none of
these: their rows here say ``none``. Nothing here formats text or touches the database.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from stetline.facts import BREAK, TIME_EPS, WITHHELD, compare, natural_step
from stetline.rounding import round_half_up_array

KEYS = ["entity", "topic"]


def _within_year(periods: pd.Series) -> pd.Series:
    """True where a period label is a quarter or a month."""
    return periods.astype("str").str.contains("-", regex=False)


def year_earlier_facts(cells: pd.DataFrame, series: pd.DataFrame) -> pd.DataFrame:
    """Per cell: the same quarter or month a year earlier and the change since it, indexed like ``cells``.

    ``year_state`` says what can be compared: ``stated`` (a change is given), ``none`` (a yearly
    series), ``current`` (the latest value is missing or withheld), ``missing`` or ``withheld``
    (no usable value a year earlier), ``break`` (the series breaks after the year-earlier period,
    up to and including the latest). A row a year earlier is never invented: a series without one
    says it is missing. The change columns are those of :func:`stetline.facts.compare`.
    """
    text = cells["period"].astype("str")
    within = _within_year(text)
    year_label = (text.str.slice(0, 4).where(within, "0").astype("int64") - 1).astype("str").str.zfill(4)
    year_label = (year_label + text.str.slice(4)).where(within)
    out = pd.DataFrame({"year_period": year_label, "year_time": cells["time"] - 1.0}, index=cells.index)
    found = cells[KEYS].assign(period=year_label).merge(
        series[KEYS + ["period", "value", "margin", "status", "usable"]], on=KEYS + ["period"], how="left",
    )
    found.index = cells.index
    usable = found["usable"].astype("boolean").fillna(False).astype("bool")
    out["year_value"] = found["value"].where(usable)
    out["year_margin"] = found["margin"].where(usable)
    # a break after the year-earlier period, up to the latest one, stops the comparison
    breaks = series.loc[series["status"] == BREAK, KEYS + ["time"]]
    span = cells[KEYS + ["time"]].reset_index().merge(breaks, on=KEYS, suffixes=("", "_break"))
    after_year = span["time_break"] > span["time"] - 1.0 + TIME_EPS
    inside = span.loc[after_year & (span["time_break"] <= span["time"] + TIME_EPS)]
    broken = pd.Series(cells.index.isin(inside["index"]), index=cells.index)
    state = np.select(
        [~within, ~cells["usable"].astype("bool"), broken, found["status"] == WITHHELD, ~usable],
        ["none", "current", "break", "withheld", "missing"], "stated",
    )
    out["year_state"] = state
    known = pd.Series(state == "stated", index=cells.index)
    compared = compare(cells, out["year_value"], out["year_margin"], known)
    return pd.concat([out, compared.add_prefix("year_")], axis=1)


def season_records(cells: pd.DataFrame, series: pd.DataFrame) -> pd.DataFrame:
    """Per cell of a quarterly or monthly series: the record its latest value sets among the same
    quarter or month of earlier years, indexed like ``cells``.

    Only the unbroken chain of yearly readings of that season ending a year before the latest is
    read (since the series' last break): a missing or withheld year ends it, so no record reaches
    across a year with no figure. ``season_higher`` (``season_lower``) is the time of the latest
    reading in that chain at or above (below) the latest value as shown; ``season_readings`` counts
    the chain; ``season_complete`` is true when the chain reaches back to the first reading of
    that season in the segment.
    """
    extra = cells[KEYS + ["decimals", "time"]].rename(columns={"time": "latest_time"})
    s = series.merge(extra, on=KEYS).sort_values(KEYS + ["time"], kind="stable")
    s = s.loc[_within_year(s["period"])].copy()
    s["segment"] = (s["status"] == BREAK).astype("int64").groupby([s["entity"], s["topic"]]).cumsum()
    s = s.loc[s["segment"] == s.groupby(KEYS)["segment"].transform("max")]
    s["season"] = s["period"].astype("str").str.slice(4)
    latest = s.loc[(s["time"] - s["latest_time"]).abs() < TIME_EPS]
    latest = latest.loc[latest["usable"].astype("bool")]
    same = s.merge(latest[KEYS + ["season", "value"]].rename(columns={"value": "latest_value"}), on=KEYS + ["season"])
    same = same.loc[same["time"] < same["latest_time"] - TIME_EPS]
    same = same.sort_values(KEYS + ["time"], ascending=[True, True, False], kind="stable")
    same["back"] = (same["latest_time"] - same["time"]).round().astype("int64")
    readings = same.loc[same["usable"].astype("bool")].copy()
    readings["position"] = readings.groupby(KEYS).cumcount() + 1
    readings["gap"] = (readings["back"] != readings["position"]).astype("int64").groupby(
        [readings["entity"], readings["topic"]]).cummax()
    chain = readings.loc[readings["gap"] == 0].copy()
    chain["shown"] = round_half_up_array(chain["value"], chain["decimals"])
    chain["latest_shown"] = round_half_up_array(chain["latest_value"], chain["decimals"])
    by = chain.groupby(KEYS)
    out = pd.DataFrame(index=pd.MultiIndex.from_frame(cells[KEYS]))
    out["season_higher"] = chain.loc[chain["shown"] >= chain["latest_shown"]].groupby(KEYS)["time"].max()
    out["season_lower"] = chain.loc[chain["shown"] <= chain["latest_shown"]].groupby(KEYS)["time"].max()
    out["season_readings"] = by.size()
    out["season_first"] = by["time"].min()
    earliest = same.groupby(KEYS)["time"].min()
    base = readings.loc[readings.groupby(KEYS)["time"].idxmin()].set_index(KEYS)
    out["season_base_time"] = base["time"]
    out["season_base_value"] = base["value"]
    out["season_complete"] = (out["season_first"] - earliest).abs() < TIME_EPS
    out = out.reindex(pd.MultiIndex.from_frame(cells[KEYS]))
    out["season_readings"] = out["season_readings"].fillna(0).astype("int64")
    out["season_complete"] = out["season_complete"].astype("boolean").fillna(False).astype("bool")
    out.index = cells.index
    return out


def year_earlier_streaks(cells: pd.DataFrame, series: pd.DataFrame) -> pd.DataFrame:
    """Per cell of a quarterly or monthly series: the run of periods, ending at the latest, in which the
    value moved the same way against the same period a year earlier, indexed like ``cells``.

    Every period of the series is compared with the same period a year earlier exactly as the
    change statement compares the latest one (:func:`year_earlier_facts`: as the change prints,
    beyond the margins when both readings carry them, never across a break nor from a missing or
    withheld figure). A period that cannot be compared, or one absent from the file (a gap),
    ends the run. ``year_streak`` counts the periods of the run (0 when the latest did not move
    or is no quarter or month); ``year_streak_sign`` is +1 when it improved (rose, for neutral
    topics) and -1 when it worsened (fell); ``year_state`` is the latest period's comparison state.
    """
    extra = cells[KEYS + ["decimals", "sign", "unit", "change_mode", "time"]].rename(columns={"time": "latest_time"})
    s = series.loc[_within_year(series["period"])].merge(extra, on=KEYS)
    s = s.loc[s["time"] <= s["latest_time"] + TIME_EPS].sort_values(KEYS + ["time"], kind="stable")
    s = s.reset_index(drop=True)
    years = year_earlier_facts(s, series)
    direction = np.where(s["sign"] == 0, 1.0, s["sign"])
    s["step"] = years["year_direction"].map({"up": 1.0, "down": -1.0}).fillna(0.0).astype("float64") * direction
    s["year_state"] = years["year_state"]
    by = s.groupby(KEYS, sort=False)
    apart = s["time"] - by["time"].shift(1)
    gap = ~((apart - natural_step(s["period"])).abs() < TIME_EPS)  # the first period, or one after a gap
    run_id = ((s["step"] != by["step"].shift(1)) | gap).cumsum()
    s["run"] = s.groupby(run_id).cumcount() + 1
    latest = s.loc[(s["time"] - s["latest_time"]).abs() < TIME_EPS].set_index(KEYS)
    out = pd.DataFrame(index=pd.MultiIndex.from_frame(cells[KEYS]))
    out["year_streak"] = latest["run"].where(latest["step"] != 0, 0)
    out["year_streak_sign"] = latest["step"]
    out["year_state"] = latest["year_state"]
    out = out.reindex(pd.MultiIndex.from_frame(cells[KEYS]))
    out["year_streak"] = out["year_streak"].fillna(0).astype("int64")
    out["year_streak_sign"] = out["year_streak_sign"].fillna(0.0).astype("float64")
    out["year_state"] = out["year_state"].fillna("none").astype("str")
    out.index = cells.index
    return out


#: the columns of a cell that say its change; ``leading_changes`` gives them for the comparison that leads
CHANGE_COLUMNS = ("change", "change_rel", "significant", "change_zero", "direction", "better_change")


def leading_changes(cells: pd.DataFrame, series: pd.DataFrame, compare_with: str) -> pd.DataFrame:
    """The cells' change columns for the comparison that leads, indexed like ``cells``.

    With ``compare_with`` = ``year-earlier``, a quarterly or monthly topic in which at least one
    cell has a year-earlier change is compared with the same period a year earlier (``prev_period``
    and ``prev_value`` that period and its value, ``change_known`` says where it is stated); every other topic keeps
    the previous period, as the change statement falls back to it. ``compared_with`` says which
    (``previous`` or ``year-earlier``) per cell.
    """
    out = cells[["topic", "change_known", "prev_period", "prev_value", *CHANGE_COLUMNS]].copy()
    out["compared_with"] = "previous"
    within = _within_year(cells["period"])
    if compare_with != "year-earlier" or not within.any():
        return out
    years = year_earlier_facts(cells, series)
    stated = (years["year_state"] == "stated") & within
    topics = set(cells.loc[stated, "topic"])
    rows = within & cells["topic"].isin(topics)
    out["change_known"] = stated.where(rows, out["change_known"]).astype("bool")
    out["prev_period"] = years["year_period"].where(rows, out["prev_period"])
    out["prev_value"] = years["year_value"].where(rows, out["prev_value"])
    for col in CHANGE_COLUMNS:
        out[col] = years[f"year_{col}"].where(rows, out[col])
    out.loc[rows, "compared_with"] = "year-earlier"
    return out


def topic_moves(lead: pd.DataFrame) -> pd.DataFrame:
    """Per topic of :func:`leading_changes`: how many cells improved, worsened and were compared, the
    mean change, and which comparison the topic uses."""
    known = lead.loc[lead["change_known"].astype("bool")]
    counts = known.groupby(["topic", "better_change"]).size().unstack(fill_value=0)
    out = pd.DataFrame(index=pd.Index(lead["topic"].unique(), name="topic"))
    for col in ("improved", "worsened"):
        out[col] = counts[col] if col in counts else 0
    out["compared"] = known.groupby("topic").size()
    out = out.fillna(0).astype("int64")
    out["mean_change"] = known.groupby("topic")["change"].mean().astype("float64")
    out["compared_with"] = lead.groupby("topic")["compared_with"].first()
    return out
