"""Breakdowns by group: the optional `breakdown`, `subgroup` and `share` columns of the observations.

A row with a `breakdown` (the grouping, such as ``age``) and a `subgroup` (one group of it, such
as ``65+``, named as written) holds the value of that subgroup; rows with an empty breakdown are
the totals every other kind reads. `share` (optional, per cent from 0 to 100) says how common the
subgroup is. This module checks those three columns and computes, per entity × topic ×
breakdown, the best and the worst subgroup and the gap between them (one vectorised pass). It
never reads files or touches the database.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from stetline.errors import Problem
from stetline.facts import WITHHELD, significance
from stetline.rounding import round_half_up_array

COLUMNS = ("breakdown", "subgroup", "share")
KEY = ["entity", "topic", "breakdown"]
MAX_SHOWN = 20  # how many bad cells of one kind a message lists
FORMULA_PREFIXES = ("=", "+", "@")


def _problems(file: str, frame: pd.DataFrame, column: str, mask: pd.Series, what: str,
              shown: str | None = None) -> list[Problem]:
    """One problem per marked row (capped), quoting the cell of ``shown`` (default: the column itself)."""
    hits = frame.index[mask.to_numpy()]
    quote = shown or column
    out = []
    for i in hits[:MAX_SHOWN]:
        text = str(frame.at[i, quote])
        out.append(Problem(file, int(i) + 2, column, f"{what}: {text if len(text) <= 40 else text[:40] + '…'!r}"))
    if len(hits) > MAX_SHOWN:
        out.append(Problem(file, None, column, f"… and {len(hits) - MAX_SHOWN} more such rows"))
    return out


def check(file: str, frame: pd.DataFrame) -> tuple[pd.DataFrame, list[Problem]]:
    """The breakdown, subgroup and share of every row (stripped; share a float), and what is wrong with them.

    ``frame`` holds the observations as read, every cell a string (an absent column as empty
    strings), its index the row number less two.
    """
    breakdown = frame["breakdown"].astype("str").str.strip()
    subgroup = frame["subgroup"].astype("str").str.strip()
    raw_share = frame["share"].astype("str").str.strip()
    cells = pd.DataFrame({"breakdown": breakdown, "subgroup": subgroup, "share": raw_share}, index=frame.index)
    total = breakdown == ""
    problems = _problems(file, cells, "breakdown", total & (subgroup != ""),
                         "a subgroup needs a breakdown (the grouping it belongs to, such as age); the subgroup is",
                         shown="subgroup")
    problems += _problems(file, cells, "subgroup", ~total & (subgroup == ""),
                          "a breakdown row needs a subgroup (such as 65+); the breakdown is", shown="breakdown")
    problems += _problems(file, cells, "breakdown", breakdown.str.contains("/", regex=False),
                          "a breakdown name may not contain '/' (it is part of the statement's id)")
    problems += _problems(file, cells, "breakdown", breakdown.str.startswith(FORMULA_PREFIXES),
                          "a breakdown name may not start with '=', '+' or '@' (a spreadsheet would read it "
                          "as a formula)")
    problems += _problems(file, cells, "breakdown", breakdown.str.len() > 200,
                          "the breakdown name is longer than 200 characters")
    empty = raw_share == ""
    share = pd.to_numeric(raw_share.where(~empty, None), errors="coerce").astype("float64")
    bad = ~empty & (share.isna() | ~share.abs().lt(float("inf")))
    problems += _problems(file, cells, "share", bad, "the share is not a number")
    problems += _problems(file, cells, "share", ~bad & ((share < 0) | (share > 100)),
                          "a share is a per cent of the whole, from 0 to 100")
    problems += _problems(file, cells, "share", ~empty & total,
                          "a share belongs to a subgroup, but this row has no breakdown (a total)")
    return pd.DataFrame({"breakdown": breakdown, "subgroup": subgroup, "share": share.where(~bad)}), problems


def breakdown_facts(breakdowns: pd.DataFrame, totals: pd.DataFrame, topics: pd.DataFrame) -> pd.DataFrame:
    """Per entity × topic × breakdown at its latest period: the best and worst subgroups and the gap.

    Best and worst follow the topic's ``better`` (neutral topics: highest and lowest); ties are
    lists of subgroups in file order. Withheld and missing values take no part; a breakdown with
    fewer than two subgroups holding a value gets no row. ``gap`` is best minus worst value (at
    least zero for higher-is-better and neutral topics, at most zero for lower-is-better ones);
    ``significant`` tests it against the margins of the first best and first worst subgroup by
    the method used for changes (stetline.facts.significance); ``largest`` is the subgroup with
    the largest share when every subgroup has one. ``total`` is the entity's own value (the row
    with no breakdown) in the same period.
    """
    columns = KEY + ["period", "time", "best", "worst", "best_value", "worst_value", "best_margin", "worst_margin",
                     "best_share", "worst_share", "gap", "gap_zero", "significant", "largest", "largest_share",
                     "subgroups", "total", "better", "sign"]
    if breakdowns is None or breakdowns.empty:
        return pd.DataFrame(columns=columns)
    meta = topics.set_index("topic")
    rows = breakdowns.loc[breakdowns["value"].notna() & (breakdowns["status"] != WITHHELD)].copy()
    rows["order"] = rows["subgroup"]  # ties listed by name: the same after a load and a redraft
    rows = rows.loc[rows["time"] == rows.groupby(KEY)["time"].transform("max")]
    sign = rows["topic"].map(meta["better"]).map({"higher": 1.0, "lower": -1.0, "neutral": 1.0}).fillna(1.0)
    rows["score"] = rows["value"] * sign
    by = rows.groupby(KEY, sort=True)
    rows["n"] = by["subgroup"].transform("size")
    rows = rows.loc[rows["n"] >= 2].sort_values(KEY + ["order"], kind="stable")
    if rows.empty:
        return pd.DataFrame(columns=columns)
    by = rows.groupby(KEY, sort=True)
    top = rows["score"] == by["score"].transform("max")
    bottom = rows["score"] == by["score"].transform("min")
    best, worst = rows.loc[top], rows.loc[bottom]
    out = by.agg(period=("period", "first"), time=("time", "first"), subgroups=("subgroup", "size"))
    out["best"] = best.groupby(KEY)["subgroup"].agg(list)
    out["worst"] = worst.groupby(KEY)["subgroup"].agg(list)
    # the first row of each, as it is (groupby.first would take each column's first non-empty value)
    first_best, first_worst = best.drop_duplicates(KEY).set_index(KEY), worst.drop_duplicates(KEY).set_index(KEY)
    out["best_value"], out["worst_value"] = first_best["value"], first_worst["value"]
    out["best_margin"], out["worst_margin"] = first_best["margin"], first_worst["margin"]
    out["best_share"], out["worst_share"] = first_best["share"], first_worst["share"]
    out["gap"] = out["best_value"] - out["worst_value"]
    out = out.reset_index()
    decimals = out["topic"].map(meta["decimals"]).astype("int64")
    out["gap_zero"] = round_half_up_array(out["gap"].abs(), decimals) == 0
    out["significant"] = significance(out["gap"], out["best_margin"], out["worst_margin"])
    shared = rows.loc[rows["share"].notna()]
    all_shared = by["share"].count() == by["subgroup"].size()
    largest = shared.loc[shared["share"] == shared.groupby(KEY)["share"].transform("max")].groupby(KEY)
    biggest = pd.DataFrame({"largest": largest["subgroup"].first(), "largest_share": largest["share"].first(),
                            "ties": largest.size()})
    biggest = biggest.loc[all_shared.reindex(biggest.index).fillna(False).astype("bool") & (biggest["ties"] == 1)]
    out = out.merge(biggest[["largest", "largest_share"]].reset_index(), on=KEY, how="left")
    if totals is not None and not totals.empty:
        usable = totals["value"].notna() & (totals["status"] != WITHHELD)
        own = totals.loc[usable, ["entity", "topic", "period", "value"]]
        out = out.merge(own.rename(columns={"value": "total"}), on=["entity", "topic", "period"], how="left")
    else:
        out["total"] = np.nan
    out["better"] = out["topic"].map(meta["better"])
    out["sign"] = out["better"].map({"higher": 1.0, "lower": -1.0, "neutral": 0.0})
    out["largest"] = out["largest"].astype(object).where(out["largest"].notna(), None)
    return out[columns].reset_index(drop=True)


def unused(subgroups: pd.DataFrame, kinds: tuple[str, ...]) -> tuple[list[str], str]:
    """The breakdowns the data hold while the workspace does not draft the breakdown kind, and the
    `kinds` setting that would draft them (nothing when none, or when the kind is on)."""
    if subgroups is None or subgroups.empty or not kinds or "breakdown" in kinds:
        return [], ""
    return sorted(set(subgroups["breakdown"])), ",".join((*kinds, "breakdown"))


def suggestion(names: list[str], kinds: str) -> str:
    """The suggestion a load prints when its data hold breakdowns the workspace does not draft."""
    return (f"the data hold breakdowns by group ({', '.join(names)}), but the breakdown kind is off: to draft "
            f"them, run `stetline settings kinds {kinds}`, then `stetline redraft`")
