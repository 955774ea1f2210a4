"""Read an edition's input files into tables of strings: CSV, and XLSX checked before parsing.

An XLSX workbook is a zip archive; a small one can expand to gigabytes. Before openpyxl parses
anything, the archive is read as a stream and refused when it would expand past
``MAX_XLSX_BYTES``, when a part expands more than ``MAX_RATIO`` times its stored size, or when a
sheet holds more than ``MAX_XLSX_ROWS`` rows, each with a clear message. Nothing here checks the
meaning of a cell (that is ``stetline.dataset``); nothing here touches the database.
"""

from __future__ import annotations

import io
import zipfile
import zlib
from dataclasses import dataclass
from pathlib import Path
from typing import IO

import pandas as pd

from stetline.errors import Problem, ValidationError

Source = str | Path | IO[bytes]
MAX_XLSX_BYTES = 100_000_000  # uncompressed bytes of a whole workbook
MAX_XLSX_ROWS = 200_000  # rows of one sheet; larger data loads faster as CSV
MAX_RATIO = 100  # how many times a part may expand (common practice for zip-bomb checks; typical sheets expand 5-20x)
RATIO_FROM = 1_000_000  # parts smaller than this expand as they like
CHUNK = 1 << 20


@dataclass
class Table:
    """One input table as read: every cell a string, with its display name for messages."""

    name: str
    frame: pd.DataFrame


def _display_name(source: Source, sheet: str | None = None) -> str:
    base = Path(source).name if isinstance(source, (str, Path)) else getattr(source, "name", "upload")
    base = Path(str(base)).name
    return f"{base} [{sheet}]" if sheet else base


def _read_bytes(source: Source) -> bytes:
    if isinstance(source, (str, Path)):
        return Path(source).read_bytes()
    data = source.read()
    return data if isinstance(data, bytes) else str(data).encode("utf-8")


def _is_xlsx(source: Source, data: bytes) -> bool:
    if isinstance(source, (str, Path)) and str(source).lower().endswith((".xlsx", ".xlsm")):
        return True
    return data[:4] == b"PK\x03\x04"


def _read_csv(name: str, data: bytes) -> Table:
    if not data.strip(b"\xef\xbb\xbf \t\r\n"):
        raise ValidationError([Problem(name, None, None, "the file is empty")])
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise ValidationError([Problem(
            name, line, None,
            f"the file is not UTF-8 text (byte 0x{data[exc.start]:02x}); save it as UTF-8 CSV",
        )]) from None
    if "\x00" in text:
        raise ValidationError([Problem(name, None, None, "the file holds NUL bytes: it is not a CSV file")])
    try:
        frame = pd.read_csv(
            io.StringIO(text), dtype="str", keep_default_na=False, na_values=[],
            skip_blank_lines=False, skipinitialspace=False,
        )
    except pd.errors.EmptyDataError:
        raise ValidationError([Problem(name, None, None, "the file is empty")]) from None
    except (pd.errors.ParserError, ValueError, OverflowError) as exc:
        raise ValidationError([Problem(name, None, None, f"the file is not valid CSV: {_short(exc)}")]) from None
    if not isinstance(frame.index, pd.RangeIndex):
        # pandas takes the first column as an index when the first data row has one field too many
        raise ValidationError([Problem(
            name, 2, None,
            f"the row has {len(frame.columns) + 1} fields but the header has {len(frame.columns)} "
            "(an unquoted comma in a value?)",
        )])
    # drop blank lines but keep the index, so reported rows match the file's lines
    frame = frame.loc[~(frame.fillna("").astype("str") == "").all(axis=1)]
    return Table(name, frame)


def _short(exc: Exception) -> str:
    text = " ".join(str(exc).split())
    text = text.replace("Error tokenizing data. C error: ", "")
    return text[:200]


def _read_xlsx_sheets(name: str, data: bytes) -> dict[str, pd.DataFrame]:
    check_workbook(name, data)
    try:
        sheets = pd.read_excel(
            io.BytesIO(data), sheet_name=None, dtype="str", keep_default_na=False,
            na_values=[], engine="openpyxl",
        )
    except (zipfile.BadZipFile, KeyError, OSError, ValueError, TypeError) as exc:
        raise ValidationError([Problem(name, None, None, f"the workbook cannot be read: {_short(exc)}")]) from None
    except Exception as exc:  # openpyxl raises many kinds on damaged files
        raise ValidationError([Problem(name, None, None, f"the workbook cannot be read: {_short(exc)}")]) from None
    return {str(k): v.fillna("").astype("str") for k, v in sheets.items()}


def _pick_sheet(name: str, sheets: dict[str, pd.DataFrame], wanted: str, first: bool) -> Table | None:
    for sheet, frame in sheets.items():
        if sheet.strip().lower() == wanted:
            return Table(f"{name} [{sheet}]", frame)
    if first and sheets:
        sheet, frame = next(iter(sheets.items()))
        return Table(f"{name} [{sheet}]", frame)
    return None


def check_workbook(name: str, data: bytes) -> None:
    """Refuse a workbook that would expand too far or holds too many rows, before parsing it."""
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        members = archive.infolist()
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise ValidationError([Problem(name, None, None, f"the workbook cannot be read: {_short(exc)}")]) from None
    total = 0
    for info in members:
        size, rows = _stream(archive, info, MAX_XLSX_BYTES - total, name)
        total += size
        if size > RATIO_FROM and size > MAX_RATIO * max(info.compress_size, 1):
            raise ValidationError([Problem(name, None, None, (
                f"the workbook part {info.filename} expands {size // max(info.compress_size, 1):,} times "
                f"(more than {MAX_RATIO}): refused as a possible decompression bomb; save the data as CSV"))])
        if rows > MAX_XLSX_ROWS:
            raise ValidationError([Problem(name, None, None, (
                f"the sheet {info.filename} holds more than {MAX_XLSX_ROWS:,} rows; "
                "load data this large as CSV"))])


def _rows_in(xml: bytes) -> int:
    return xml.count(b"<row ") + xml.count(b"<row>")


def _stream(archive: zipfile.ZipFile, info: zipfile.ZipInfo, room: int, name: str) -> tuple[int, int]:
    """Decompress one part as a stream: its real size and, for a sheet, its rows (stops early)."""
    sheet = info.filename.startswith("xl/worksheets/") and info.filename.endswith(".xml")
    size = rows = 0
    tail = b""
    try:
        with archive.open(info) as part:
            while chunk := part.read(CHUNK):
                size += len(chunk)
                if size > room:
                    raise ValidationError([Problem(name, None, None, (
                        f"the workbook expands to more than {MAX_XLSX_BYTES:,} bytes uncompressed; "
                        "refused before reading it; save the data as CSV"))])
                if sheet:
                    joined = tail + chunk
                    rows += _rows_in(joined) - _rows_in(tail)
                    tail = chunk[-5:]
                    if rows > MAX_XLSX_ROWS:
                        break
    except (zipfile.BadZipFile, zlib.error, OSError, EOFError, NotImplementedError) as exc:
        raise ValidationError([Problem(name, None, None, f"the workbook cannot be read: {_short(exc)}")]) from None
    return size, rows


def read_csv_table(source: Source) -> Table:
    """Read one CSV file (a mapping, for instance) into a table of strings, with its display name."""
    return _read_csv(_display_name(source), _read_bytes(source))


def read_tables(
    observations: Source, topics: Source | None, entities: Source | None,
) -> tuple[Table, Table | None, Table | None, list[str]]:
    data = _read_bytes(observations)
    name = _display_name(observations)
    files = [name]
    if _is_xlsx(observations, data):
        sheets = _read_xlsx_sheets(name, data)
        obs_t = _pick_sheet(name, sheets, "observations", first=True)
        assert obs_t is not None
        topics_t = _pick_sheet(name, sheets, "topics", first=False) if topics is None else None
        entities_t = _pick_sheet(name, sheets, "entities", first=False) if entities is None else None
    else:
        obs_t, topics_t, entities_t = _read_csv(name, data), None, None
    for source, slot in ((topics, "topics"), (entities, "entities")):
        if source is None:
            continue
        raw = _read_bytes(source)
        sub = _display_name(source)
        files.append(sub)
        if _is_xlsx(source, raw):
            table = _pick_sheet(sub, _read_xlsx_sheets(sub, raw), slot, first=True)
        else:
            table = _read_csv(sub, raw)
        if slot == "topics":
            topics_t = table
        else:
            entities_t = table
    return obs_t, topics_t, entities_t, files


