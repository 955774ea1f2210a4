"""Runs of quarters and months: counted against the comparison the change statement leads with.

A quarterly or monthly trend says how many periods in a row the value moved the same way. With
the ``compare_with`` setting at ``year-earlier`` (the default) each period of the run is compared
with the same period a year earlier, as the change statement beside it; otherwise with the period
before, and the words say so. A gap, a missing or withheld figure or a break ends a run; a yearly
rate runs between readings of the same season, whole years apart.

References:
- Eurostat Statistics Explained, glossary entries "Growth rate: quarter-on-quarter" and "Growth
  rate: year-on-year" (from memory): the quarter-on-quarter rate compares a quarter with the
  quarter before, (X_t / X_t-1) - 1; the year-on-year rate compares it with the same quarter of
  the previous year, (X_t / X_t-4) - 1 (for months, X_t-12), which removes the seasonal pattern.
  The ONS guidance on its quarterly releases reads a quarter "compared with the same quarter a
  year ago" in the same way (from memory). Whether a run of such comparisons reads across a gap or
  a break is our own rule, from DESIGN "Numbers and words" (a break in series stops a change;
  missing values are said to be missing, never treated as zero).
- Worked by hand from those definitions, in the comments beside ``test_worked_example_…``.
- A yearly rate between the same quarter of two years, whole years apart, is the year-on-year
  reading stretched over n years: (X_t / X_t-4n)^(1/n) - 1 (common practice: a compound annual
  growth rate; the season cancels only when both ends are the same season).
"""

from __future__ import annotations

import math

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_periods_compare import RATE, TONNES, draft, panel_frame, prints_as_zero

from stetline import periods, phrasing

# ---- the worked example -------------------------------------------------------------------------

#: an invented quarterly waste series (tonnes, lower is better) with a high third quarter each year
WORKED = [("a", "waste", label, value) for label, value in (
    ("2023-Q1", 100.0), ("2023-Q2", 104.0), ("2023-Q3", 130.0), ("2023-Q4", 106.0),
    ("2024-Q1", 98.0), ("2024-Q2", 101.0), ("2024-Q3", 126.0), ("2024-Q4", 103.0),
    ("2025-Q1", 96.0), ("2025-Q2", 99.0), ("2025-Q3", 121.0),
)]


def test_worked_example_a_run_against_the_same_quarter_a_year_earlier() -> None:
    out = draft(WORKED, TONNES, "quarter")
    trend, blurb = out["trend/a/waste"], out["blurb/a/waste"]
    # year on year (X_t / X_t-4 - 1), by hand: 2024-Q1 98/100 = -2.0%, Q2 101/104 = -2.9%, Q3 126/130 = -3.1%,
    # Q4 103/106 = -2.8%, 2025-Q1 96/98 = -2.0%, Q2 99/101 = -2.0%, Q3 121/126 = -4.0%: seven falls in a row,
    # each an improvement (less waste); 2023 has no year earlier, so the run starts in 2024-Q1
    assert trend.claims["streak"] == "improved:7:year-earlier"
    assert "better than in the same quarter a year earlier" in trend.text and "seven quarters" in trend.text
    # quarter on quarter, 96 → 99 → 121 are two rises (+3.1%, +22.2%), worse each time: the season's swing reads
    # the other way, which is why the run must say which comparison it counts
    previous = draft(WORKED, TONNES, "quarter", compare_with="previous")["trend/a/waste"]
    assert previous.claims["streak"] == "worsened:2" and "worsened quarter on quarter" in previous.text
    # the blurb's change leads with the same comparison as its run: the third quarter of 2024
    assert blurb.claims["trend.streak"] == "improved:7:year-earlier"
    assert "the third quarter of 2024" in blurb.text and "the second quarter of 2025" not in blurb.text
    assert "in a row" in blurb.text and "quarter on quarter" not in blurb.text
    # the yearly rate runs from the third quarter of 2023: (121 / 130)^(1/2) - 1 = -3.52%, shown as 3.5%
    assert trend.evidence["first_period"]["value"] == "2023-Q3"
    assert math.isclose(trend.evidence["yearly_growth"]["value"], (121 / 130) ** 0.5 - 1, abs_tol=1e-9)
    assert "Since the third quarter of 2023 it has fallen at a compound rate of 3.5% a year." in trend.text


def test_with_the_previous_quarter_leading_the_run_says_quarter_on_quarter() -> None:
    rows = [("a", "rate", f"{y}-Q{q}", 40.0 + 0.5 * (4 * (y - 2024) + q)) for y in (2024, 2025) for q in range(1, 5)]
    out = draft(rows, RATE, "quarter", compare_with="previous")
    trend, blurb = out["trend/a/rate"], out["blurb/a/rate"]
    assert trend.claims["streak"] == "improved:7"
    assert "improved quarter on quarter" in trend.text and "seven quarters" in trend.text
    assert "same quarter a year earlier" not in trend.text.split(". ")[0]
    assert blurb.claims["trend.streak"] == "improved:7" and "quarter on quarter" in blurb.text


def test_a_monthly_run_against_the_same_month_a_year_earlier_and_a_gap() -> None:
    # March is the peak; each month of 2025 is 2.0 above the same month of 2024 (a rate, higher is better)
    rows = [("a", "rate", f"{y}-{m:02d}", 40.0 + (10.0 if m == 3 else 0.0) + 2.0 * (y - 2024) + 0.1 * m)
            for y in (2024, 2025) for m in range(1, 7)]
    out = draft(rows, RATE, "month")
    assert out["trend/a/rate"].claims["streak"] == "improved:6:year-earlier"
    assert "the same month a year earlier" in out["trend/a/rate"].text and "six months" in out["trend/a/rate"].text
    # no row for April 2025: the run starts again in May
    gapped = [r for r in rows if r[2] != "2025-04"]
    assert draft(gapped, RATE, "month")["trend/a/rate"].claims["streak"] == "improved:2:year-earlier"


# ---- properties over generated quarterly and monthly panels ----------------------------------------

@st.composite
def drifting_panels(draw: st.DrawFn) -> dict:
    """A quarterly or monthly panel whose entities drift up or down with a season, with gaps, missing,
    withheld and broken readings, and margins on some."""
    rnd, fmt, per_year, labels, topic = panel_frame(draw, (3, 8))
    margins = rnd.random() < 0.25
    rows = []
    for e in range(draw(st.integers(2, 6))):
        base, drift = rnd.uniform(60, 100), rnd.choice([0.0, 0.3, -0.3, 0.8, -0.8])  # stays above zero
        season = [rnd.uniform(-5, 5) for _ in range(per_year)]
        for i, label in enumerate(labels):
            if rnd.random() < 0.05:
                continue  # a gap: no row
            value = base + drift * i + season[i % per_year] + rnd.choice([0.0, 0.0, 0.04, rnd.uniform(-2, 2)])
            status = rnd.choices(["", "break", "confidential"], [94, 3, 3])[0]
            shown = float("nan") if rnd.random() < 0.04 else round(value, 2)
            margin = rnd.uniform(0.1, 1.5) if margins else float("nan")
            rows.append((f"e{e}", "t", label, shown, margin, status))
    return {"rows": rows, "topic": topic, "fmt": fmt, "labels": labels}


def usable(r: tuple | None) -> bool:
    """A reading with a figure that may be shown."""
    return r is not None and not math.isnan(r[3]) and r[5] != "confidential"


def comparable(by_label: dict[str, tuple], now_label: str, before_label: str) -> bool:
    """Both readings usable, and no break after the earlier one up to and including the later one."""
    t_now, t_before = periods.period_time(now_label), periods.period_time(before_label)
    broken = any(r[5] == "break" and t_before < periods.period_time(r[2]) <= t_now for r in by_label.values())
    return usable(by_label.get(now_label)) and usable(by_label.get(before_label)) and not broken


def step(by_label: dict[str, tuple], now_label: str, before_label: str, meta: dict) -> int:
    """+1 when the value improved (rose, neutral) from one period to the other, -1 when it worsened (fell),
    0 when that cannot be said or is no change: as the change statement judges it."""
    if not comparable(by_label, now_label, before_label):
        return 0
    now, before = by_label[now_label], by_label[before_label]
    change = now[3] - before[3]
    flat = prints_as_zero(change, before[3], meta["unit"], meta["decimals"])
    if not math.isnan(now[4]) and not math.isnan(before[4]):
        flat = flat or abs(change) <= math.sqrt(now[4] ** 2 + before[4] ** 2)
    if flat:
        return 0
    return int(math.copysign(1, change)) * (-1 if meta["better"] == "lower" else 1)


def run(labels: list[str], by_label: dict[str, tuple], back: int, meta: dict) -> tuple[int, int]:
    """(length, sign) of the run of equal steps ending at the last label; ``back`` labels before each
    period is the one it is compared with (1: the period before; 4 or 12: a year earlier)."""
    signs = [step(by_label, labels[i], labels[i - back], meta) if i >= back else 0 for i in range(len(labels))]
    last = signs[-1]
    length = 0
    for s in reversed(signs):
        if s == 0 or s != last:
            break
        length += 1
    return length, last


def segment(rows: list[tuple]) -> list[tuple]:
    """The rows since the last break, the break included."""
    start = max((i for i, r in enumerate(rows) if r[5] == "break"), default=0)
    return rows[start:]


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(drifting_panels(), st.sampled_from(["year-earlier", "previous"]))
def test_runs_match_a_recomputation_against_the_comparison_that_leads(panel: dict, compare_with: str) -> None:
    meta, fmt = panel["topic"], panel["fmt"]
    out = draft(panel["rows"], meta, fmt, compare_with)
    latest = max((r[2] for r in panel["rows"]), key=periods.period_time)  # the edition's latest period
    labels = panel["labels"][:panel["labels"].index(latest) + 1]
    per_year = 4 if fmt == "quarter" else 12
    unit = "quarter" if fmt == "quarter" else "month"
    series: dict[str, list[tuple]] = {}
    for r in panel["rows"]:
        series.setdefault(r[0], []).append(r)
    for e, rows in series.items():
        by_label = {r[2]: r for r in rows}
        trend = out.get(f"trend/{e}/t")
        since_break = segment(rows)
        expected_present = usable(by_label.get(labels[-1])) and sum(usable(r) for r in since_break) >= 3
        assert (trend is not None) == expected_present, rows
        if trend is None:
            continue
        year_stated = len(labels) > per_year and comparable(by_label, labels[-1], labels[-1 - per_year])
        yearly = compare_with == "year-earlier" and year_stated  # as the change statement leads
        length, sign = run(labels, by_label, per_year if yearly else 1, meta)
        word = ("rose" if sign > 0 else "fell") if meta["better"] == "neutral" else (
            "improved" if sign > 0 else "worsened")
        claim = "none" if length < 2 else f"{word}:{length}" + (":year-earlier" if yearly else "")
        assert trend.claims["streak"] == claim, (trend.text, rows)
        # the words match the claim: the count, and which comparison the run is counted against
        first = trend.text.split(". ")[0]
        if length >= 2:
            assert f" {phrasing.count(length, phrasing.HouseStyle())} {unit}s" in first, trend.text
            assert (f"the same {unit} a year earlier" in first) == yearly, trend.text
            assert (f"{unit} on {unit}" in first) == (not yearly), trend.text
        assert " years in a row" not in trend.text and "last two years" not in trend.text
        # a yearly rate only between readings of the same season, whole years apart
        start = [r for r in since_break if usable(r) and r[2][4:] == labels[-1][4:] and r[2] != labels[-1]]
        rated = "yearly_change" in trend.evidence or "yearly_growth" in trend.evidence
        assert rated == bool(start), (trend.text, rows)
        if start:
            assert trend.evidence["first_period"]["value"] == start[0][2]
            years = int(labels[-1][:4]) - int(start[0][2][:4])
            now = by_label[labels[-1]][3]
            if "yearly_change" in trend.evidence:
                assert math.isclose(trend.evidence["yearly_change"]["value"], (now - start[0][3]) / years,
                                    abs_tol=1e-8)
            else:
                assert math.isclose(trend.evidence["yearly_growth"]["value"], (now / start[0][3]) ** (1 / years) - 1,
                                    abs_tol=1e-8)
            assert f"Since {periods.period_name(start[0][2])} it has" in trend.text or "Over that time" in trend.text
        # a blurb that states the run states the same claim in the same words
        blurb = out[f"blurb/{e}/t"]
        if "trend.streak" in blurb.claims:
            assert blurb.claims["trend.streak"] == claim
            if length >= 2:
                assert (f"the same {unit} a year earlier" in blurb.text) == yearly, blurb.text
                assert (f"{unit} on {unit}" in blurb.text) == (not yearly), blurb.text
