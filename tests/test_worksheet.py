"""The spreadsheet round trip: write a worksheet, type new texts, apply them; stale rows refused."""

from __future__ import annotations

from pathlib import Path

from helpers import Cli
from openpyxl import load_workbook

from stetline.worksheet import neutralise


def _fill(path: Path, texts: dict[str, str]) -> None:
    wb = load_workbook(path)
    sheet = wb["statements"]
    header = [c.value for c in sheet[1]]
    slot_col, new_col = header.index("slot"), header.index("new text")
    for row in sheet.iter_rows(min_row=2):
        if row[slot_col].value in texts:
            row[new_col].value = texts[row[slot_col].value]
            row[new_col].data_type = "s"
    wb.save(path)


def test_round_trip_applies_new_texts_and_refuses_stale_rows(demo_cli: Cli, tmp_path: Path) -> None:
    path = tmp_path / "tidemere.xlsx"
    out = demo_cli("worksheet", "-o", str(path), "--entity", "tidemere")
    assert "statements" in out.stdout
    wb = load_workbook(path)
    header = [c.value for c in wb["statements"][1]]
    assert header == ["slot", "entity", "topic", "kind", "status", "current text", "draft", "new text", "version"]
    slots = [r[0].value for r in wb["statements"].iter_rows(min_row=2)]
    assert "blurb/tidemere/recycling" in slots and all("/tidemere" in s for s in slots)
    # someone changes one statement in the meantime
    demo_cli("annotate", "blurb/tidemere/population", "Boundary review pending.", "--by", "expert")
    _fill(path, {
        "blurb/tidemere/bus-punctuality": "Buses in Tidemere ran on time 85.0% of the time in 2025.",
        "blurb/tidemere/population": "Tidemere is the largest town.",
    })
    result = demo_cli("apply-worksheet", str(path), "--by", "editor")
    assert "blurb/tidemere/bus-punctuality: rewritten" in result.stdout
    assert "refused blurb/tidemere/population" in result.stderr
    assert "changed since the worksheet was written" in result.stderr
    assert "1 applied, 1 refused" in result.stdout
    item = demo_cli.json("show", "blurb/tidemere/bus-punctuality")
    assert item["layer"]["type"] == "rewrite" and item["layer"]["by"] == "editor"
    assert demo_cli.json("show", "blurb/tidemere/population")["layer"] is None


def test_formula_like_text_is_written_as_text(demo_cli: Cli, tmp_path: Path) -> None:
    demo_cli("rewrite", "blurb/tidemere/recycling", "=HYPERLINK(\"http://example.invalid\") recycling",
             "--by", "editor")
    path = tmp_path / "w.xlsx"
    demo_cli("worksheet", "-o", str(path), "--entity", "tidemere", "--kind", "blurb")
    sheet = load_workbook(path)["statements"]
    cells = [c for row in sheet.iter_rows(min_row=2) for c in row
             if isinstance(c.value, str) and "HYPERLINK" in c.value]
    assert cells and all(c.data_type == "s" and c.value.startswith("'=") for c in cells)
    assert neutralise("@cmd") == "'@cmd" and neutralise("plain") == "plain"
