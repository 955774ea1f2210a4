"""An XLSX file is checked before it is parsed: a small workbook that expands to tens of
megabytes, or a sheet with too many rows, is refused with a clear message and nothing is loaded.

The load goes through the CLI run as a subprocess; the row cap, set far above a test's data, is
lowered in-process for one test through ``stetline.inputfiles``.
"""

from __future__ import annotations

import io
import json
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest
from helpers import stetline_env
from openpyxl import Workbook

from stetline import inputfiles
from stetline.dataset import load_dataset
from stetline.errors import ValidationError

STETLINE = str(Path(sys.executable).parent / "stetline")  # the installed command, run as a subprocess
HEADER = ("entity", "topic", "period", "value")


def workbook(rows: list[tuple[str, ...]]) -> bytes:
    wb = Workbook()
    sheet = wb.active
    sheet.title = "observations"
    sheet.append(list(HEADER))
    for row in rows:
        sheet.append(list(row))
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()


def bomb(rows: int) -> bytes:
    """A valid-looking workbook whose sheet repeats one row ``rows`` times, highly compressed."""
    source = zipfile.ZipFile(io.BytesIO(workbook([("north-quay", "recycling", "2025", "46.5")])))
    row = ('<row r="2"><c r="A2" t="inlineStr"><is><t>north-quay</t></is></c><c r="B2" t="inlineStr"><is>'
           '<t>recycling</t></is></c><c r="C2" t="inlineStr"><is><t>2025</t></is></c><c r="D2"><v>46.5</v></c></row>')
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as target:
        for info in source.infolist():
            data = source.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                text = data.decode()
                start, end = text.index("<sheetData>") + len("<sheetData>"), text.index("</sheetData>")
                data = (text[:start] + text[start:end].split("</row>")[0] + "</row>" + row * rows + text[end:]).encode()
            target.writestr(info.filename, data)
    return out.getvalue()


def editions(ws: Path) -> int:
    done = subprocess.run([STETLINE, "status", "--json", "-w", str(ws)], env=stetline_env(ws),
                          capture_output=True, text=True, timeout=300)
    return int(json.loads(done.stdout)["editions"])


def test_a_small_workbook_that_expands_to_megabytes_is_refused_unread(demo_path: Path, tmp_path: Path) -> None:
    data = bomb(160_000)
    assert len(data) < 400_000  # a few hundred kilobytes that expand to over 30 MB
    path = tmp_path / "observations.xlsx"
    path.write_bytes(data)
    before = editions(demo_path)
    done = subprocess.run([STETLINE, "load", str(path), "--by", "ed", "-w", str(demo_path)],
                          env=stetline_env(demo_path),
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 1 and "Traceback" not in done.stderr
    assert "observations.xlsx" in done.stderr
    assert "refused as a possible decompression bomb; save the data as CSV" in done.stderr
    assert editions(demo_path) == before


def test_a_sheet_over_the_row_cap_is_refused_before_parsing(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(inputfiles, "MAX_XLSX_ROWS", 50)
    data = workbook([(f"e{i}", "recycling", "2025", str(i % 100)) for i in range(60)])
    with pytest.raises(ValidationError) as caught:
        load_dataset(io.BytesIO(data))
    assert "holds more than 50 rows; load data this large as CSV" in str(caught.value)


def test_a_workbook_over_the_size_cap_is_refused(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(inputfiles, "MAX_XLSX_BYTES", 20_000)
    data = workbook([(f"e{i}", "recycling", "2025", str(i)) for i in range(1_000)])
    with pytest.raises(ValidationError) as caught:
        load_dataset(io.BytesIO(data))
    assert "expands to more than 20,000 bytes uncompressed; refused before reading it" in str(caught.value)


def test_an_ordinary_workbook_still_loads_past_the_checks() -> None:
    data = workbook([("north-quay", "recycling", "2025", "46.5")])
    with pytest.raises(ValidationError) as caught:  # no metadata: the checks of the contents speak
        load_dataset(io.BytesIO(data))
    assert "no topic metadata" in str(caught.value)
