"""Periods of a series: parse the three formats (year, quarter, month) into ordered times.

A period is kept as the label the user wrote (``2025``, ``2025-Q1``, ``2025-03``); its time is a
float in years (``2025.0``, ``2025.25`` …) so that yearly rates use the real distance between two
periods of an unevenly spaced series.
"""

from __future__ import annotations

import re
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
    """Return the format name of every label in a column (empty string where none matches)."""
    import pandas as pd

    out = pd.Series("", index=labels.index, dtype="str")
    for name, pattern in FORMATS.items():
        out = out.mask(labels.str.match(pattern.pattern), name)
    return out


def times(labels: pd.Series, fmt: str) -> pd.Series:
    """Return the times of a column of labels that all share the format ``fmt``."""
    year = labels.str.slice(0, 4).astype("int64").astype("float64")
    if fmt == "year":
        return year
    if fmt == "quarter":
        return year + (labels.str.slice(-1).astype("int64") - 1) / 4
    return year + (labels.str.slice(5, 7).astype("int64") - 1) / 12
