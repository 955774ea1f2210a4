"""Tests for stetline.dataset: bad input names file, row and column; good input loads.

Rows are counted the way a spreadsheet shows them: the header is row 1, the first data row is
row 2 (common practice: this is how Excel and LibreOffice Calc number the rows of an opened
CSV file — from memory). Expected values below are written out by hand from the small CSV
files each test builds, or counted from the shipped demo files; facts that rest on no outside
source are marked "common practice", values recalled rather than computed are marked
"from memory".

References used:
* RFC 4180 (CSV): one record per line, first line may be a header, fields with commas,
  quotes or line breaks are quoted.
* The Unicode Standard, ch. 2 / 23: U+FEFF at the start of a UTF-8 file is a byte order mark,
  not part of the text; in ISO-8859-1 (Latin-1) "é" is the single byte 0xE9, which is not
  valid UTF-8 on its own.
* OWASP, "CSV Injection": cells starting with "=", "+", "-" or "@" are read as formulas by
  spreadsheet programs (from memory).
* Python documentation, difflib.get_close_matches: the "did you mean" suggestions.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest
from helpers import stetline_env
from openpyxl import Workbook

import stetline.seed_data as seed_data
from stetline.dataset import Dataset, load_dataset
from stetline.errors import Problem, ValidationError

DEMO_FILES = Path(seed_data.__file__).parent
OBS_HEADER = "entity,topic,period,value"

TOPICS_CSV = (
    "topic,label,unit,better,decimals,category,target\n"
    "recycling,Household recycling rate,percent,higher,1,Environment,50\n"
    "population,Resident population,persons,neutral,0,Population,\n"
)
ENTITIES_CSV = (
    "entity,name,group\n"
    "north-quay,North Quay,Coast\n"
    "tidemere,Tidemere,Estuary\n"
)


# --------------------------------------------------------------------------- helpers


def write(path: Path, text: str | bytes) -> Path:
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8", newline="")
    return path


def load(
    tmp_path: Path, obs: str | bytes, topics: str = TOPICS_CSV, entities: str = ENTITIES_CSV,
) -> Dataset:
    return load_dataset(
        write(tmp_path / "observations.csv", obs),
        write(tmp_path / "topics.csv", topics),
        write(tmp_path / "entities.csv", entities),
    )


def problems_of(
    tmp_path: Path, obs: str | bytes, topics: str = TOPICS_CSV, entities: str = ENTITIES_CSV,
) -> list[Problem]:
    with pytest.raises(ValidationError) as info:
        load(tmp_path, obs, topics, entities)
    problems = info.value.problems
    assert problems, "a ValidationError must list at least one problem"
    return problems


def only(problems: list[Problem]) -> Problem:
    assert len(problems) == 1, problems
    return problems[0]


def rows(*lines: str) -> str:
    return "\n".join((OBS_HEADER, *lines)) + "\n"


# --------------------------------------------------------------------------- columns


@pytest.mark.parametrize(
    ("header", "missing"),
    [
        ("entity,topic,value", ["period"]),
        ("entity,period", ["topic", "value"]),
        ("topic,period,value,margin", ["entity"]),
    ],
)
def test_missing_columns_are_named_with_the_expected_ones(
    tmp_path: Path, header: str, missing: list[str],
) -> None:
    body = ",".join("x" for _ in header.split(","))
    p = only(problems_of(tmp_path, f"{header}\n{body}\n"))
    assert p.file == "observations.csv"
    assert p.row == 1  # the header row (common practice)
    for name in missing:
        assert name in p.message
    assert "missing" in p.message
    assert "expected entity, topic, period, value" in p.message


@pytest.mark.parametrize(
    ("column", "hint"),
    # the closest names by difflib.get_close_matches (Python docs)
    [("margn", "margin"), ("statsu", "status")],
)
def test_unknown_column_suggests_the_nearest_known_one(
    tmp_path: Path, column: str, hint: str,
) -> None:
    p = only(problems_of(tmp_path, f"{OBS_HEADER},{column}\nnorth-quay,recycling,2024,40,1\n"))
    assert (p.file, p.row, p.column) == ("observations.csv", 1, column)
    assert "unknown column" in p.message
    assert f"did you mean {hint!r}" in p.message


# --------------------------------------------------------------------------- values


@pytest.mark.parametrize("bad", ["abc", "12,5", "n/a", "inf", "4O.2"])
def test_a_non_numeric_value_is_named_with_file_row_column_and_the_value_quoted(
    tmp_path: Path, bad: str,
) -> None:
    text = rows("north-quay,recycling,2023,41", f'north-quay,recycling,2024,"{bad}"')
    p = only(problems_of(tmp_path, text))
    # the second data row is spreadsheet row 3 (header row 1, first data row 2: common practice)
    assert (p.file, p.row, p.column) == ("observations.csv", 3, "value")
    assert "not a number" in p.message
    assert repr(bad) in p.message
    assert "observations.csv, row 3, column 'value'" in str(p)


def test_more_than_twenty_bad_values_lists_the_first_twenty_and_counts_the_rest(
    tmp_path: Path,
) -> None:
    lines = [f"north-quay,population,{2000 + i},bad{i}" for i in range(27)]
    problems = problems_of(tmp_path, rows(*lines))
    assert len(problems) == 21
    listed = problems[:20]
    assert [p.row for p in listed] == list(range(2, 22))
    assert all(p.column == "value" for p in listed)
    assert [p.message.split(": ")[-1] for p in listed] == [repr(f"bad{i}") for i in range(20)]
    last = problems[20]
    assert last.message.startswith("… and 7 more")
    assert last.row is None
    assert "… and 7 more" in str(ValidationError(problems))


def test_duplicate_rows_name_the_row_and_the_first_row(tmp_path: Path) -> None:
    text = rows(
        "north-quay,recycling,2024,40",
        "tidemere,recycling,2024,38",
        "north-quay,recycling,2024,41",
    )
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row) == ("observations.csv", 4)
    assert "duplicate" in p.message
    assert "first at row 2" in p.message
    assert "north-quay" in p.message and "2024" in p.message


@pytest.mark.parametrize(
    ("written", "column", "suggested"),
    [
        ("recyclng", "topic", "recycling"),
        ("populaton", "topic", "population"),
        ("north-qauy", "entity", "north-quay"),
    ],
)
def test_a_key_absent_from_the_metadata_suggests_the_closest_known_key(
    tmp_path: Path, written: str, column: str, suggested: str,
) -> None:
    entity, topic = ("north-quay", written) if column == "topic" else (written, "recycling")
    text = rows("tidemere,recycling,2024,38", f"{entity},{topic},2024,40")
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row, p.column) == ("observations.csv", 3, column)
    assert repr(written) in p.message
    assert f"did you mean {suggested!r}" in p.message


def test_mixed_period_formats_are_refused_at_the_odd_row(tmp_path: Path) -> None:
    text = rows(
        "north-quay,recycling,2023,40",
        "north-quay,recycling,2024,41",
        "north-quay,recycling,2024-Q1,41",
    )
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row, p.column) == ("observations.csv", 4, "period")
    assert p.message == (
        "topic 'recycling' mixes period formats: most of its rows are years (like 2025) but this one is a "
        "quarter ('2024-Q1'); a topic's series must be all years, all quarters or all months"
    )


def test_a_topic_mixing_formats_is_named_once_per_odd_format_at_its_first_row(tmp_path: Path) -> None:
    # the topic's most common format is kept; each other format is told at its first row
    text = rows(
        "north-quay,population,2024-Q1,100",
        "north-quay,population,2024-Q2,101",
        "north-quay,population,2024-03,102",
        "north-quay,population,2024,103",
        "north-quay,population,2024-04,104",
        "north-quay,recycling,2024,40",
    )
    found = problems_of(tmp_path, text)
    assert [(p.row, p.column) for p in found] == [(4, "period"), (5, "period")]
    assert all(p.message.startswith("topic 'population' mixes period formats: most of its rows are quarters "
                                    "(like 2025-Q1) but this one is a ") for p in found)
    assert "a month ('2024-03')" in found[0].message and "a year ('2024')" in found[1].message


def test_topics_of_different_formats_share_one_file(tmp_path: Path) -> None:
    text = rows(
        "north-quay,recycling,2024,40",
        "north-quay,recycling,2025,41",
        "north-quay,population,2025-Q2,101",
        "north-quay,population,2025-Q3,102",
    )
    data = load(tmp_path, text)
    assert data.period_format == "mixed"
    time = dict(zip(data.observations["period"], data.observations["time"]))
    # each label keeps its own calendar (common practice: fractional years, as above)
    assert time == {"2024": 2024.0, "2025": 2025.0, "2025-Q2": 2025.25, "2025-Q3": 2025.5}
    assert data.latest_periods == {"year": "2025", "quarter": "2025-Q3"}
    # one topic each: the tie goes to years, so the edition is named by its latest year
    assert data.latest_period == "2025"


@pytest.mark.parametrize("bad", ["24", "2024Q1", "2024-13", "2024-Q5", "FY2024"])
def test_a_period_in_no_known_format_is_refused(tmp_path: Path, bad: str) -> None:
    p = only(problems_of(tmp_path, rows(f"north-quay,recycling,{bad},40")))
    assert (p.row, p.column) == (2, "period")
    assert repr(bad) in p.message


# --------------------------------------------------------------------------- files and keys


@pytest.mark.parametrize(
    "content", [b"", b"\n\n", b"\xef\xbb\xbf", b"  \r\n"],
    ids=["empty", "blank-lines", "bom-only", "spaces"],
)
def test_an_empty_file_is_refused(tmp_path: Path, content: bytes) -> None:
    p = only(problems_of(tmp_path, content))
    assert p.file == "observations.csv"
    assert "empty" in p.message


@pytest.mark.parametrize("header", [OBS_HEADER + "\n", OBS_HEADER, OBS_HEADER + ",margin,status\n"])
def test_a_header_only_file_is_refused(tmp_path: Path, header: str) -> None:
    p = only(problems_of(tmp_path, header))
    assert p.file == "observations.csv"
    assert "no rows" in p.message


def test_an_empty_metadata_file_names_that_file(tmp_path: Path) -> None:
    problems = problems_of(tmp_path, rows("north-quay,recycling,2024,40"), entities="")
    assert [p.file for p in problems] == ["entities.csv"]
    assert "empty" in problems[0].message


@pytest.mark.parametrize("key", ["north/quay", "a/b/c"])
def test_a_key_containing_a_slash_is_refused(tmp_path: Path, key: str) -> None:
    p = only(problems_of(tmp_path, rows(f"{key},recycling,2024,40")))
    assert (p.file, p.row, p.column) == ("observations.csv", 2, "entity")
    assert "'/'" in p.message
    assert repr(key) in p.message


@pytest.mark.parametrize("key", ["=HYPERLINK(1)", "=1+2", "@SUM(A1)", "+44"])
def test_a_formula_like_key_is_refused(tmp_path: Path, key: str) -> None:
    # OWASP "CSV Injection": spreadsheets read cells starting with = + - @ as formulas (from
    # memory); Stetline refuses = + @ (a leading "-" is not refused)
    p = only(problems_of(tmp_path, rows(f'north-quay,"{key}",2024,40')))
    assert (p.file, p.row, p.column) == ("observations.csv", 2, "topic")
    assert "formula" in p.message
    assert repr(key) in p.message


def test_a_formula_like_key_in_the_entities_file_names_that_file(tmp_path: Path) -> None:
    entities = ENTITIES_CSV + "=evil,Evil,Coast\n"
    problems = problems_of(tmp_path, rows("north-quay,recycling,2024,40"), entities=entities)
    p = only(problems)
    assert (p.file, p.row, p.column) == ("entities.csv", 4, "entity")
    assert "formula" in p.message


def test_a_latin1_file_gives_a_clear_message_naming_file_and_row(tmp_path: Path) -> None:
    # Unicode Standard: Latin-1 "é" is the lone byte 0xE9, invalid as UTF-8
    text = rows("north-quay,recycling,2024,40", "bélair,recycling,2024,38")
    data = text.encode("latin-1")
    assert b"\xe9" in data
    p = only(problems_of(tmp_path, data))
    assert p.file == "observations.csv"
    assert p.row == 3
    assert "UTF-8" in p.message
    assert "0xe9" in p.message


def test_a_latin1_entities_file_names_that_file(tmp_path: Path) -> None:
    entities = (ENTITIES_CSV + "sete,Sète,Coast\n").encode("latin-1")
    (tmp_path / "entities.csv").write_bytes(entities)
    with pytest.raises(ValidationError) as info:
        load_dataset(
            write(tmp_path / "observations.csv", rows("north-quay,recycling,2024,40")),
            write(tmp_path / "topics.csv", TOPICS_CSV),
            tmp_path / "entities.csv",
        )
    p = only(info.value.problems)
    assert (p.file, p.row) == ("entities.csv", 4)
    assert "UTF-8" in p.message


def test_a_utf8_file_with_a_byte_order_mark_loads(tmp_path: Path) -> None:
    # Unicode Standard: a leading U+FEFF is a byte order mark, not part of the first column name
    bom = "\ufeff"
    data = load(
        tmp_path,
        (bom + rows("north-quay,recycling,2024,40.5")).encode("utf-8"),
        topics=bom + TOPICS_CSV,
        entities=bom + ENTITIES_CSV + "sete,Sète,Coast\n",
    )
    assert list(data.observations["entity"]) == ["north-quay"]
    assert list(data.observations["value"]) == [40.5]
    assert list(data.topics["topic"]) == ["recycling", "population"]
    assert "Sète" in set(data.entities["name"])


@pytest.mark.parametrize("key", ["007", "NA", "nan", "NULL", "None", "1e3", "0042", "TRUE"])
def test_keys_are_kept_exactly_as_written(tmp_path: Path, key: str) -> None:
    # common practice: an identifier is text; "007" is not the number 7 and "NA" is not missing
    entities = f"entity,name,group\n{key},Town {key},{key}\n"
    text = rows(f"{key},population,2024,1200", f"{key},population,2023,1100")
    data = load(tmp_path, text, entities=entities)
    assert list(data.observations["entity"]) == [key, key]
    assert data.observations["entity"].notna().all()
    assert list(data.entities["entity"]) == [key]
    assert list(data.entities["group"]) == [key]


def test_a_topic_key_na_is_kept(tmp_path: Path) -> None:
    topics = TOPICS_CSV + "NA,Not applicable count,cases,higher,0,Other,\n"
    data = load(tmp_path, rows("north-quay,NA,2024,3"), topics=topics)
    assert list(data.observations["topic"]) == ["NA"]
    assert "NA" in list(data.topics["topic"])


# --------------------------------------------------------------------------- statuses and ranges


@pytest.mark.parametrize(
    ("written", "stored"),
    [
        ("provisional", "provisional"),
        ("break", "break"),
        ("confidential", "confidential"),
        ("estimated", "estimated"),
        ("final", ""),
        ("", ""),
        ("Provisional", "provisional"),
    ],
)
def test_known_statuses_are_accepted(tmp_path: Path, written: str, stored: str) -> None:
    data = load(tmp_path, f"{OBS_HEADER},status\nnorth-quay,recycling,2024,40,{written}\n")
    assert list(data.observations["status"]) == [stored]


@pytest.mark.parametrize("status", ["guess", "prov", "withheld"])
def test_an_unknown_status_is_refused(tmp_path: Path, status: str) -> None:
    text = (
        f"{OBS_HEADER},status\n"
        "north-quay,recycling,2023,40,\n"
        f"north-quay,recycling,2024,40,{status}\n"
    )
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row, p.column) == ("observations.csv", 3, "status")
    assert repr(status) in p.message
    assert "provisional" in p.message  # the message lists what is allowed


@pytest.mark.parametrize("value", ["130", "100.1", "-5"])
def test_a_percent_value_outside_0_to_100_is_refused(tmp_path: Path, value: str) -> None:
    # common practice: a percentage share lies from 0 to 100
    text = rows("north-quay,recycling,2023,40", f"north-quay,recycling,2024,{value}")
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row, p.column) == ("observations.csv", 3, "value")
    assert "percent" in p.message
    assert "recycling" in p.message


@pytest.mark.parametrize("value", ["0", "100", "130"])
def test_values_at_the_percent_bounds_and_counts_over_100_load(tmp_path: Path, value: str) -> None:
    topic = "population" if value == "130" else "recycling"
    data = load(tmp_path, rows(f"north-quay,{topic},2024,{value}"))
    assert list(data.observations["value"]) == [float(value)]


def test_a_negative_margin_is_refused(tmp_path: Path) -> None:
    p = only(problems_of(tmp_path, f"{OBS_HEADER},margin\nnorth-quay,recycling,2024,40,-1.5\n"))
    assert (p.row, p.column) == (2, "margin")


# --------------------------------------------------------------------------- periods


def test_quarters_load_in_time_order(tmp_path: Path) -> None:
    text = rows(
        "north-quay,population,2025-Q3,103",
        "north-quay,population,2025-Q1,101",
        "north-quay,population,2024-Q4,100",
        "north-quay,population,2025-Q2,102",
    )
    data = load(tmp_path, text)
    obs = data.observations
    assert data.period_format == "quarter"
    time = dict(zip(obs["period"], obs["time"]))
    # quarter q of year y starts at y + (q - 1) / 4 (common practice: fractional years)
    assert time == {"2024-Q4": 2024.75, "2025-Q1": 2025.0, "2025-Q2": 2025.25, "2025-Q3": 2025.5}
    assert list(obs.sort_values("time")["period"]) == ["2024-Q4", "2025-Q1", "2025-Q2", "2025-Q3"]
    assert data.latest_period == "2025-Q3"


def test_months_load_in_time_order(tmp_path: Path) -> None:
    text = rows(
        "north-quay,population,2025-03,103",
        "north-quay,population,2024-12,100",
        "north-quay,population,2025-10,110",
        "north-quay,population,2025-01,101",
    )
    data = load(tmp_path, text)
    obs = data.observations
    assert data.period_format == "month"
    time = dict(zip(obs["period"], obs["time"]))
    # month m of year y starts at y + (m - 1) / 12 (common practice: fractional years)
    assert time["2025-01"] == 2025.0
    assert time["2025-03"] == pytest.approx(2025 + 2 / 12)
    assert time["2024-12"] == pytest.approx(2024 + 11 / 12)
    assert list(obs.sort_values("time")["period"]) == ["2024-12", "2025-01", "2025-03", "2025-10"]
    assert data.latest_period == "2025-10"


def test_rows_keep_their_spreadsheet_row_numbers(tmp_path: Path) -> None:
    data = load(tmp_path, rows("north-quay,recycling,2023,40", "north-quay,recycling,2024,41"))
    assert list(data.observations["row"]) == [2, 3]


@pytest.mark.parametrize("blank", ["", ",,,"], ids=["empty-line", "empty-cells"])
def test_a_blank_line_does_not_shift_the_reported_row(tmp_path: Path, blank: str) -> None:
    # spreadsheets show a blank line of a CSV file as an empty row (from memory), so the bad
    # value below sits on row 4
    text = f"{OBS_HEADER}\nnorth-quay,recycling,2023,40\n{blank}\nnorth-quay,recycling,2024,x\n"
    p = only(problems_of(tmp_path, text))
    assert (p.row, p.column) == (4, "value")


def test_rows_after_a_blank_line_keep_their_row_numbers_when_loaded(tmp_path: Path) -> None:
    text = f"{OBS_HEADER}\nnorth-quay,recycling,2023,40\n\nnorth-quay,recycling,2024,41\n"
    data = load(tmp_path, text)
    assert list(data.observations["period"]) == ["2023", "2024"]
    assert list(data.observations["row"]) == [2, 4]


def test_a_header_followed_only_by_blank_lines_has_no_rows(tmp_path: Path) -> None:
    p = only(problems_of(tmp_path, OBS_HEADER + "\n\n,,,\n\n"))
    assert "no rows" in p.message


def test_mixed_period_formats_after_a_blank_line_are_reported(tmp_path: Path) -> None:
    text = (
        f"{OBS_HEADER}\nnorth-quay,recycling,2023,40\n\n"
        "north-quay,recycling,2024,41\nnorth-quay,recycling,2024-Q1,41\n"
    )
    p = only(problems_of(tmp_path, text))
    assert (p.file, p.row, p.column) == ("observations.csv", 5, "period")
    assert "'2024-Q1'" in p.message


# --------------------------------------------------------------------------- workbooks


def test_an_xlsx_workbook_loads_the_same_as_the_csv_files(tmp_path: Path) -> None:
    from_csv = load_dataset(
        DEMO_FILES / "observations-2025.csv", DEMO_FILES / "topics.csv", DEMO_FILES / "entities.csv",
    )
    book = tmp_path / "edition.xlsx"
    with pd.ExcelWriter(book, engine="openpyxl") as writer:
        for sheet in ("topics", "observations", "entities"):  # sheet order must not matter
            file = "observations-2025.csv" if sheet == "observations" else f"{sheet}.csv"
            pd.read_csv(DEMO_FILES / file).to_excel(writer, sheet_name=sheet, index=False)
    from_xlsx = load_dataset(book)
    pd.testing.assert_frame_equal(from_xlsx.observations, from_csv.observations)
    pd.testing.assert_frame_equal(from_xlsx.topics, from_csv.topics)
    pd.testing.assert_frame_equal(from_xlsx.entities, from_csv.entities)
    assert from_xlsx.period_format == from_csv.period_format == "mixed"  # yearly topics and one quarterly
    assert from_xlsx.latest_period == "2025"


def test_an_xlsx_string_key_007_stays_007(tmp_path: Path) -> None:
    book = Workbook()
    sheet = book.active
    sheet.title = "observations"
    obs_lines = (
        [*OBS_HEADER.split(",")], ["007", "recycling", 2024, 41.5], ["NA", "recycling", 2024, 40],
    )
    for line in obs_lines:
        sheet.append(line)
    sheet = book.create_sheet("topics")
    for line in (["topic", "label", "unit", "better", "decimals", "category", "target"],
                 ["recycling", "Recycling", "percent", "higher", 1, "Environment", None]):
        sheet.append(line)
    sheet = book.create_sheet("entities")
    for line in (["entity", "name", "group"], ["007", "Agent town", "A"], ["NA", "North A", "B"]):
        sheet.append(line)
    assert book["observations"]["A2"].data_type == "s"  # written as text, not as the number 7
    path = tmp_path / "keys.xlsx"
    book.save(path)
    data = load_dataset(path)
    assert list(data.observations["entity"]) == ["007", "NA"]
    assert list(data.observations["value"]) == [41.5, 40.0]
    assert list(data.entities["entity"]) == ["007", "NA"]
    assert list(data.topics["decimals"]) == [1]


def test_an_xlsx_problem_names_the_workbook_and_sheet(tmp_path: Path) -> None:
    path = tmp_path / "bad.xlsx"
    with pd.ExcelWriter(path, engine="openpyxl") as writer:
        frame = pd.DataFrame(
            {"entity": ["north-quay"], "topic": ["recycling"], "period": [2024], "value": ["lots"]},
        )
        frame.to_excel(writer, sheet_name="observations", index=False)
    with pytest.raises(ValidationError) as info:
        load_dataset(
            path,
            write(tmp_path / "topics.csv", TOPICS_CSV),
            write(tmp_path / "entities.csv", ENTITIES_CSV),
        )
    p = only(info.value.problems)
    assert (p.file, p.row, p.column) == ("bad.xlsx [observations]", 2, "value")
    assert "'lots'" in p.message


# --------------------------------------------------------------------------- the demo files


def test_the_demo_files_load() -> None:
    data = load_dataset(DEMO_FILES / "observations-2024.csv", DEMO_FILES / "topics.csv", DEMO_FILES / "entities.csv")
    # counted from the shipped files (seed_data/README.md: 14 towns in four groups and three districts,
    # 12 yearly indicators and one quarterly, and the key Larkholt is renamed to in the 2025 edition;
    # the districts report population and recycling for 2020 to 2024)
    assert len(data.entities) == 18
    towns = data.entities.loc[data.entities["parent"] != ""]
    assert len(towns) == 15 and set(towns["group"]) == {"Coast", "Estuary", "Uplands", "Islands"}
    assert set(towns["parent"]) == {"westreach", "eastmarch", "sound-isles"}
    assert len(data.topics) == 13
    # 12 yearly indicators, 14 towns x 5 years; the districts' two, 3 x 2 x 5; one quarterly,
    # 14 towns x 11 quarters (2022-Q1 to 2024-Q3); the age-band rows are breakdowns, not totals
    assert len(data.observations) == 14 * 5 * 12 + 3 * 2 * 5 + 14 * 11
    assert data.period_format == "mixed"
    assert data.latest_period == "2024"
    assert data.latest_periods == {"year": "2024", "quarter": "2024-Q3"}
    assert (data.observations["time"].min(), data.observations["time"].max()) == (2020.0, 2024.5)
    assert data.files == ["observations-2024.csv", "topics.csv", "entities.csv"]


def test_the_2025_demo_file_loads_with_paper_timetables_discontinued() -> None:
    data = load_dataset(DEMO_FILES / "observations-2025.csv", DEMO_FILES / "topics.csv", DEMO_FILES / "entities.csv")
    # seed_data/README.md: paper timetables have no rows in 2025 but stay in topics.csv
    assert "paper-timetables" in set(data.topics["topic"])
    assert "paper-timetables" not in set(data.observations["topic"])
    assert data.latest_period == "2025"


# --------------------------------------------------------------------------- one round of checks

# One file with four kinds of problem: a value that is not a number (row 2), a period that is not
# a period (row 3), an entity (row 4) and a topic (row 5) that the metadata does not name.
FOUR_KINDS = (
    f"{OBS_HEADER}\n"
    "north-quay,recycling,2024,lots\n"
    "tidemere,recycling,last year,41\n"
    "atlantis,recycling,2024,40\n"
    "tidemere,fly-tipping,2024,3\n"
)


def test_one_file_reports_bad_values_periods_and_unknown_names_together(tmp_path: Path) -> None:
    problems = problems_of(tmp_path, FOUR_KINDS)
    where = {(p.file, p.row, p.column) for p in problems}
    assert where == {
        ("observations.csv", 2, "value"), ("observations.csv", 3, "period"),
        ("observations.csv", 4, "entity"), ("observations.csv", 5, "topic"),
    }, problems
    messages = " | ".join(p.message for p in problems)
    assert "'atlantis' is not in the entity metadata" in messages
    assert "'fly-tipping' is not in the topic metadata" in messages


def test_unknown_names_are_not_checked_against_a_broken_metadata_file(tmp_path: Path) -> None:
    broken_topics = TOPICS_CSV.replace("percent,higher,1", "percent,upwards,1")
    problems = problems_of(tmp_path, f"{OBS_HEADER}\ntidemere,recycling,2024,40\n", topics=broken_topics)
    assert [(p.file, p.row, p.column) for p in problems] == [("topics.csv", 2, "better")]


def test_the_cli_reports_all_four_kinds_at_once_and_writes_nothing(demo_path: Path, tmp_path: Path) -> None:
    import subprocess
    import sys

    from stetline.store import ops
    from stetline.workspace import open_workspace

    demo_rows = FOUR_KINDS.replace("north-quay", "heronsford").replace("tidemere", "gorse-point")
    bad = write(tmp_path / "four.csv", demo_rows)
    command = str(Path(sys.executable).parent / "stetline")  # the installed command, run as a subprocess
    done = subprocess.run([command, "load", str(bad), "--by", "admin", "-w", str(demo_path)],
                          capture_output=True, text=True, timeout=300, env=stetline_env(demo_path))
    assert done.returncode != 0 and "Traceback" not in done.stderr
    for line in ("four.csv, row 2, column 'value': the value is not a number: 'lots'",
                 "four.csv, row 3, column 'period': not a period",
                 "four.csv, row 4, column 'entity': entity 'atlantis' is not in the entity metadata",
                 "four.csv, row 5, column 'topic': topic 'fly-tipping' is not in the topic metadata"):
        assert line in done.stderr, done.stderr
    ws = open_workspace(demo_path)
    try:
        with ws.session() as s:
            assert [e.label for e in ops.editions(s)] == ["2024", "2025"]  # a failed load writes nothing
    finally:
        ws.close()
