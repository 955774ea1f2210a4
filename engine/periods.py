"""Periods of a series: parse the three formats (year, quarter, month) into ordered times.

A period is kept as the label the user wrote (``2025``, ``2025-Q1``, ``2025-03``); its time is a
float in years (``2025.0``, ``2025.25`` …) so that yearly rates use the real distance between two
periods of an unevenly spaced series.
"""

from __future__ import annotations

import re
from functools import lru_cache
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # pandas is imported where a frame is read: `stetline status` never needs it
    import pandas as pd

FORMATS: dict[str, re.Pattern[str]] = {
    "year": re.compile(r"^(\d{4})$"),
    "quarter": re.compile(r"^(\d{4})-Q([1-4])$"),
    "month": re.compile(r"^(\d{4})-(0[1-9]|1[0-2])$"),
}

EXAMPLES = {"year": "2025", "quarter": "2025-Q1", "month": "2025-03"}


def period_format(label: str) -> str | None:
    """Return the format name of a period label, or None when it matches none."""
    for name, pattern in FORMATS.items():
        if pattern.match(label):
            return name
    return None


def period_time(label: str) -> float:
    """Return the time of a period label in years (2025-Q2 is 2025.25)."""
    fmt = period_format(label)
    if fmt == "year":
        return float(label)
    if fmt == "quarter":
        return int(label[:4]) + (int(label[-1]) - 1) / 4
    if fmt == "month":
        return int(label[:4]) + (int(label[5:7]) - 1) / 12
    raise ValueError(f"not a period: {label!r}")


def classify(labels: pd.Series) -> pd.Series:
    """Return the format name of every label in a column (empty string where none matches).

    Each distinct label is matched once (an edition's column of many thousand labels holds a few
    dozen periods), then the names are spread back over the column.
    """
    import numpy as np
    import pandas as pd

    codes, _distinct = pd.factorize(labels, use_na_sentinel=False)
    firsts = labels.iloc[np.unique(codes, return_index=True)[1]]  # the first row of each label, in code order
    names = pd.Series("", index=firsts.index, dtype="str")
    for name, pattern in FORMATS.items():
        names = names.mask(firsts.str.match(pattern.pattern), name)
    return pd.Series(names.to_numpy()[codes], index=labels.index, dtype="str")


#: what an edition's format is called when its topics use more than one (each topic keeps one)
MIXED = "mixed"


def times(labels: pd.Series, fmt: str | None = None) -> pd.Series:
    """Return the times of a column of valid period labels (of the one format ``fmt`` when given;
    otherwise each label is read in its own format, as a workspace whose topics differ holds them)."""
    labels = labels.astype("str")
    year = labels.str.slice(0, 4).astype("int64").astype("float64")
    if fmt == "year":
        return year
    if fmt == "quarter":
        return year + (labels.str.slice(-1).astype("int64") - 1) / 4
    if fmt == "month":
        return year + (labels.str.slice(5, 7).astype("int64") - 1) / 12
    import pandas as pd

    kind = classify(labels)
    quarter = pd.to_numeric(labels.str.slice(-1).where(kind == "quarter"), errors="coerce").fillna(1)
    month = pd.to_numeric(labels.str.slice(5, 7).where(kind == "month"), errors="coerce").fillna(1)
    return year + (quarter - 1) / 4 + (month - 1) / 12


def latest_by_format(labels: pd.Series, times_: pd.Series) -> dict[str, str]:
    """The latest label of each format present (years first, then quarters, then months)."""
    kind = classify(labels.astype("str"))
    out: dict[str, str] = {}
    for name in FORMATS:
        mask = (kind == name).to_numpy()
        if mask.any():
            at = times_[mask].idxmax()
            out[name] = str(labels.at[at])
    return out


def lead_format(topics: pd.Series, labels: pd.Series) -> str:
    """The format most topics use (years before quarters before months on a tie); "" when none.

    An edition whose topics differ in format names its period by this one (its label, the
    headline's "in 2025"); each topic's own statements name its own periods.
    """
    import pandas as pd

    kind = classify(labels.astype("str"))
    per_topic = pd.DataFrame({"topic": topics.to_numpy(), "kind": kind.to_numpy()}).drop_duplicates("topic")
    counts = per_topic.loc[per_topic["kind"] != "", "kind"].value_counts()
    if counts.empty:
        return ""
    order = list(FORMATS)
    return str(max(counts.index, key=lambda k: (int(counts[k]), -order.index(str(k)))))


#: the quarters named as people say them ("the third quarter of 2025"); common practice of statistical releases
QUARTER_WORDS = ("first", "second", "third", "fourth")


def is_within_year(label: str) -> bool:
    """True for a quarter or a month: a period that has a same period a year earlier."""
    return period_format(label) in ("quarter", "month")


def year_earlier(label: str) -> str | None:
    """The same quarter or month a year earlier (2025-Q3 → 2024-Q3); None for a year or a non-period."""
    if not is_within_year(label):
        return None
    return f"{int(label[:4]) - 1:04d}{label[4:]}"


def _month_name(month: int, locale: str) -> str:
    from babel.dates import get_month_names

    return str(get_month_names("wide", "format", locale)[month])


def season_name(label: str, locale: str = "en_GB") -> str:
    """The quarter or month of a period without its year ("third quarter", "March"); "" for a year.

    Month names come from CLDR (Babel) in the house-style locale.
    """
    fmt = period_format(label)
    if fmt == "quarter":
        return f"{QUARTER_WORDS[int(label[-1]) - 1]} quarter"
    if fmt == "month":
        return _month_name(int(label[5:7]), locale)
    return ""


def period_name(label: str, locale: str = "en_GB") -> str:
    """A period as a sentence names it: "2025", "the third quarter of 2025", "March 2025"."""
    fmt = period_format(label)
    if fmt == "quarter":
        return f"the {season_name(label, locale)} of {label[:4]}"
    if fmt == "month":
        return f"{season_name(label, locale)} {label[:4]}"
    return label


#: the CLDR skeletons of the short forms (babel.dates.format_skeleton): "Q3 2025", "Mar 2025" in English
SHORT_SKELETONS = {"quarter": "yQQQ", "month": "yMMM"}


def period_label(label: str, form: str = "long", locale: str = "en_GB") -> str:
    """A period as it is printed: the one place that says how.

    ``short`` for tables, chart axes and headings ("Q3 2025", "Mar 2025": CLDR's own patterns, through
    Babel, in the house-style locale); ``long`` in prose ("the third quarter of 2025", "March 2025",
    :func:`period_name`). A year, or a label no format matches, is printed as written in both.
    """
    fmt = period_format(label)
    if fmt not in SHORT_SKELETONS:
        return label
    return period_name(label, locale) if form == "long" else _short(label, fmt, locale)


@lru_cache(maxsize=4096)
def _short(label: str, fmt: str, locale: str) -> str:
    """The short form of a quarter or a month, from CLDR (a report prints the same few many times)."""
    from datetime import date

    from babel.dates import format_skeleton

    month = (int(label[-1]) - 1) * 3 + 1 if fmt == "quarter" else int(label[5:7])
    return str(format_skeleton(SHORT_SKELETONS[fmt], date(int(label[:4]), month, 1), locale=locale))


def period_adjective(label: str, locale: str = "en_GB") -> str:
    """A period before a noun ("the 2025 figure", "the third-quarter 2025 figure", "the March 2025 figure")."""
    fmt = period_format(label)
    if fmt == "quarter":
        return f"{QUARTER_WORDS[int(label[-1]) - 1]}-quarter {label[:4]}"
    return period_name(label, locale)
