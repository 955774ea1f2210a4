"""Read and validate an edition's input files: observations, topic and entity metadata.

Everything is checked before anything is written: the caller gets a :class:`Dataset` or a
:class:`~stetline.errors.ValidationError` listing every problem with its file, row and column.
Rows are numbered as a spreadsheet shows them: the header is row 1, the first data row is row 2.
Reading the files (CSV, XLSX, with their size checks) is ``stetline.inputfiles``; this module
checks what was read and returns frames; it never touches the database.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from stetline import breakdowns, nesting, periods
from stetline.errors import Problem, ValidationError
from stetline.inputfiles import Source, Table, read_tables

OBSERVATION_COLUMNS = ("entity", "topic", "period", "value")
OBSERVATION_OPTIONAL = ("margin", "status") + breakdowns.COLUMNS
TOPIC_COLUMNS = ("topic", "label", "unit", "better", "decimals", "category", "target")
TOPIC_OPTIONAL = ("weight", "source", "change", "label_in_sentence", "article")
ENTITY_COLUMNS = ("entity", "name", "group")
ENTITY_OPTIONAL: tuple[str, ...] = ("parent", "article")

#: the columns of Dataset.breakdowns
BREAKDOWN_FRAME = ["entity", "topic", "period", "value", "margin", "status", "time", "row", *breakdowns.COLUMNS]
STATUSES = ("final", "provisional", "estimated", "break", "confidential")
DIRECTIONS = ("higher", "lower", "neutral")
PERCENT = "percent"
MAX_DECIMALS = 6
MAX_SHOWN = 20  # how many bad values of one kind a message lists
FORMULA_PREFIXES = ("=", "+", "@")



@dataclass
class Dataset:
    """A validated edition: long-format observations plus the metadata given with them.

    ``observations`` has the columns entity, topic, period (labels as written), value and margin
    (floats, NaN when empty), status (empty string when final or unstated), time (the period as
    a float in years) and row (the row in the source file): the totals, rows with no breakdown.
    ``breakdowns`` holds the rows of subgroups, with the same columns plus breakdown, subgroup and
    share (float, NaN when empty). ``topics`` and ``entities`` are the metadata in force for this
    edition: the stored rows updated by any file given with it.
    """

    observations: pd.DataFrame
    topics: pd.DataFrame
    entities: pd.DataFrame
    period_format: str  # year, quarter or month when every topic shares it, else "mixed"
    files: list[str] = field(default_factory=list)
    breakdowns: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=BREAKDOWN_FRAME))

    @property
    def latest_periods(self) -> dict[str, str]:
        """The latest period label of each format the topics use ({"year": "2025", "quarter": "2025-Q3"})."""
        return periods.latest_by_format(self.observations["period"], self.observations["time"])

    @property
    def latest_period(self) -> str:
        """The latest period label of the format most topics use (the edition's period)."""
        return self.latest_period_of(self.latest_periods)

    def latest_period_of(self, latest_periods: dict[str, str]) -> str:
        """The edition's period, from what :attr:`latest_periods` gave (each goes through every observation)."""
        obs = self.observations
        return latest_periods[periods.lead_format(obs["topic"], obs["period"])]


def _check_columns(table: Table, required: Iterable[str], optional: Iterable[str]) -> list[Problem]:
    required, optional = tuple(required), tuple(optional)
    frame = table.frame
    frame.columns = [str(c).strip().lstrip("\ufeff") for c in frame.columns]
    problems: list[Problem] = []
    known = required + optional
    missing = [c for c in required if c not in frame.columns]
    if missing:
        problems.append(Problem(
            table.name, 1, None,
            f"missing column(s) {', '.join(missing)}; expected {', '.join(required)}"
            + (f" (optional: {', '.join(optional)})" if optional else ""),
        ))
    seen: set[str] = set()
    for col in frame.columns:
        if col in seen:
            problems.append(Problem(table.name, 1, col, "the column appears twice"))
        seen.add(col)
        if col not in known:
            hint = difflib.get_close_matches(col[:100], known, n=1)
            tip = f"; did you mean {hint[0]!r}?" if hint else f"; expected {', '.join(known)}"
            shown = col if len(col) <= 40 else col[:40] + "…"
            problems.append(Problem(table.name, 1, shown, f"unknown column{tip}"))
    if not problems and frame.empty:
        problems.append(Problem(table.name, None, None, "the file has a header but no rows"))
    return problems


def _rows(frame: pd.DataFrame, mask: pd.Series) -> list[int]:
    return [int(i) + 2 for i in frame.index[mask.to_numpy()][:MAX_SHOWN]]


def _bad_cells(table: Table, column: str, mask: pd.Series, what: str) -> list[Problem]:
    frame = table.frame
    hits = frame.index[mask.to_numpy()]
    problems = [
        Problem(table.name, int(i) + 2, column, f"{what}: {_quote(frame.at[i, column])}")
        for i in hits[:MAX_SHOWN]
    ]
    if len(hits) > MAX_SHOWN:
        problems.append(Problem(table.name, None, column, f"… and {len(hits) - MAX_SHOWN} more such rows"))
    return problems


def _quote(value: object) -> str:
    text = str(value)
    return repr(text if len(text) <= 40 else text[:40] + "…")


def _numeric(table: Table, column: str, allow_empty: bool, what: str) -> tuple[pd.Series, list[Problem]]:
    raw = table.frame[column].astype("str").str.strip()
    empty = raw == ""
    values = pd.to_numeric(raw.where(~empty, None), errors="coerce").astype("float64")
    bad = (~empty & (values.isna() | ~values.abs().lt(float("inf"))))
    problems = _bad_cells(table, column, bad, f"{what} is not a number")
    if not allow_empty:
        problems += _bad_cells(table, column, empty, f"{what} is empty")
    return values.where(~bad), problems


def _key_malformed(keys: pd.Series) -> pd.Series:
    """Which keys break a rule of their own (empty, a '/', a formula opener, too long)."""
    keys = keys.astype("str")
    return ((keys.str.strip() == "") | keys.str.contains("/", regex=False) | keys.str.startswith(FORMULA_PREFIXES)
            | (keys.str.len() > 200))


def _keys(table: Table, column: str) -> list[Problem]:
    keys = table.frame[column].astype("str")
    problems = _bad_cells(table, column, keys.str.strip() == "", "the key is empty")
    problems += _bad_cells(table, column, keys.str.contains("/", regex=False), "a key may not contain '/'")
    problems += _bad_cells(
        table, column, keys.str.startswith(FORMULA_PREFIXES),
        "a key may not start with '=', '+' or '@' (a spreadsheet would read it as a formula)",
    )
    problems += _bad_cells(table, column, keys.str.len() > 200, "the key is longer than 200 characters")
    return problems


def _duplicates(table: Table, columns: list[str], what: str) -> list[Problem]:
    frame = table.frame
    dup = frame.duplicated(subset=columns, keep="first")
    problems = []
    for i in frame.index[dup.to_numpy()][:MAX_SHOWN]:
        key = ", ".join(f"{c}={frame.at[i, c]!r}" for c in columns)
        first = frame.index[(frame[columns] == frame.loc[i, columns]).all(axis=1).to_numpy()][0]
        problems.append(Problem(table.name, int(i) + 2, None,
                                f"duplicate {what} ({key}); first at row {int(first) + 2}"))
    if int(dup.sum()) > MAX_SHOWN:
        problems.append(Problem(table.name, None, None, f"… and {int(dup.sum()) - MAX_SHOWN} more duplicate rows"))
    return problems


def _parse_observations(table: Table) -> tuple[pd.DataFrame | None, str, list[Problem], pd.DataFrame | None]:
    """The observations (None when any cell is wrong), the period format, the problems, and the
    entity and topic keys with their rows (None when the columns are wrong) for the name checks."""
    problems = _check_columns(table, OBSERVATION_COLUMNS, OBSERVATION_OPTIONAL)
    if problems:
        return None, "", problems, None
    frame = table.frame
    keys = pd.DataFrame({
        "entity": frame["entity"].astype("str"), "topic": frame["topic"].astype("str"),
        "row": frame.index.to_numpy() + 2,
    })
    for col in ("entity", "topic"):  # a malformed key is told once, as malformed, not also as unknown
        keys.loc[_key_malformed(keys[col]).to_numpy(), col] = ""
    for col in OBSERVATION_OPTIONAL:
        if col not in frame.columns:
            frame[col] = ""
    problems += _keys(table, "entity") + _keys(table, "topic")
    groups, p = breakdowns.check(table.name, frame)
    problems += p
    value, p = _numeric(table, "value", allow_empty=True, what="the value")
    problems += p
    margin, p = _numeric(table, "margin", allow_empty=True, what="the margin")
    problems += p
    problems += _bad_cells(table, "margin", margin < 0, "a margin (a 95% half-width) cannot be negative")
    status = frame["status"].astype("str").str.strip().str.lower()
    problems += _bad_cells(
        table, "status", ~status.isin(("",) + STATUSES),
        f"unknown status (expected empty or one of {', '.join(STATUSES)})",
    )
    period = frame["period"].astype("str").str.strip()
    fmt = periods.classify(period)
    problems += _bad_cells(
        table, "period", fmt == "",
        "not a period (expected a year like 2025, a quarter like 2025-Q1 or a month like 2025-03)",
    )
    problems += _mixed_formats(table, frame["topic"].astype("str"), period, fmt)
    used = sorted(set(fmt[fmt != ""]))
    chosen = used[0] if len(used) == 1 else (periods.MIXED if used else "")
    if not problems:
        frame["breakdown"], frame["subgroup"] = groups["breakdown"], groups["subgroup"]
        total = (groups["breakdown"] == "").to_numpy()
        problems += _duplicates(Table(table.name, frame.loc[total]), ["entity", "topic", "period"], "observation")
        problems += _duplicates(Table(table.name, frame.loc[~total]),
                                ["entity", "topic", "period", "breakdown", "subgroup"], "subgroup observation")
    if problems:
        return None, chosen, problems, keys
    out = pd.DataFrame({
        "entity": frame["entity"].astype("str"),
        "topic": frame["topic"].astype("str"),
        "period": period,
        "value": value,
        "margin": margin,
        "status": status.replace("final", ""),
        "time": periods.times(period, chosen if chosen != periods.MIXED else None),
        "row": frame.index.to_numpy() + 2,
        **{col: groups[col] for col in breakdowns.COLUMNS},
    })
    return out, chosen, [], keys


def _mixed_formats(table: Table, topic: pd.Series, period: pd.Series, fmt: pd.Series) -> list[Problem]:
    """One problem per topic whose periods are not all of one format, at the first row of each
    format other than the topic's most common one (a topic is all years, all quarters or all months)."""
    rows = pd.DataFrame({"topic": topic, "fmt": fmt, "period": period}).loc[fmt != ""]
    counts = rows.groupby(["topic", "fmt"], sort=False).size().reset_index(name="n")
    mixed = counts.loc[counts.duplicated("topic", keep=False)]
    order = {name: i for i, name in enumerate(periods.FORMATS)}
    problems: list[Problem] = []
    for key, group in mixed.groupby("topic", sort=False):
        group = group.assign(order=group["fmt"].map(order)).sort_values(["n", "order"], ascending=[False, True])
        chosen = str(group["fmt"].iloc[0])
        for other in group["fmt"].iloc[1:]:
            at = rows.index[((rows["topic"] == key) & (rows["fmt"] == other)).to_numpy()][0]
            problems.append(Problem(
                table.name, int(at) + 2, "period",
                f"topic {str(key)!r} mixes period formats: most of its rows are {chosen}s "
                f"(like {periods.EXAMPLES[chosen]}) but this one is a {other} ({period.loc[at]!r}); "
                "a topic's series must be all years, all quarters or all months",
            ))
        if len(problems) >= MAX_SHOWN:
            break
    return problems


def _parse_topics(table: Table) -> tuple[pd.DataFrame | None, list[Problem]]:
    problems = _check_columns(table, TOPIC_COLUMNS, TOPIC_OPTIONAL)
    if problems:
        return None, problems
    frame = table.frame
    for col in TOPIC_OPTIONAL:
        if col not in frame.columns:
            frame[col] = ""
    problems += _keys(table, "topic")
    better = frame["better"].astype("str").str.strip().str.lower()
    problems += _bad_cells(table, "better", ~better.isin(DIRECTIONS), "'better' must be higher, lower or neutral")
    decimals, p = _numeric(table, "decimals", allow_empty=False, what="decimals")
    problems += p
    problems += _bad_cells(
        table, "decimals",
        decimals.notna() & ((decimals % 1 != 0) | (decimals < 0) | (decimals > MAX_DECIMALS)),
        f"decimals must be a whole number from 0 to {MAX_DECIMALS}",
    )
    target, p = _numeric(table, "target", allow_empty=True, what="the target")
    problems += p
    weight, p = _numeric(table, "weight", allow_empty=True, what="the weight")
    problems += p
    problems += _bad_cells(table, "weight", weight <= 0, "a weight must be greater than zero")
    label = frame["label"].astype("str").str.strip()
    problems += _bad_cells(table, "label", label == "", "the label is empty")
    change = frame["change"].astype("str").str.strip().str.lower()
    problems += _bad_cells(table, "change", ~change.isin(("", "relative", "absolute")),
                           "'change' must be relative, absolute or empty")
    article = frame["article"].astype("str").str.strip().str.lower()
    problems += _bad_cells(table, "article", ~article.isin(("", "the", "none")), "'article' must be the, none or empty")
    in_sentence = frame["label_in_sentence"].astype("str").str.strip()
    if not problems:
        problems += _duplicates(table, ["topic"], "topic")
    if problems:
        return None, problems
    out = pd.DataFrame({
        "topic": frame["topic"].astype("str"),
        "label": label,
        "unit": frame["unit"].astype("str").str.strip(),
        "better": better,
        "decimals": decimals.astype("int64"),
        "category": frame["category"].astype("str").str.strip(),
        "target": target,
        "weight": weight.fillna(1.0),
        "source": frame["source"].astype("str").str.strip(),
        "position": range(len(frame)),
        "change": change,
        "label_in_sentence": in_sentence,
        "article": article,
    })
    return out, []


def _parse_entities(table: Table) -> tuple[pd.DataFrame | None, list[Problem]]:
    problems = _check_columns(table, ENTITY_COLUMNS, ENTITY_OPTIONAL)
    if problems:
        return None, problems
    frame = table.frame
    if "parent" not in frame.columns:
        frame["parent"] = ""
    if "article" not in frame.columns:
        frame["article"] = ""
    problems += _keys(table, "entity")
    name = frame["name"].astype("str").str.strip()
    problems += _bad_cells(table, "name", name == "", "the name is empty")
    article = frame["article"].astype("str").str.strip().str.lower()
    problems += _bad_cells(table, "article", ~article.isin(("", "the", "none")), "'article' must be the, none or empty")
    if not problems:
        problems += _duplicates(table, ["entity"], "entity")
    if problems:
        return None, problems
    out = pd.DataFrame({
        "entity": frame["entity"].astype("str"),
        "name": name,
        "group": frame["group"].astype("str").str.strip(),
        "position": range(len(frame)),
        "parent": frame["parent"].astype("str").str.strip(),
        "article": article,
    })
    return out, []


def _unknown_keys(
    obs: pd.DataFrame, column: str, known: Iterable[str], file: str, what: str,
) -> list[Problem]:
    known = list(known)
    known_set = set(known)
    unknown = obs.loc[~obs[column].isin(known_set) & (obs[column].str.strip() != "")]  # an empty key is told apart
    problems = []
    for key, rows in unknown.groupby(column, sort=True)["row"]:
        hint = difflib.get_close_matches(str(key), known, n=1, cutoff=0.5)
        tip = f"; did you mean {hint[0]!r}?" if hint else ""
        problems.append(Problem(
            file, int(rows.iloc[0]), column,
            f"{what} {str(key)!r} is not in the {what} metadata ({len(rows)} row(s)){tip}",
        ))
        if len(problems) >= MAX_SHOWN:
            break
    return problems


def _percent_range(obs: pd.DataFrame, topics: pd.DataFrame, file: str) -> list[Problem]:
    pct = set(topics.loc[topics["unit"] == PERCENT, "topic"])
    bad = obs["topic"].isin(pct) & ((obs["value"] < 0) | (obs["value"] > 100))
    return [
        Problem(file, int(r.row), "value",
                f"topic {r.topic!r} is in percent, so its values lie from 0 to 100: {r.value:g}")
        for r in obs.loc[bad].head(MAX_SHOWN).itertuples()
    ]


def load_dataset(
    observations: Source,
    topics: Source | None = None,
    entities: Source | None = None,
    *,
    known_topics: pd.DataFrame | None = None,
    known_entities: pd.DataFrame | None = None,
) -> Dataset:
    """Read and validate an edition's files; raise ValidationError listing every problem.

    ``topics`` and ``entities`` may be omitted when the workspace already holds metadata, given
    as ``known_topics`` / ``known_entities`` (frames shaped as this function returns them); new
    metadata files replace the stored rows they name and keep the others. An XLSX workbook may
    hold all three tables as sheets named observations, topics and entities.
    """
    problems: list[Problem] = []
    try:
        obs_t, topics_t, entities_t, files = read_tables(observations, topics, entities)
    except ValidationError:
        raise
    except FileNotFoundError as exc:
        raise ValidationError([Problem(Path(str(exc.filename)).name, None, None, "the file does not exist")]) from None
    except IsADirectoryError as exc:
        raise ValidationError([Problem(str(exc.filename), None, None, "this is a folder, not a file")]) from None
    obs, fmt, p, keys = _parse_observations(obs_t)
    problems += p
    topic_frame = entity_frame = None
    if topics_t is not None:
        topic_frame, p = _parse_topics(topics_t)
        problems += p
    if entities_t is not None:
        entity_frame, p = _parse_entities(entities_t)
        problems += p
    merged_topics = _merge(known_topics, topic_frame, "topic")
    merged_entities = _merge(known_entities, entity_frame, "entity")
    if keys is not None:  # the names are checked in the same round as the cells, so one pass lists all
        problems += _names_known(keys, obs_t.name, "topic", merged_topics, broken=topics_t is not None
                                 and topic_frame is None)
        problems += _names_known(keys, obs_t.name, "entity", merged_entities, broken=entities_t is not None
                                 and entity_frame is None)
    if obs is not None and merged_topics is not None and not problems:
        problems += _percent_range(obs, merged_topics, obs_t.name)
    if entity_frame is not None and merged_entities is not None and entities_t is not None:
        rows = {str(k): i + 2 for i, k in enumerate(entity_frame["entity"])}
        problems += nesting.parent_problems(merged_entities, entities_t.name, rows)
    total = obs["breakdown"] == "" if obs is not None else None
    if total is not None and not problems and not total.any():
        problems.append(Problem(obs_t.name, None, "breakdown", "every row belongs to a breakdown: give the totals "
                                "too (rows with an empty breakdown)"))
    if problems or obs is None or total is None:
        raise ValidationError(problems)
    assert merged_topics is not None and merged_entities is not None
    return Dataset(obs.loc[total].drop(columns=list(breakdowns.COLUMNS)), merged_topics, merged_entities, fmt, files,
                   obs.loc[~total, BREAKDOWN_FRAME].reset_index(drop=True))


def _names_known(keys: pd.DataFrame, file: str, what: str, meta: pd.DataFrame | None, *,
                 broken: bool) -> list[Problem]:
    """Problems for the observations' keys that the metadata does not name (none when its file is itself wrong)."""
    if broken:
        return []  # the metadata file's own problems are listed; its names cannot be trusted yet
    if meta is None:
        return [Problem(file, None, what, f"no {what} metadata: give {'an' if what == 'entity' else 'a'} "
                        f"{what}s file on the first load")]
    return _unknown_keys(keys, what, meta[what], file, what)


def _merge(known: pd.DataFrame | None, new: pd.DataFrame | None, key: str) -> pd.DataFrame | None:
    """Return stored metadata updated by a new file: new rows replace, the rest are kept."""
    if new is None:
        return known
    if known is None or known.empty:
        return new
    kept = known.loc[~known[key].isin(set(new[key]))]
    if "parent" in new.columns and "parent" not in kept.columns:
        kept = kept.assign(parent="")
    out = pd.concat([new, kept], ignore_index=True)
    out["position"] = range(len(out))
    return out
