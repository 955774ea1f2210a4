"""One rounding rule for what is shown and for whether a shown figure moved.

Outside reference: Python's standard library ``decimal`` module, ``Decimal(repr(x)).quantize(
Decimal(10) ** -decimals, rounding=ROUND_HALF_UP)`` (the Python documentation, "decimal: Decimal
fixed-point and floating-point arithmetic"): round half away from zero on the number as written.
"""

from __future__ import annotations

import decimal
import random
from decimal import ROUND_HALF_UP, Decimal

import numpy as np
import pandas as pd
import pytest

from stetline import periods, phrasing
from stetline.drafting import Context, draft_all
from stetline.facts import compute_facts
from stetline.kinds import change
from stetline.rendering import Renderer
from stetline.rounding import round_half_up, round_half_up_array


def reference(x: float, decimals: int) -> Decimal:
    """The outside reference: the decimal module, half-up, on the float's repr (digits enough for 1e300)."""
    wide = decimal.Context(prec=400)
    return Decimal(repr(x)).quantize(Decimal(10) ** -decimals, rounding=ROUND_HALF_UP, context=wide)


def test_five_million_and_a_half_cent_rounds_up_on_both_paths() -> None:
    # the float stored for 5000000.015 is a little below it; the figure as written is a half
    x = 5000000.015
    assert reference(x, 2) == Decimal("5000000.02")
    assert round_half_up(x, 2) == reference(x, 2)
    assert round_half_up_array([x], 2)[0] == float(reference(x, 2))
    assert phrasing.number(x, 2) == "5,000,000.02"


def _values() -> list[tuple[float, int]]:
    rng = random.Random(20250301)
    out: list[tuple[float, int]] = []
    for _ in range(20000):
        d = rng.randint(0, 4)
        k = rng.randint(-10 ** rng.randint(1, 9), 10 ** rng.randint(1, 9))
        out.append((float(f"{k}.{'0' * d}5"), d))  # a half as written, at every size
        out.append((round(rng.uniform(-1e5, 1e5), d + rng.randint(0, 3)), d))
        out.append((rng.uniform(-10, 10) * 10.0 ** rng.randint(-6, 17), d))
    return out + [(-0.04, 1), (0.05, 1), (-2.5, 0), (1e300, 2), (2.0**53 + 2, 1)]


def test_a_column_rounds_exactly_as_each_value_does() -> None:
    pairs = _values()
    got = round_half_up_array([x for x, _ in pairs], [d for _, d in pairs])
    wrong = [(x, d, g) for (x, d), g in zip(pairs, got, strict=True) if g != float(reference(x, d))]
    assert wrong == []
    assert not np.signbit(round_half_up_array([-0.04], 1)[0])  # a value shown as 0 has no sign


def test_a_missing_value_stays_missing() -> None:
    out = round_half_up_array(pd.Series([1.25, np.nan]), pd.Series([1, 1]))
    assert out[0] == 1.3 and np.isnan(out[1])


def test_refuses_negative_decimals() -> None:
    with pytest.raises(ValueError, match="decimals"):
        round_half_up_array([1.0], -1)


def _change_text(previous: float, latest: float, decimals: int) -> tuple[str, dict]:
    obs = pd.DataFrame({
        "entity": ["a", "a"], "topic": ["output", "output"], "period": ["2024", "2025"],
        "value": [previous, latest], "margin": [np.nan, np.nan], "status": ["", ""],
    })
    obs["time"] = periods.times(obs["period"], "year")
    obs["row"] = [2, 3]
    topics = pd.DataFrame([{"topic": "output", "label": "Output", "unit": "tonnes", "better": "higher",
                            "decimals": decimals, "category": "", "target": np.nan, "weight": 1.0,
                            "source": "", "position": 0}])
    entities = pd.DataFrame({"entity": ["a"], "name": ["Ashby"], "group": ["North"], "position": [0]})
    style = phrasing.HouseStyle()
    facts = compute_facts(obs, topics, entities)
    ctx = Context(facts, topics.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, "town")
    (draft,) = draft_all(ctx, Renderer(style), [change])
    return draft.text, draft.claims


def test_a_figure_shown_the_same_both_years_is_not_called_a_fall() -> None:
    # 5000000.015 is shown as 5,000,000.02 (the reference above), the same as the year before:
    # the statement says unchanged, not "fell" between two equal figures
    text, claims = _change_text(5000000.02, 5000000.015, 2)
    assert text == "Output in Ashby was unchanged at 5,000,000.02 tonnes in 2025."
    assert claims["direction"] == "flat"


def test_a_figure_shown_differently_whose_change_prints_as_zero_is_little_changed() -> None:
    # steadiness is decided on the change as it prints (0.0%), never on two rounded values
    # (DESIGN, "Numbers and words"); both figures are still shown as they are
    text, claims = _change_text(5000000.02, 5000000.0149, 2)
    assert "5,000,000.01 tonnes" in text and "5,000,000.02 tonnes" in text
    assert claims["direction"] == "flat" and "little changed" in text and "0.0%" not in text
