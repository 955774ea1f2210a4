"""Property tests of the loader on malformed files: a clear ValidationError, never a crash.

Whatever bytes a person hands over (a CSV with the wrong columns, types or encoding, a cut-off
or random file, a damaged workbook, cells that look like spreadsheet formulas, a field of
100,000 characters), ``load_dataset`` returns a Dataset or raises ValidationError whose message
names the file; nothing else. Through the CLI, a refused `stetline load` is one "Error:"
message and leaves every table of the workspace as it was.

References: RFC 4180 (CSV quoting); OWASP, "CSV Injection" (cells starting with =, +, - or @
are read as formulas by spreadsheet programs; from memory); ECMA-376 (an .xlsx file is a ZIP
package of XML parts, so a cut-off one is a broken ZIP archive; from memory).
"""

from __future__ import annotations

import csv
import io
import shutil
from collections.abc import Callable
from pathlib import Path
from typing import Any

import pandas as pd
import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from openpyxl import Workbook
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE

from stetline import demo, loading
from stetline.cli import main
from stetline.dataset import (
    ENTITY_COLUMNS,
    OBSERVATION_COLUMNS,
    OBSERVATION_OPTIONAL,
    TOPIC_COLUMNS,
    TOPIC_OPTIONAL,
    Dataset,
    load_dataset,
)
from stetline.errors import ValidationError
from stetline.store import ops
from stetline.workspace import init_workspace, open_workspace

FUZZ = settings(
    max_examples=80, deadline=None, database=None, derandomize=True,
    suppress_health_check=[
        HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.large_base_example, HealthCheck.filter_too_much,
    ],
)
HUGE = 100_000
# where to cut a file, as a fraction: a workbook's length varies with its save time, so a cut
# drawn as a byte count would make Hypothesis replay examples differently
FRACTION = st.floats(0, 1)

COLUMNS = {
    "observations": OBSERVATION_COLUMNS + OBSERVATION_OPTIONAL,
    "topics": TOPIC_COLUMNS + TOPIC_OPTIONAL,
    "entities": ENTITY_COLUMNS,
}
DEMO = {
    "observations": demo.data_file("observations-2025.csv"),
    "topics": demo.data_file("topics.csv"),
    "entities": demo.data_file("entities.csv"),
}


# --------------------------------------------------------------------------- strategies

_demo_rows = {role: list(csv.reader(io.StringIO(path.read_text(encoding="utf-8")))) for role, path in DEMO.items()}
REAL_CELLS = sorted({cell for rows in _demo_rows.values() for row in rows[1:60] for cell in row})

formula = st.builds(lambda p, rest: p + rest, st.sampled_from(["=", "+", "-", "@", "\t=", " ="]),
                    st.sampled_from(["1+1", "SUM(A1:A9)", "HYPERLINK(\"http://x\")", "cmd|' /C calc'!A0", "", "5"]))
number_like = st.sampled_from([
    "12.5", "-3", "0", "1e309", "-1e309", "nan", "NaN", "inf", "-inf", "1,5", "1 000", "12%", "0x1F",
    "  7  ", "٣", "1e-400", "9" * 400, "--1", "+5", "5.", ".5", "1_000", "True", "None", "NULL",
])
period_like = st.sampled_from([
    "2024", "2025", "2024-Q1", "2024-Q5", "2024-03", "2024-13", "2024-00", "24", "2024Q1", "2024-W01",
    "99999", "0", "-2024", "2024-03-01", "", " 2024 ",
])
weird_text = st.text(
    alphabet=st.characters(codec="utf-8", exclude_categories=["Cs"]), max_size=30,
)
cell = st.one_of(
    st.sampled_from(REAL_CELLS), number_like, period_like, formula, weird_text,
    st.sampled_from(["", " ", "\"", "a,b", "line\nbreak", "\r", "\ufeff", "x" * HUGE, "9" * HUGE]),
)


@st.composite
def header_for(draw: st.DrawFn, role: str) -> list[str]:
    """The role's demo header, or one with columns missing, repeated, misspelt or added."""
    header = list(_demo_rows[role][0])
    if draw(st.integers(0, 2)) < 2:  # Hypothesis starts from 0: the plain case first
        return header
    known = list(COLUMNS[role])
    header = draw(st.lists(st.sampled_from(known), min_size=0, max_size=len(known) + 2))
    if draw(st.booleans()):
        header = list(dict.fromkeys(header))  # usually no repeated column, sometimes some
    header += draw(st.lists(st.one_of(weird_text, st.sampled_from(["Value", " entity", "x" * HUGE])), max_size=2))
    return draw(st.permutations(header)) if header else header


@st.composite
def table(draw: st.DrawFn, role: str) -> list[list[str]]:
    """A table shaped roughly like the role's file: wrong cells, columns, shapes, repeated keys."""
    header = draw(header_for(role))
    if draw(st.integers(0, 3)) < 3:  # mostly the demo's rows, a few cells replaced
        picked = draw(st.lists(st.sampled_from(_demo_rows[role][1:]), min_size=1, max_size=12))
        rows = []
        for r in picked:
            r = list(r)
            if r and draw(st.integers(0, 2)) == 2:
                r[draw(st.integers(0, len(r) - 1))] = draw(cell)
            rows.append(r)
    else:  # free-form rows, ragged now and then
        width = len(header)
        rows = draw(st.lists(st.lists(cell, min_size=max(0, width - 1), max_size=width + 1), max_size=8))
    if rows and draw(st.integers(0, 3)) == 3:
        rows.append(list(draw(st.sampled_from(rows))))  # a duplicated key
    return [header] + rows


def render_csv(draw: st.DrawFn, rows: list[list[str]]) -> bytes:
    if draw(st.booleans()):
        out = io.StringIO()
        csv.writer(out, lineterminator=draw(st.sampled_from(["\n", "\r\n"]))).writerows(rows)
        text = out.getvalue()
    else:  # joined by hand: unbalanced quotes and stray separators survive
        sep = draw(st.sampled_from([",", ";", "\t", ", "]))
        text = "\n".join(sep.join(r) for r in rows)
    encoding = draw(st.sampled_from(
        ["utf-8"] * 6 + ["utf-8-sig", "latin-1", "cp1252", "utf-16", "utf-16-le", "utf-32"]))
    return text.encode(encoding, errors="replace")


@st.composite
def csv_file(draw: st.DrawFn, role: str) -> bytes:
    """CSV bytes for a role: malformed in content, encoding, or cut short."""
    data = render_csv(draw, draw(table(role)))
    if data and draw(st.integers(0, 4)) == 4:
        data = data[: int(len(data) * draw(FRACTION))]
    return data


def _workbook(sheets: list[tuple[str, list[list[Any]]]]) -> bytes:
    wb = Workbook()
    wb.remove(wb.active)
    for name, rows in sheets:
        ws = wb.create_sheet(name)
        for row in rows:
            ws.append(row)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _storable(value: Any) -> Any:
    """A value openpyxl will write: no control characters, at most 32,000 characters."""
    return ILLEGAL_CHARACTERS_RE.sub("", value)[:32_000] if isinstance(value, str) else value


xlsx_cell = st.one_of(
    cell.map(_storable),
    st.integers(-10**12, 10**12), st.floats(allow_nan=True, allow_infinity=False), st.booleans(), st.none(),
    st.datetimes(), st.sampled_from(["=1/0", "=SUM(A1:A3)", "=NA()", "+A1", "-A1", "@A1"]),
)
sheet_name = st.sampled_from(["observations", "Observations ", "topics", "entities", "Sheet1", "data", "Ω"])


@st.composite
def xlsx_file(draw: st.DrawFn, role: str) -> bytes:
    """An .xlsx workbook: odd sheets and cells of every type, sometimes cut short."""
    sheets = []
    for name in draw(st.lists(sheet_name, min_size=1, max_size=3, unique=True)):
        rows: list[list[Any]] = list(draw(table(role)))
        rows = [[draw(xlsx_cell) if draw(st.integers(0, 4)) == 4 else _storable(c) for c in r] for r in rows]
        sheets.append((name, rows))
    data = _workbook(sheets)
    if draw(st.integers(0, 2)) == 2:
        data = data[: int(len(data) * draw(FRACTION))]
    return data


any_bytes = st.one_of(
    st.binary(max_size=3000),
    st.binary(max_size=3000).map(lambda b: b"PK\x03\x04" + b),
    st.binary(max_size=3000).map(lambda b: b"\xef\xbb\xbf" + b),
)


# --------------------------------------------------------------------------- checks


@pytest.fixture(scope="module")
def known() -> dict[str, pd.DataFrame]:
    """The demo's metadata, as a workspace that has loaded it holds it."""
    ds = load_dataset(DEMO["observations"], DEMO["topics"], DEMO["entities"])
    return {"known_topics": ds.topics, "known_entities": ds.entities}


@pytest.fixture(scope="module")
def files(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return tmp_path_factory.mktemp("fuzz")


def outcome(call: Callable[[], Dataset], names: list[str]) -> Dataset | ValidationError:
    """Run a load; a Dataset is fine, a ValidationError must name a file; anything else fails."""
    try:
        result = call()
    except ValidationError as exc:
        message = str(exc)
        assert exc.problems, "a refusal must say what is wrong"
        assert any(name in message for name in names), message[:500]
        for problem in exc.problems:
            assert any(problem.file.startswith(name) for name in names), problem
        return exc
    assert isinstance(result, Dataset)
    assert len(result.observations) > 0
    return result


def refusal(call: Callable[[], Dataset], names: list[str]) -> ValidationError:
    """Run a load that must be refused; return its ValidationError (already checked to name the file)."""
    result = outcome(call, names)
    assert isinstance(result, ValidationError), "the malformed file was loaded"
    return result


def write(folder: Path, name: str, data: bytes) -> Path:
    path = folder / name
    path.write_bytes(data)
    return path


ROLES = st.sampled_from(["observations", "topics", "entities"])


def load_with(
    folder: Path, role: str, name: str, data: bytes, known: dict[str, pd.DataFrame], *, must_refuse: bool = False,
) -> Dataset | ValidationError:
    """Load the fuzzed file in its role, with the demo's other files or the known metadata."""
    path = write(folder, name, data)
    check = refusal if must_refuse else outcome
    if role == "observations":
        return check(lambda: load_dataset(path, **known), [name])
    others = {r: DEMO[r] for r in ("topics", "entities")}
    others[role] = path
    return check(lambda: load_dataset(DEMO["observations"], others["topics"], others["entities"]),
                 [name, DEMO["observations"].name])


# --------------------------------------------------------------------------- properties


@FUZZ
@given(data=st.data(), role=ROLES)
def test_a_fuzzed_csv_loads_or_is_refused_naming_the_file(
    data: st.DataObject, role: str, files: Path, known: dict[str, pd.DataFrame],
) -> None:
    load_with(files, role, f"{role}-fuzz.csv", data.draw(csv_file(role)), known)


@FUZZ
@given(data=st.data(), role=ROLES)
def test_a_fuzzed_workbook_loads_or_is_refused_naming_the_file(
    data: st.DataObject, role: str, files: Path, known: dict[str, pd.DataFrame],
) -> None:
    load_with(files, role, f"{role}-fuzz.xlsx", data.draw(xlsx_file(role)), known)


@FUZZ
@given(blob=any_bytes, role=ROLES, suffix=st.sampled_from([".csv", ".xlsx", ".txt", ""]))
def test_random_bytes_are_refused_with_a_message_naming_the_file(
    blob: bytes, role: str, suffix: str, files: Path, known: dict[str, pd.DataFrame],
) -> None:
    # random bytes never spell out a whole valid file with its header: each one must be refused
    load_with(files, role, f"{role}-random{suffix}", blob, known, must_refuse=True)


@FUZZ
@given(fraction=st.floats(0, 1), role=ROLES, encoding=st.sampled_from(["utf-8", "latin-1", "utf-16"]))
def test_a_demo_file_cut_at_any_byte_loads_or_is_refused(
    fraction: float, role: str, encoding: str, files: Path, known: dict[str, pd.DataFrame],
) -> None:
    whole = DEMO[role].read_text(encoding="utf-8").encode(encoding)
    load_with(files, role, f"{role}-cut.csv", whole[: int(len(whole) * fraction)], known)


@pytest.mark.parametrize("role", ["observations", "topics", "entities"])
def test_a_workbook_cut_at_any_of_many_bytes_is_refused(
    role: str, files: Path, known: dict[str, pd.DataFrame],
) -> None:
    rows = _demo_rows[role][:30]
    whole = _workbook([(role, rows)])
    cuts = range(0, len(whole), max(1, len(whole) // 40))
    assert len(cuts) >= 40 and cuts[-1] < len(whole)  # every cut leaves the archive short of its end
    for cut in cuts:
        # ECMA-376: a workbook is a ZIP package whose directory sits at the end; a cut one is broken
        load_with(files, role, f"{role}-cut.xlsx", whole[:cut], known, must_refuse=True)


@pytest.mark.parametrize("prefix", ["=", "+", "-", "@"])
def test_formula_like_keys_load_only_when_harmless(prefix: str, files: Path, known: dict[str, pd.DataFrame]) -> None:
    body = f"entity,topic,period,value\n{prefix}north-quay,recycling,2025,50\n"
    result = refusal(lambda: load_dataset(write(files, "formula.csv", body.encode()), **known), ["formula.csv"])
    [problem] = result.problems
    assert (problem.file, problem.row, problem.column) == ("formula.csv", 2, "entity")
    if prefix == "-":  # the loader does not refuse a leading '-'; '-north-quay' is then an unknown entity
        assert problem.message == (
            "entity '-north-quay' is not in the entity metadata (1 row(s)); did you mean 'north-quay'?")
    else:
        assert problem.message == (
            "a key may not start with '=', '+' or '@' (a spreadsheet would read it as a formula): "
            f"'{prefix}north-quay'")


# --------------------------------------------------------------------------- known defects

# An unquoted decimal comma ("42,5") gives the first row one field more than the header; pandas
# then reads the first column as the row index; the loader must say so clearly (row 2), not crash.
DECIMAL_COMMA = b"entity,topic,period,value\nnorth-quay,recycling,2025,42,5\n"
SHIFTED = b"entity,topic,period,value\nx,north-quay,recycling,2025,50\n"
# (these crashed the loader once; now a clear error naming row 2)


@pytest.mark.parametrize("body", [
    pytest.param(DECIMAL_COMMA, id="decimal-comma"),
    pytest.param(SHIFTED, id="extra-first-field"),
    pytest.param(b"entity,topic,period,value\nnorth-quay,recycling,2025,42,5\ntidemere,recycling,2025,50\n",
                 id="only-the-first-row-longer"),
])
def test_first_row_longer_than_the_header(body: bytes, files: Path, known: dict[str, pd.DataFrame]) -> None:
    error = refusal(lambda: load_dataset(write(files, "observations-comma.csv", body), **known),
                    ["observations-comma.csv"])
    [problem] = error.problems
    assert (problem.file, problem.row, problem.column) == ("observations-comma.csv", 2, None)
    assert problem.message == "the row has 5 fields but the header has 4 (an unquoted comma in a value?)"
    assert "observations-comma.csv, row 2: the row has 5 fields" in str(error)


def test_first_row_longer_through_the_cli(first_edition: Path, files: Path) -> None:
    source = write(files, "observations-comma.csv", DECIMAL_COMMA)
    before = workspace_state(first_edition)
    result = CliRunner().invoke(main, ["load", str(source), "-w", str(first_edition), "--by", "fuzz"],
                                catch_exceptions=False)
    assert result.exit_code == 1 and result.output.startswith("Error:")
    assert workspace_state(first_edition) == before


def test_a_huge_column_name_gives_a_short_message(files: Path, known: dict[str, pd.DataFrame]) -> None:
    body = b"entity,topic,period,value," + b"x" * HUGE + b"\nnorth-quay,recycling,2025,50,1\n"
    result = refusal(lambda: load_dataset(write(files, "observations-wide.csv", body), **known),
                     ["observations-wide.csv"])
    assert "unknown column" in str(result)
    assert len(str(result)) < 2_000


# --------------------------------------------------------------------------- through the CLI


@pytest.fixture(scope="module")
def first_edition(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("fuzz-ws") / "ws"
    ws = init_workspace(path)
    loading.load_edition(ws, demo.data_file("observations-2024.csv"), DEMO["topics"], DEMO["entities"], by="admin")
    ws.close()
    return path


def workspace_state(path: Path) -> tuple[dict[str, int], list[tuple[Any, ...]]]:
    ws = open_workspace(path)
    try:
        with ws.session() as s:
            return ops.table_counts(s), [(x.id, x.slot_id, x.type, x.text) for x in ops.all_active_layers(s)]
    finally:
        ws.close()


@settings(FUZZ, max_examples=8)
@given(data=st.data(), kind=st.sampled_from(["csv", "xlsx", "bytes"]))
def test_a_fuzzed_cli_load_adds_one_edition_or_changes_nothing(
    data: st.DataObject, kind: str, first_edition: Path, files: Path,
) -> None:
    blob = data.draw({"csv": csv_file("observations"), "xlsx": xlsx_file("observations"), "bytes": any_bytes}[kind])
    path = files / "cli-ws"
    shutil.rmtree(path, ignore_errors=True)
    shutil.copytree(first_edition, path)
    before = workspace_state(path)
    name = f"observations-cli.{'xlsx' if kind == 'xlsx' else 'csv'}"
    source = write(files, name, blob)
    result = CliRunner().invoke(main, ["load", str(source), "-w", str(path), "--by", "fuzz"], catch_exceptions=False)
    if result.exit_code == 0:  # a cut that happened to leave a valid file
        assert workspace_state(path)[0]["edition"] == before[0]["edition"] + 1
        return
    assert result.exit_code == 1
    assert result.output.startswith("Error:") and name in result.output
    assert "Traceback" not in result.output
    assert workspace_state(path) == before
