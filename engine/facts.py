"""The fact table of an edition: one vectorised pass over the observations (group-by, rank, shift).

Facts are numbers and labels computed from observations: each entity × topic cell's latest value,
previous value, change, rank, group mean, gap to target …; each topic's leaders and movement;
each entity's composite score. Nothing here loops over observations in Python, formats text or
touches the database.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from stetline import nesting, periods
from stetline.rounding import round_half_up_array

WITHHELD = "confidential"
BREAK = "break"


@dataclass
class Facts:
    """The facts of one edition.

    ``cells``: one row per entity × topic pair present in the observations, at the topic's latest
    period, ranked among the entities of its level (``depth``), with the comparison with its parent
    (``stetline.nesting.parent_facts``). ``topics``: one row per topic with the ranking and movement
    facts of the main level (the deepest with data); ``levels`` holds them for every level by depth.
    ``entities``: one row per entity with its composite score among its level. ``series``: the
    observations sorted by entity, topic and time, for statements about the run of a series. Rows
    of a breakdown by group never reach these: they are the totals only; ``breakdowns`` holds the
    facts of the subgroups. ``latest_period``: the latest period of the format most topics use (each
    topic keeps one format; a cell's own period is in ``cells``).
    """

    cells: pd.DataFrame
    topics: pd.DataFrame
    entities: pd.DataFrame
    series: pd.DataFrame
    latest_period: str
    levels: dict[int, pd.DataFrame] = field(default_factory=dict)
    main_depth: int = 0
    #: one row per entity × topic × breakdown with two subgroups or more (stetline.breakdowns)
    breakdowns: pd.DataFrame = field(default_factory=pd.DataFrame)


def _sign(better: pd.Series) -> pd.Series:
    return better.map({"higher": 1.0, "lower": -1.0, "neutral": 0.0}).astype("float64")


def compute_facts(
    observations: pd.DataFrame,
    topics: pd.DataFrame,
    entities: pd.DataFrame,
    earlier: pd.DataFrame | None = None,
) -> Facts:
    """Compute the fact table of an edition from validated observations and metadata.

    ``earlier`` holds the previous edition's observations (entity, topic, period, value); a
    previous-period value that differs from it is marked as revised.
    """
    obs = observations.sort_values(["entity", "topic", "time"], kind="stable").reset_index(drop=True)
    meta = topics.set_index("topic")
    groups = entities.set_index("entity")["group"]
    names = entities.set_index("entity")["name"]

    usable = obs["value"].notna() & (obs["status"] != WITHHELD)
    obs = obs.assign(usable=usable, shown_value=obs["value"].where(usable))
    keys = ["entity", "topic"]
    grouped = obs.groupby(keys, sort=False)
    obs["prev_period"] = grouped["period"].shift(1)
    obs["prev_time"] = grouped["time"].shift(1)
    obs["prev_value"] = grouped["shown_value"].shift(1)
    obs["prev_margin"] = grouped["margin"].shift(1)
    obs["prev_status"] = grouped["status"].shift(1)

    topic_latest = obs.groupby("topic")["time"].max()
    obs["topic_time"] = obs["topic"].map(topic_latest)
    latest_rows = obs.loc[obs["time"] == obs["topic_time"]]

    cells = obs[keys].drop_duplicates().reset_index(drop=True)
    cells = cells.merge(latest_rows.drop(columns=["topic_time"]), on=keys, how="left")
    period_of_topic = obs.loc[obs["time"] == obs["topic_time"]].groupby("topic")["period"].first()
    cells["period"] = cells["topic"].map(period_of_topic)
    cells["time"] = cells["topic"].map(topic_latest)
    cells["status"] = cells["status"].fillna("missing")
    cells.loc[cells["value"].isna() & (cells["status"] == ""), "status"] = "missing"
    cells["usable"] = cells["usable"].astype("boolean").fillna(False).astype("bool")
    cells["value"] = cells["shown_value"]

    cells["group"] = cells["entity"].map(groups).fillna("")
    cells["name"] = cells["entity"].map(names).fillna(cells["entity"])
    cells["decimals"] = cells["topic"].map(meta["decimals"]).astype("int64")
    cells["better"] = cells["topic"].map(meta["better"])
    cells["unit"] = cells["topic"].map(meta["unit"])
    cells["change_mode"] = cells["topic"].map(meta["change"]).fillna("") if "change" in meta else ""
    cells["target"] = cells["topic"].map(meta["target"])
    cells["sign"] = _sign(cells["better"])
    depth = nesting.depths(entities)
    cells["depth"] = cells["entity"].map(depth).fillna(0).astype("int64")
    if nesting.COLUMN in entities:
        parents = entities.set_index("entity")[nesting.COLUMN].astype("object")
        cells["parent"] = cells["entity"].map(parents).astype("object").fillna("").astype("str")
    else:
        cells["parent"] = ""

    _ranks(cells)
    _changes(cells)
    _revisions(cells, earlier)
    nesting.parent_facts(cells)
    main_depth = int(cells["depth"].max()) if len(cells) else 0
    levels = {int(d): _topic_facts(cells.loc[cells["depth"] == d], meta) for d in sorted(set(cells["depth"]))}
    topic_facts = levels.get(main_depth, _topic_facts(cells, meta))
    entity_facts = _entity_facts(cells, meta, entities)
    entity_facts["depth"] = entity_facts.index.map(depth).fillna(0).astype("int64")
    latest = ""
    if len(obs):  # the edition's period: the latest of the format most topics use
        lead = periods.lead_format(obs["topic"], obs["period"])
        latest = periods.latest_by_format(obs["period"], obs["time"]).get(lead, "")
    series = obs[["entity", "topic", "period", "time", "value", "margin", "status", "usable"]]
    return Facts(_plain_text(cells), topic_facts, entity_facts, series, latest, levels, main_depth)


def _plain_text(frame: pd.DataFrame) -> pd.DataFrame:
    """The frame with its text columns held as plain Python objects (same values, NaN for none).

    The kinds walk cells row by row (``itertuples``); a pandas string array hands out its items
    one method call at a time, an object array at C speed.
    """
    text = [c for c in frame.columns if isinstance(frame[c].dtype, pd.StringDtype)]
    if not text:
        return frame
    return frame.astype(dict.fromkeys(text, object))


def _ranks(cells: pd.DataFrame) -> None:
    """Competition ranks (1, 2, 2, 4), best first, among the entities of one level (like with like);
    neutral topics rank the highest first."""
    direction = cells["sign"].where(cells["sign"] != 0, 1.0)
    score = cells["value"].where(cells["usable"]) * direction
    cells["score"] = score
    level = [cells["topic"], cells["depth"]]
    by_topic = score.groupby(level)
    cells["rank"] = by_topic.rank(method="min", ascending=False)
    cells["rank_of"] = by_topic.transform("count").astype("int64")
    cells["worst_rank"] = score.groupby(level).rank(method="min", ascending=True)
    by_group = score.groupby(level + [cells["group"]])
    cells["group_rank"] = by_group.rank(method="min", ascending=False)
    cells["group_rank_of"] = by_group.transform("count").astype("int64")
    # direction-aware percentile: 1 for the best, 0 for the worst (0.5 when alone)
    span = (cells["rank_of"] - 1).where(cells["rank_of"] > 1)
    cells["percentile"] = (1 - (cells["rank"] - 1) / span).where(span.notna(), 0.5)
    cells.loc[cells["rank"].isna(), "percentile"] = np.nan
    cells["band"] = np.floor(4 * (cells["rank"] - 1) / cells["rank_of"].where(cells["rank_of"] > 0))
    value = cells["value"].where(cells["usable"])
    cells["group_mean"] = value.groupby(level + [cells["group"]]).transform("mean")
    cells["all_mean"] = value.groupby(level).transform("mean")
    cells["group_gap"] = cells["value"] - cells["group_mean"]
    cells["all_gap"] = cells["value"] - cells["all_mean"]
    cells["target_gap"] = cells["value"] - cells["target"]
    cells["best"] = cells["rank"] == 1
    cells["worst"] = (cells["worst_rank"] == 1) & (cells["rank_of"] > 1)


def printed_change_is_zero(change: pd.Series, change_rel: pd.Series, unit: pd.Series, decimals: pd.Series,
                           mode: pd.Series | str = "") -> pd.Series:
    """True where a change, rounded as the statement prints it, is zero (DESIGN "Numbers and words").

    Percent topics print the change in percentage points at the topic's decimals; other topics
    print the relative change in whole per cent from 10% and to one decimal below (the absolute
    change at the topic's decimals when there is no base to compare with); a topic's `change`
    column (``mode``) overrides either (figures.change_in). The change itself is rounded, never the
    two values it comes from.
    """
    points = ((mode == "absolute") | ((unit == "percent") & (mode != "relative"))) | change_rel.isna()
    absolute = round_half_up_array(change.abs(), decimals)
    # a relative change under 10% prints in per cent to one decimal: the fraction at three places
    relative = round_half_up_array(change_rel.abs().fillna(0.0), 3)
    zero = np.where(points.to_numpy(), absolute == 0, relative == 0)
    return pd.Series(zero & change.notna().to_numpy(), index=change.index)


def significance(difference: pd.Series, margin_a: pd.Series, margin_b: pd.Series) -> pd.Series:
    """Whether a difference of two values exceeds sqrt(m1² + m2²) of their margins (95% half-widths).

    DESIGN "Numbers and words": the one test of a change, and of a gap between two subgroups.
    NA where a margin or the difference is missing.
    """
    both = margin_a.notna() & margin_b.notna() & difference.notna()
    threshold = np.sqrt(margin_a ** 2 + margin_b ** 2)
    out = pd.Series(pd.NA, index=difference.index, dtype="boolean")
    out[both] = (difference.abs() > threshold)[both]
    return out


def compare(now: pd.DataFrame, before: pd.Series, before_margin: pd.Series, known: pd.Series) -> pd.DataFrame:
    """Compare each cell's value with an earlier value (the previous period, or a year earlier).

    ``now`` holds ``value``, ``margin``, ``sign``, ``unit`` and ``decimals``; ``known`` says where a
    comparison can be stated. Returns ``change``, ``change_rel``, ``significant`` (NA without
    margins), ``change_zero`` (the change prints as zero), ``direction`` (up, down, flat, unknown)
    and ``better_change`` (improved, worsened, steady, n/a), by the rules of DESIGN "Numbers and words".
    """
    out = pd.DataFrame(index=now.index)
    out["change"] = (now["value"] - before).where(known)
    base = before.abs()
    out["change_rel"] = (out["change"] / base).where(base > 0)
    significant = significance(out["change"], now["margin"], before_margin)
    significant[~known.astype("bool")] = pd.NA
    out["significant"] = significant
    out["change_zero"] = printed_change_is_zero(out["change"], out["change_rel"], now["unit"], now["decimals"],
                                                now["change_mode"])
    flat = out["change_zero"] | (significant.fillna(True) == False)  # noqa: E712
    step = np.where(flat, 0.0, np.sign(out["change"]))
    direction = pd.Series(np.select([step > 0, step < 0], ["up", "down"], "flat"), index=now.index)
    out["direction"] = direction.where(known, "unknown")
    moved = out["direction"].isin(["up", "down"])
    good = np.sign(out["change"]) * now["sign"] > 0
    out["better_change"] = np.select(
        [~known | (now["sign"] == 0), ~moved, good], ["n/a", "steady", "improved"], "worsened",
    )
    return out


def _changes(cells: pd.DataFrame) -> None:
    """Change since the previous period of the series, and whether it counts as a change."""
    has_prev = cells["prev_value"].notna() & cells["value"].notna() & cells["usable"]
    broken = cells["status"] == BREAK
    cells["change_known"] = has_prev & ~broken
    compared = compare(cells, cells["prev_value"], cells["prev_margin"], cells["change_known"])
    cells["change"] = compared["change"]
    cells["change_rel"] = compared["change_rel"]
    cells["years"] = cells["time"] - cells["prev_time"]
    for col in ("significant", "change_zero", "direction", "better_change"):
        cells[col] = compared[col]


def _revisions(cells: pd.DataFrame, earlier: pd.DataFrame | None) -> None:
    """Mark previous-period and current-period values that differ from the value the last edition held."""
    cells["revised_from"] = np.nan
    cells["value_revised_from"] = np.nan
    if earlier is None or earlier.empty:
        return
    # the current period's own value, when an earlier edition already held that period
    now = cells[["entity", "topic", "period", "value", "decimals"]].merge(
        earlier[["entity", "topic", "period", "value"]].rename(columns={"value": "held_value"}),
        on=["entity", "topic", "period"], how="left",
    )
    now_differs = now["held_value"].notna() & now["value"].notna() & (
        round_half_up_array(now["held_value"], now["decimals"]) != round_half_up_array(now["value"], now["decimals"])
    )
    cells["value_revised_from"] = now["held_value"].where(now_differs).to_numpy()
    held = earlier.rename(columns={"period": "prev_period", "value": "held_value"})
    held = held[["entity", "topic", "prev_period", "held_value"]]
    merged = cells[["entity", "topic", "prev_period", "prev_value", "decimals"]].merge(
        held, on=["entity", "topic", "prev_period"], how="left",
    )
    differs = merged["held_value"].notna() & (
        round_half_up_array(merged["held_value"], merged["decimals"])
        != round_half_up_array(merged["prev_value"], merged["decimals"])
    )
    cells["revised_from"] = merged["held_value"].where(differs).to_numpy()


def _topic_facts(cells: pd.DataFrame, meta: pd.DataFrame) -> pd.DataFrame:
    """Per topic: how many report, the best and worst entities, and how many moved which way."""
    usable = cells.loc[cells["usable"]]
    by = usable.groupby("topic")
    out = pd.DataFrame(index=meta.index)
    out["period"] = cells.groupby("topic")["period"].first()
    out["reporting"] = by.size()
    out["reporting"] = out["reporting"].fillna(0).astype("int64")
    out["best_value"] = by["score"].max() * usable.groupby("topic")["sign"].first().replace(0, 1)
    out["worst_value"] = by["score"].min() * usable.groupby("topic")["sign"].first().replace(0, 1)
    out["leaders"] = usable.loc[usable["best"]].groupby("topic")["entity"].agg(lambda s: sorted(s))
    out["laggards"] = usable.loc[usable["worst"]].groupby("topic")["entity"].agg(lambda s: sorted(s))
    out["mean"] = by["value"].mean()
    counts = cells.loc[cells["change_known"]].groupby(["topic", "better_change"]).size().unstack(fill_value=0)
    moves = cells.loc[cells["change_known"]].groupby(["topic", "direction"]).size().unstack(fill_value=0)
    for col in ("improved", "worsened", "steady"):
        out[col] = counts[col] if col in counts else 0
    for col in ("up", "down", "flat"):
        out[col] = moves[col] if col in moves else 0
    out[["improved", "worsened", "steady", "up", "down", "flat"]] = (
        out[["improved", "worsened", "steady", "up", "down", "flat"]].fillna(0).astype("int64")
    )
    out["compared"] = cells.loc[cells["change_known"]].groupby("topic").size()
    out["compared"] = out["compared"].fillna(0).astype("int64")
    out["mean_change"] = cells.loc[cells["change_known"]].groupby("topic")["change"].mean()
    for col in ("leaders", "laggards"):
        out[col] = out[col].apply(lambda v: v if isinstance(v, list) else [])
    return out


def composite_scores(cells: pd.DataFrame, meta: pd.DataFrame) -> pd.DataFrame:
    """Composite score per entity by the OECD/JRC Handbook (2008) min-max method, 0 to 100.

    Each non-neutral topic's latest values are rescaled to 0..1 over the range of the entities of
    the same level (lower-is-better topics inverted), weighted by the topic's weight (1 unless
    given), and averaged over the topics the entity reports; topics with no spread are left out.
    """
    if "depth" not in cells:
        cells = cells.assign(depth=0)
    use = cells.loc[cells["usable"] & (cells["sign"] != 0), ["entity", "topic", "value", "sign", "depth"]].copy()
    lo = use.groupby(["topic", "depth"])["value"].transform("min")
    hi = use.groupby(["topic", "depth"])["value"].transform("max")
    span = hi - lo
    use = use.loc[span > 0]
    lo, hi, span = lo[use.index], hi[use.index], span[use.index]
    norm = np.where(use["sign"] > 0, (use["value"] - lo) / span, (hi - use["value"]) / span)
    use["norm"] = norm
    use["weight"] = use["topic"].map(meta["weight"]).fillna(1.0).astype("float64")
    use["weighted"] = use["norm"] * use["weight"]
    by = use.groupby("entity")
    out = pd.DataFrame({
        "composite": 100 * by["weighted"].sum() / by["weight"].sum(),
        "composite_topics": by.size(),
    })
    level = by["depth"].first() if len(use) else pd.Series(dtype="int64")
    out["composite_rank"] = out["composite"].groupby(level).rank(method="min", ascending=False)
    out["composite_of"] = out["composite"].groupby(level).transform("count").astype("int64")
    return out


def _entity_facts(cells: pd.DataFrame, meta: pd.DataFrame, entities: pd.DataFrame) -> pd.DataFrame:
    """Per entity: composite score and rank, strongest and weakest topics, biggest moves."""
    present = entities.loc[entities["entity"].isin(set(cells["entity"]))].set_index("entity")
    out = present[["name", "group"]].join(composite_scores(cells, meta), how="left")
    rated = cells.loc[cells["percentile"].notna() & (cells["sign"] != 0)]
    rated = rated.assign(position=rated["topic"].map(meta["position"]))
    strongest = rated.sort_values(["percentile", "position"], ascending=[False, True]).groupby("entity").head(1)
    weakest = rated.sort_values(["percentile", "position"], ascending=[True, True]).groupby("entity").head(1)
    out["strongest"] = strongest.set_index("entity")["topic"]
    out["strongest_percentile"] = strongest.set_index("entity")["percentile"]
    out["weakest"] = weakest.set_index("entity")["topic"]
    out["weakest_percentile"] = weakest.set_index("entity")["percentile"]
    out["rated_topics"] = rated.groupby("entity").size()
    moves = biggest_moves(cells)
    out["improvement"] = moves["improvement"]
    out["setback"] = moves["setback"]
    out["topics"] = cells.groupby("entity").size()
    return out


def biggest_moves(cells: pd.DataFrame) -> pd.DataFrame:
    """Per entity: the topic of its biggest improvement and of its biggest setback, compared across
    topics as a share of the topic's range (from the cells' change columns, whichever comparison they hold)."""
    judged = cells["better_change"].isin(["improved", "worsened"])
    moved = cells.loc[cells["change_known"].astype("bool") & (cells["sign"] != 0) & judged]
    spread = cells.loc[cells["usable"]].groupby("topic")["value"].agg(lambda s: s.max() - s.min())
    size = (moved["change"].astype("float64") * moved["sign"]) / moved["topic"].map(spread).replace(0, np.nan)
    moved = moved.assign(size=size)
    moved = moved.loc[moved["size"].notna()]
    up = moved.loc[moved["size"] > 0].sort_values("size", ascending=False).groupby("entity").head(1)
    down = moved.loc[moved["size"] < 0].sort_values("size", ascending=True).groupby("entity").head(1)
    out = pd.DataFrame(index=pd.Index(cells["entity"].unique(), name="entity"))
    out["improvement"] = up.set_index("entity")["topic"]
    out["setback"] = down.set_index("entity")["topic"]
    return out


#: two times closer than this (in years) are the same distance apart (months are 1/12 of a year)
TIME_EPS = 1e-6


def natural_step(periods: pd.Series) -> pd.Series:
    """The step of a period label's own calendar, in years: 1 for years, 0.25 for quarters, 1/12 for months."""
    text = periods.astype("str")
    return pd.Series(np.select([text.str.contains("-Q"), text.str.contains("-")], [0.25, 1 / 12], 1.0),
                     index=periods.index)


def series_spacing(series: pd.DataFrame) -> pd.Series:
    """Per topic, the most common distance between consecutive readings (the smaller one on a tie)."""
    s = series.sort_values(["entity", "topic", "time"], kind="stable")
    step = s.groupby(["entity", "topic"], sort=False)["time"].diff().round(6)
    counts = pd.DataFrame({"topic": s["topic"], "step": step}).dropna().value_counts().reset_index(name="n")
    counts = counts.sort_values(["topic", "n", "step"], ascending=[True, False, True], kind="stable")
    return counts.drop_duplicates("topic").set_index("topic")["step"]


def trend_facts(cells: pd.DataFrame, series: pd.DataFrame) -> pd.DataFrame:
    """Per cell: the run of improvements or declines ending at the latest period, the record the
    latest value sets ("highest since 2021"), and the yearly rate since the series' last break.

    A step counts when its change, rounded as a change statement would print it, is not zero
    (and exceeds sqrt(m1² + m2²) when both readings carry margins). A break in series, a missing
    or withheld reading, or a step wider than the topic's usual spacing (a gap) ends a run.
    ``streak_natural`` is true when every step of the run is one period of the calendar (a year, a
    quarter, a month), so that the run may be said in years, quarters or months; ``streak_since``
    is the time of the reading the run starts from. Returns one row per entity × topic, indexed
    like ``cells``.
    """
    keys = ["entity", "topic"]
    extra = cells[keys + ["decimals", "sign", "time", "unit", "change_mode"]].rename(columns={"time": "latest_time"})
    s = series.merge(extra, on=keys).sort_values(keys + ["time"], kind="stable")
    s["spacing"] = s["topic"].map(series_spacing(series)).fillna(np.inf)
    s["prev_any_time"] = s.groupby(keys, sort=False)["time"].shift(1)
    s = s.loc[s["usable"] | (s["status"] == BREAK)].copy()
    # a break starts a new segment: nothing is compared across it
    s["segment"] = (s["status"] == BREAK).astype("int64").groupby([s["entity"], s["topic"]]).cumsum()
    s = s.loc[s["value"].notna()].copy()
    g = s.groupby(keys + ["segment"], sort=False)
    prev_value, prev_time, prev_margin = g["value"].shift(1), g["time"].shift(1), g["margin"].shift(1)
    distance = s["time"] - prev_time
    gap = prev_time.notna() & ((prev_time != s["prev_any_time"]) | (distance > s["spacing"] + TIME_EPS))
    change = s["value"] - prev_value
    rel = (change / prev_value.abs()).where(prev_value.abs() > 0)
    zero = printed_change_is_zero(change, rel, s["unit"], s["decimals"], s["change_mode"])
    within = change.abs() <= np.sqrt(s["margin"] ** 2 + prev_margin ** 2)
    moved = prev_value.notna() & ~gap & ~zero & ~within
    direction = np.where(s["sign"] == 0, 1.0, s["sign"])
    s["step"] = np.where(moved, np.sign(change) * direction, 0.0)
    s["distance"] = distance.where(moved)
    s["from_time"] = prev_time
    s["shown"] = round_half_up_array(s["value"], s["decimals"])
    run_id = (s["step"] != s.groupby(keys + ["segment"], sort=False)["step"].shift(1)).cumsum()
    runs = s.groupby(run_id)
    s["run"] = runs.cumcount() + 1
    s["run_since"] = runs["from_time"].transform("first")
    unit = natural_step(s["period"])
    s["run_natural"] = (
        ((runs["distance"].transform("max") - unit).abs() < TIME_EPS)
        & ((runs["distance"].transform("min") - unit).abs() < TIME_EPS)
    )
    last_segment = s.groupby(keys)["segment"].transform("max")
    seg = s.loc[s["segment"] == last_segment]
    latest = seg.loc[seg["time"] == seg["latest_time"]].set_index(keys)
    out = pd.DataFrame(index=pd.MultiIndex.from_frame(cells[keys]))
    out["streak"] = (latest["run"] * latest["step"].abs()).where(latest["step"] != 0, 0)
    out["streak_sign"] = latest["step"]
    out["streak_since"] = latest["run_since"].where(latest["step"] != 0)
    out["streak_natural"] = latest["run_natural"] & (latest["step"] != 0)
    first = seg.groupby(keys).first()
    out["first_period"] = first["period"]
    out["first_value"] = first["value"]
    out["first_time"] = first["time"]
    out["points"] = seg.groupby(keys).size()
    # records: the latest earlier period at or above (below) the latest value, by shown value
    joined = seg.merge(latest[["shown"]].rename(columns={"shown": "latest_shown"}).reset_index(), on=keys)
    earlier = joined.loc[joined["time"] < joined["latest_time"]]
    above = earlier.loc[earlier["shown"] >= earlier["latest_shown"]].groupby(keys)["time"].max()
    below = earlier.loc[earlier["shown"] <= earlier["latest_shown"]].groupby(keys)["time"].max()
    out["higher_before"] = above
    out["lower_before"] = below
    return _plain_text(out.reindex(pd.MultiIndex.from_frame(cells[keys])))
