"""Round trip through a spreadsheet: write a worksheet of statements, apply the new texts typed in it.

The worksheet holds one row per slot with its version; applying it turns every filled "new text"
cell into a rewrite, refusing rows whose slot changed since the worksheet was written. Every
cell is written as text, so nothing a spreadsheet would read as a formula is ever evaluated.
"""

from __future__ import annotations

import io
from dataclasses import dataclass, field
from pathlib import Path

from openpyxl import Workbook, load_workbook
from openpyxl.styles import Alignment, Font
from sqlalchemy.orm import Session

from stetline import actions
from stetline.errors import Conflict, Problem, StetlineError, ValidationError
from stetline.inputfiles import check_workbook
from stetline.store import ops

COLUMNS = ("slot", "entity", "topic", "kind", "status", "current text", "draft", "new text", "version")
WIDTHS = {"slot": 34, "current text": 60, "draft": 60, "new text": 60}
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def neutralise(value: str) -> str:
    """Prefix text a spreadsheet would read as a formula with an apostrophe."""
    return "'" + value if value.startswith(FORMULA_START) else value


def write_worksheet(session: Session, path: Path, f: ops.SlotFilter) -> int:
    """Write the worksheet of every slot matching a filter; return how many rows."""
    wb = Workbook()
    sheet = wb.active
    sheet.title = "statements"
    sheet.append(list(COLUMNS))
    for cell in sheet[1]:
        cell.font = Font(bold=True)
    rows = 0
    for v in actions.views(session, f, order="id"):
        data = v.to_json(session)
        values = [data["slot"], data["entity"] or "", data["topic"] or "", data["kind"], data["status"],
                  data["current"] or "", data["draft"], "", data["version"]]
        sheet.append([neutralise(x) if isinstance(x, str) else x for x in values])
        for cell in sheet[sheet.max_row]:
            if isinstance(cell.value, str):
                cell.data_type = "s"  # never a formula
            cell.alignment = Alignment(wrap_text=True, vertical="top")
        rows += 1
    for i, name in enumerate(COLUMNS, start=1):
        sheet.column_dimensions[sheet.cell(1, i).column_letter].width = WIDTHS.get(name, 14)
    sheet.freeze_panes = "B2"
    wb.save(path)
    return rows


@dataclass
class Applied:
    """What applying a worksheet did."""

    applied: list[str] = field(default_factory=list)
    refused: list[tuple[str, str]] = field(default_factory=list)  # (slot, why)


def _unquote(text: str) -> str:
    return text[1:] if text.startswith("'") and text[1:2] in FORMULA_START else text


def apply_worksheet(session: Session, path: Path, *, by: str) -> Applied:
    """Turn every filled "new text" into a rewrite; refuse rows whose slot changed since."""
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise ValidationError([Problem(path.name, None, None, f"the workbook cannot be read: {exc}")]) from None
    check_workbook(path.name, data)  # refuse a decompression bomb before openpyxl expands it
    try:
        wb = load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds on damaged files
        raise ValidationError([Problem(path.name, None, None, f"the workbook cannot be read: {exc}")]) from None
    sheet = wb["statements"] if "statements" in wb.sheetnames else wb.worksheets[0]
    rows = sheet.iter_rows(values_only=True)
    header = [str(c or "").strip().lower() for c in next(rows, ())]
    missing = [c for c in ("slot", "new text", "version") if c not in header]
    if missing:
        raise ValidationError([Problem(path.name, 1, None,
                                       f"missing column(s) {', '.join(missing)}; is this a Stetline worksheet?")])
    col = {name: header.index(name) for name in ("slot", "new text", "version")}
    result = Applied()
    for number, row in enumerate(rows, start=2):
        new_text = row[col["new text"]] if len(row) > col["new text"] else None
        if new_text is None or not str(new_text).strip():
            continue
        slot = str(row[col["slot"]] or "").strip()
        try:
            version = int(row[col["version"]])
        except (TypeError, ValueError):
            result.refused.append((slot or f"row {number}", f"row {number}: the version cell is not a whole number"))
            continue
        try:
            with session.begin_nested():
                actions.rewrite(session, slot, _unquote(str(new_text)), by=by, version=version)
            result.applied.append(slot)
        except Conflict:
            result.refused.append((slot, f"row {number}: the statement changed since the worksheet was written"))
        except StetlineError as exc:
            result.refused.append((slot, f"row {number}: {exc}"))
    return result
