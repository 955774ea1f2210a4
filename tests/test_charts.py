"""The charts drawn with matplotlib: labels inside the image, captions that state the numbers, plain-text labels."""

from __future__ import annotations

from typing import Any

import pytest

from stetline import charts, phrasing

PERIODS = ["2020", "2021", "2022", "2023", "2024", "2025"]
# long units were clipped by the old hand-drawn SVG ("188 Mbit/s" showed as "88 Mbit/s")
UNITS = [("Mbit/s", 0, 188.0), ("percent", 1, 59.3), ("per 1,000 residents", 1, 9.2), ("persons", 0, 42698.0)]


def _lines(top: float) -> list[tuple[str, str, list[float | None]]]:
    return [(f"t{i}", name, [top * (0.4 + 0.1 * i) * (1 + 0.02 * j) for j in range(len(PERIODS))])
            for i, name in enumerate(["North Quay", "Little Thrift", "Samphire Reach", "Puffin Holm <b>&"])]


def _specs(unit: str, decimals: int, top: float) -> list[charts.ChartSpec]:
    def fmt(x: float) -> str:
        return phrasing.value(x, unit, decimals)

    lines = _lines(top)
    series = charts.series_spec("Median speed $5", unit, PERIODS, lines, "t1", fmt, "town")
    ranking = charts.ranking_spec("Median speed $5", unit, "2025", [(k, n, v[-1] or 0.0) for k, n, v in lines],
                                  "t2", fmt, "town")
    assert series is not None and ranking is not None
    return [series, ranking]


def _texts_outside(fig: Any) -> list[str]:
    """The visible labels of a drawn figure that reach beyond its edges (tick labels, key, names)."""
    from matplotlib.text import Text

    renderer = fig.canvas.get_renderer()
    box = fig.bbox
    texts = [t for t in fig.findobj(Text) if t.get_visible() and t.get_text()]
    assert texts
    outside = []
    for text in texts:
        extent = text.get_window_extent(renderer)
        if not (box.x0 <= extent.x0 and extent.x1 <= box.x1 and box.y0 <= extent.y0 and extent.y1 <= box.y1):
            outside.append(text.get_text())
    return outside


@pytest.mark.parametrize("unit, decimals, top", UNITS)
def test_every_tick_label_lies_inside_the_image(unit: str, decimals: int, top: float) -> None:
    for spec in _specs(unit, decimals, top):
        fig = charts.figure(spec)
        fig.draw_without_rendering()
        assert _texts_outside(fig) == [], spec.kind


@pytest.mark.parametrize("marked", ["e7", "e0", "e59", None])
def test_a_ranking_of_sixty_is_a_dot_strip_with_its_labels_inside(marked: str | None) -> None:
    def fmt(x: float) -> str:
        return phrasing.value(x, "per 1,000 residents", 0)

    panel = [(f"e{i}", f"Longer entity name number {i}", 1000.0 + (i * 37) % 500) for i in range(60)]
    spec = charts.ranking_spec("Library visits", "per 1,000 residents", "2025", panel, marked, fmt, "town")
    assert spec is not None and len(spec.bars) == 60
    fig = charts.figure(spec)
    fig.draw_without_rendering()
    assert _texts_outside(fig) == []
    height = fig.get_size_inches()[1]
    assert height < 3  # bars of sixty would be a long column of hairlines; the strip stays short
    named = [t.get_text() for t in fig.axes[0].texts if "\n" in t.get_text()]
    if marked is None:  # the first and the last are named
        assert sorted(named) == sorted(f"{nm}\n{shown}" for k, nm, _v, shown in (spec.bars[0], spec.bars[-1]))
    else:
        assert named == [next(f"{nm}\n{shown}" for k, nm, _v, shown in spec.bars if k == marked)]
    assert spec.ticks[0][0] > 0  # the strip spans the values, not zero to the top


def test_a_short_unit_is_on_every_tick_and_a_long_one_on_the_axis() -> None:
    speed, _ = _specs("Mbit/s", 0, 188.0)
    assert speed.unit_label == "" and all(label.endswith(" Mbit/s") for _t, label in speed.ticks)
    assert "140 Mbit/s" in [label for _t, label in speed.ticks]
    rate, _ = _specs("per 1,000 residents", 1, 9.2)
    assert rate.unit_label == "per 1,000 residents" and not any("residents" in label for _t, label in rate.ticks)


def test_captions_state_the_numbers() -> None:
    series, ranking = _specs("Mbit/s", 0, 188.0)
    assert series.caption == ("Median speed $5 in Little Thrift: 103 Mbit/s in 2025, up from 94 Mbit/s in 2020. "
                              "The other 3 towns ranged from 83 Mbit/s to 145 Mbit/s in 2025.")
    assert ranking.caption == ("Median speed $5 in 2025, 4 towns ranked: best Puffin Holm <b>& (145 Mbit/s), "
                               "worst North Quay (83 Mbit/s). Samphire Reach: 124 Mbit/s, 2nd of 4.")


def test_svg_is_deterministic_plain_text_and_cached() -> None:
    series, ranking = _specs("Mbit/s", 0, 188.0)
    first = charts.render(ranking, "svg")
    assert charts.cached(ranking, "svg")
    assert charts._save(ranking, "svg") == first  # drawn again: the same bytes (no date, a fixed hash salt)
    text = first.decode("utf-8")
    assert text.startswith("<svg") and "<b>" not in text and "<script" not in text and "Date" not in text
    png = charts.render(series, "png")
    assert png.startswith(b"\x89PNG") and charts._save(series, "png") == png
    with pytest.raises(ValueError):
        charts.render(series, "gif")


def test_a_chart_folder_keeps_what_was_drawn_for_the_next_publish(tmp_path: Any,
                                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    series, ranking = _specs("percent", 1, 59.3)
    charts._cache.clear()
    with charts.folder(tmp_path / "chart-cache"):
        svg, png = charts.render(series, "svg"), charts.render(ranking, "png")
    kept = sorted(p.name.split("-")[0] + p.suffix for p in (tmp_path / "chart-cache").iterdir())
    assert kept == sorted([series.digest + ".svg", ranking.digest + ".png"])
    # the drawings show the figures: readable by their owner only, like the database
    assert (tmp_path / "chart-cache").stat().st_mode & 0o777 == 0o700
    assert {p.stat().st_mode & 0o777 for p in (tmp_path / "chart-cache").iterdir()} == {0o600}
    charts._cache.clear()  # as in a new process

    def no_drawing(spec: Any, fmt: str) -> bytes:
        raise AssertionError(f"drew {spec.title} again")

    monkeypatch.setattr(charts, "_save", no_drawing)
    with charts.folder(tmp_path / "chart-cache"):
        assert charts.render(series, "svg") == svg and charts.render(ranking, "png") == png
    charts._cache.clear()
    with pytest.raises(AssertionError, match="drew"):  # outside the folder's block nothing is read from it
        charts.render(series, "svg")


@pytest.mark.parametrize("entities", [2, 50])
def test_a_topic_where_every_value_is_the_same_still_draws(entities: int) -> None:
    def fmt(x: float) -> str:
        return phrasing.value(x, "percent", 1)

    flat = [(f"e{i}", f"Town {i}", [5.0, 5.0, None if i else 5.0]) for i in range(entities)]
    series = charts.series_spec("Rate", "percent", ["2023", "2024", "2025"], flat, "e0", fmt, "town")
    zero = charts.ranking_spec("Rate", "percent", "2025", [(k, n, 0.0) for k, n, _v in flat], "e0", fmt, "town")
    lone = charts.series_spec("Rate", "percent", ["2025"], [("e0", "Town 0", [3.0])], "e0", fmt, "town")
    for spec in (series, zero, lone):
        assert spec is not None
        for fmt_ in charts.FORMATS:  # warnings are errors in this suite: an axis of no length would warn
            assert charts._save(spec, fmt_)
        fig = charts.figure(spec)
        fig.draw_without_rendering()
        assert _texts_outside(fig) == []


def test_the_report_charts_compare_the_entities_of_one_level(demo_path: Any) -> None:
    # the demo's towns lie in three districts that report recycling too (seed_data/README.md): a town's
    # chart compares the 14 towns, a district's the three districts, and the topic ranks the towns
    from stetline.publish import gather
    from stetline.workspace import open_workspace

    ws = open_workspace(demo_path)
    with ws.session() as s:
        data = gather(s, allow_recheck=True).topics["recycling"]
    ws.close()
    assert len(data.latest) == 14 and data.ranking is not None and "14 towns ranked" in data.ranking.caption
    town, district = data.series_charts["heronsford"], data.series_charts["westreach"]
    assert town is not None and "The other 13 towns ranged from" in town.caption
    assert district is not None and "The other 2 districts ranged from" in district.caption
    assert {key for key, _name, _values in district.lines} == {"westreach", "eastmarch", "sound-isles"}


# (least, greatest, unit, decimals, starts at zero): recycling-like rates far from zero, loans near it,
# response times in minutes, a change that crosses zero
RANGES = [(39.2, 59.3, "percent", 1, False), (86.3, 99.9, "percent", 1, False), (2.0, 6.3, "loans", 1, True),
          (6.4, 11.9, "minutes", 1, False), (644.0, 1370.0, "per 1,000 residents", 0, True),
          (-4.2, 3.1, "percent", 1, True), (42100.0, 42698.0, "persons", 0, False)]


@pytest.mark.parametrize("least, greatest, unit, decimals, zero", RANGES)
def test_a_series_axis_starts_at_zero_or_just_below_the_data_and_says_so(
        least: float, greatest: float, unit: str, decimals: int, zero: bool) -> None:
    def fmt(x: float) -> str:
        return phrasing.value(x, unit, decimals)

    step = (greatest - least) / 5
    lines: list[tuple[str, str, list[float | None]]] = [
        ("a", "North Quay", [least + step * j for j in range(6)]),
        ("b", "Little Thrift", [greatest - step * j for j in range(6)])]
    spec = charts.series_spec("Rate", unit, PERIODS, lines, "a", fmt, "town")
    assert spec is not None
    fig = charts.figure(spec)
    fig.draw_without_rendering()
    assert _texts_outside(fig) == []
    bottom, top = fig.axes[0].get_ylim()  # matplotlib's own axis, as drawn
    assert bottom <= least and top >= greatest
    labels = [label for _t, label in spec.ticks]
    assert labels[0] == next(t.get_text() for t in fig.axes[0].texts if t.get_text() == labels[0])  # labelled
    broken = [ln for ln in fig.axes[0].lines if ln.get_gid() == "axis-break"]
    if zero:  # zero is near: the axis includes it, with a plain zero line and no break mark
        assert bottom <= 0 <= top and not broken
        assert greatest - least >= 0.45 * (top - bottom)  # the data still fill about half the axis
    else:  # common practice: a truncated axis starts at a round value just below the data and shows a break
        assert bottom > 0
        assert least - bottom <= 0.25 * (top - bottom), (bottom, least, top)
        assert len(broken) == 1 and b'id="axis-break"' in charts._save(spec, "svg")
    assert len(labels) <= 7 and not any(".0%" in label or ".0 " in label for label in labels)


def test_many_periods_label_the_latest_and_never_overlap() -> None:
    quarters = [f"{y}-Q{q}" for y in range(2021, 2026) for q in range(1, 5)][:-1]  # 19 quarters, to 2025-Q3

    def fmt(x: float) -> str:
        return phrasing.value(x, "percent", 1)

    lines: list[tuple[str, str, list[float | None]]] = [
        ("a", "North Quay", [40 + j % 4 for j in range(len(quarters))])]
    spec = charts.series_spec("Rate", "percent", quarters, lines, "a", fmt, "town")
    assert spec is not None
    fig = charts.figure(spec)
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    boxes = sorted(((t.get_window_extent(renderer), t.get_text()) for t in fig.axes[0].texts
                    if t.get_text() in spec.periods), key=lambda b: b[0].x0)
    shown = [text for _box, text in boxes]
    assert shown[-1] == "Q3 2025" and len(shown) >= 3  # the axis names quarters in their short form
    extents = [(b.x0, b.x1) for b, _t in boxes]
    assert all(left[1] < right[0] for left, right in zip(extents, extents[1:])), extents
