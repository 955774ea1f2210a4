"""Publication formats read back with independent readers: the same statements, order, notes, caveats."""

from __future__ import annotations

import csv
import hashlib
import html as html_mod
import json
import re
import shutil
import zipfile
from html.parser import HTMLParser
from pathlib import Path
from typing import Any
from xml.etree import ElementTree

import docx
import pytest
from helpers import Cli, resolve_every_recheck
from sqlalchemy import select

from stetline.formats import FIGURE_NOTES, PAGE_REFERENCE, neutralise
from stetline.store.models import Event
from stetline.workspace import open_workspace

FORMATS = ("md", "html", "json", "csv", "docx")
TAMPERED = "blurb/north-quay/recycling"
TAMPERED_TEXT = '=1+2 <script>alert("x")</script> & North Quay recycled {{ value }}; 999 bins.'
TAMPERED_SHOWN = '=1+2 <script>alert("x")</script> & North Quay recycled 46.5%; 999 bins.'
NOTE = "The harbour regeneration opened two business parks in North Quay in 2023."
WRACKHAVEN = "blurb/wrackhaven/recycling"
WRACKHAVEN_TEXT = ("The household recycling rate in Wrackhaven has improved for four years in a row, "
                   "to 45.7% (provisional)")


@pytest.fixture(scope="module")
def published(demo_template: Path, tmp_path_factory: pytest.TempPathFactory) -> dict[str, Any]:
    """A resolved copy of the demo, with one hostile rewrite, published in every format."""
    root = tmp_path_factory.mktemp("formats")
    shutil.copytree(demo_template, root / "ws")
    cli = Cli(root / "ws")
    # the part kinds are drafted too, so they fold beneath their blurbs (set here, not left to the default)
    cli("settings", "kinds", "headline,profile,roundup,blurb,standing,change,trend,leaders,movement", "--by", "admin")
    cli("redraft", "--by", "admin")
    resolve_every_recheck(cli)
    cli("rewrite", TAMPERED, TAMPERED_TEXT, "--by", "editor")
    files = {}
    for fmt in FORMATS:
        files[fmt] = root / f"report.{fmt}"
        result = cli("publish", "--format", fmt, "-o", str(files[fmt]), "--by", "admin")
        assert f"wrote {files[fmt]}" in result.stdout
    return {"cli": cli, "files": files, "path": root / "ws"}


# -- independent readers ---------------------------------------------------------------------

def read_md(path: Path) -> dict[str, Any]:
    """The Markdown file's texts as a reader sees them once rendered (character references read)."""
    statements, notes, footnotes, refs = [], [], [], []
    for line in html_mod.unescape(path.read_text(encoding="utf-8")).splitlines():
        if not line or line.startswith(("#", "Edition ", "Sources: ", "Source: ", "|", "*Chart: ")):
            continue
        if line.startswith("> **Note:** "):
            notes.append(line.removeprefix("> **Note:** "))
        elif line.startswith("> "):
            continue
        elif m := re.match(r"\[\^(\d+)\]: (.*)", line):
            footnotes.append(m.group(2))
        else:
            m = re.search(r"\[\^(\d+)\]$", line)
            refs.append(int(m.group(1)) if m else None)
            statements.append(line[:m.start()] if m else line)
    return {"statements": statements, "notes": notes, "footnotes": footnotes, "refs": refs}


class HtmlReader(HTMLParser):
    """Collects headings, statements (without their footnote marks), notes and footnotes."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[str] = []
        self.h2: list[str] = []
        self.statements: list[dict[str, Any]] = []
        self.notes: list[str] = []
        self.footnotes: dict[str, str] = {}
        self.sources: list[str] = []
        self.images: list[dict[str, str | None]] = []
        self.caution = ""
        self.edition = ""
        self.title = ""
        self._stack: list[tuple[str, dict[str, str | None]]] = []
        self._buf: list[str] = []
        self._in_sup = False

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        a = dict(attrs)
        self.tags.append(tag)
        if tag == "sup":
            self._in_sup = True
        elif tag == "a" and self._in_sup and self._stack:
            self._stack[-1][1]["ref"] = a.get("href")
        if tag == "img":
            self.images.append(a)
        if tag in ("h1", "h2", "p", "aside", "li"):
            self._stack.append((tag, a))
            self._buf = []

    def handle_endtag(self, tag: str) -> None:
        if tag == "sup":
            self._in_sup = False
            return
        if not self._stack or self._stack[-1][0] != tag:
            return
        _tag, a = self._stack.pop()
        text = "".join(self._buf).strip()
        cls = a.get("class")
        if tag == "h1":
            self.title = text
        elif tag == "h2":
            self.h2.append(text)
        elif tag == "p" and cls == "statement":
            self.statements.append({"text": text, "slot": a.get("data-slot"), "ref": a.get("ref")})
        elif tag == "p" and cls == "edition":
            self.edition = text
        elif tag == "p" and cls == "caution":
            self.caution = text
        elif tag == "p" and cls == "source":
            self.sources.append(text)
        elif tag == "aside" and cls == "note":
            self.notes.append(text.removeprefix("Note:").strip())
        elif tag == "li" and (a.get("id") or "").startswith("fn"):
            self.footnotes[a.get("id") or ""] = text.rstrip("↩").strip()

    def handle_data(self, data: str) -> None:
        if not self._in_sup:
            self._buf.append(data)


def read_html(path: Path) -> HtmlReader:
    reader = HtmlReader()
    reader.feed(path.read_text(encoding="utf-8"))
    reader.close()
    return reader


def docx_statement(paragraph: Any) -> tuple[str, int | None]:
    """A Statement paragraph's text without its reference number, and the number."""
    text = "".join(r.text for r in paragraph.runs if not r.font.superscript)
    refs = [int(r.text) for r in paragraph.runs if r.font.superscript]
    return text, refs[0] if refs else None


# -- the same statements in every format -----------------------------------------------------

def test_every_format_has_the_statements_in_the_markdown_order(published: dict[str, Any]) -> None:
    files = published["files"]
    md = read_md(files["md"])["statements"]
    assert len(md) > 100
    assert TAMPERED_SHOWN in md
    html_statements = [s["text"] for s in read_html(files["html"]).statements]
    items = json.loads(files["json"].read_text(encoding="utf-8"))
    with files["csv"].open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    document = docx.Document(str(files["docx"]))
    docx_statements = [docx_statement(p)[0] for p in document.paragraphs if p.style.name == "Statement"]
    assert html_statements == md
    assert [item["text"] for item in items] == md
    assert docx_statements == md
    csv_text = [row["text"] for row in rows]
    assert csv_text == [("'" + t if t.startswith(("=", "+", "-", "@")) else t) for t in md]
    assert [row["slot"] for row in rows] == [item["slot"] for item in items]
    assert [s["slot"] for s in read_html(files["html"]).statements] == [item["slot"] for item in items]
    assert "Printed timetables were withdrawn" not in " ".join(md)  # gone slots stay out


def test_notes_appear_in_every_format(published: dict[str, Any]) -> None:
    files = published["files"]
    md_notes = read_md(files["md"])["notes"]
    assert NOTE in md_notes
    assert read_html(files["html"]).notes == md_notes
    items = {item["slot"]: item for item in json.loads(files["json"].read_text(encoding="utf-8"))}
    assert items["profile/north-quay"]["notes"] == [NOTE]
    assert [n for item in items.values() for n in item["notes"]] == md_notes
    document = docx.Document(str(files["docx"]))
    paragraphs = document.paragraphs
    notes = [p.text.removeprefix("Note: ") for p in paragraphs if p.style.name == "Note"]
    assert notes == md_notes
    at = next(i for i, p in enumerate(paragraphs) if p.style.name == "Note" and NOTE in p.text)
    assert paragraphs[at - 1].style.name == "Statement"  # the note follows its statement
    assert "North Quay" in paragraphs[at - 1].text


def test_provisional_caveats_are_numbered_footnotes(published: dict[str, Any]) -> None:
    files = published["files"]
    md = read_md(files["md"])
    assert md["footnotes"] and all("provisional" in f or "estimated" in f for f in md["footnotes"])
    wrack = next(i for i, s in enumerate(md["statements"]) if s.startswith(WRACKHAVEN_TEXT))
    number = md["refs"][wrack]
    assert number is not None

    page = read_html(files["html"])
    assert [page.footnotes[f"fn{i}"] for i in range(1, len(md["footnotes"]) + 1)] == md["footnotes"]
    assert len(page.footnotes) == len(md["footnotes"])
    statement = next(s for s in page.statements if s["slot"] == WRACKHAVEN)
    assert statement["ref"] == f"#fn{number}"
    assert page.footnotes[f"fn{number}"] == "The 2025 figure is provisional."
    assert [s["ref"] for s in page.statements] == [None if r is None else f"#fn{r}" for r in md["refs"]]
    assert page.h2[-1] == FIGURE_NOTES

    items = json.loads(files["json"].read_text(encoding="utf-8"))
    caveats = [item["caveat"] for item in items if item["caveat"]]
    assert list(dict.fromkeys(caveats)) == md["footnotes"] and len(caveats) > len(md["footnotes"])  # merged
    assert next(item for item in items if item["slot"] == WRACKHAVEN)["caveat"] == "The 2025 figure is provisional."

    document = docx.Document(str(files["docx"]))
    paragraphs = document.paragraphs
    refs = [docx_statement(p)[1] for p in paragraphs if p.style.name == "Statement"]
    assert refs == md["refs"]
    start = next(i for i, p in enumerate(paragraphs) if p.style.name == "Heading 1" and p.text == FIGURE_NOTES)
    figure_notes = [p for p in paragraphs[start + 1:] if p.text.strip()]
    assert [p.text for p in figure_notes] == [f"{i} {f}" for i, f in enumerate(md["footnotes"], 1)]
    assert all(p.runs[0].font.superscript for p in figure_notes)


# -- HTML -------------------------------------------------------------------------------------

def test_html_is_standalone_and_escapes_all_text(published: dict[str, Any]) -> None:
    raw = published["files"]["html"].read_text(encoding="utf-8")
    page = read_html(published["files"]["html"])
    assert page.title == "Kestrel Sound Regional Council: Service Scorecard"
    assert page.edition.startswith("Edition 2025 · ")
    assert "qualified person must check" in page.caution
    assert "script" not in page.tags and "link" not in page.tags
    assert len(page.images) > 100  # a chart per blurb and per topic, drawn inside the file
    assert all((i.get("src") or "").startswith("data:image/svg+xml;base64,") and i.get("alt") for i in page.images)
    assert "style" in page.tags
    # escaped (markupsafe writes a double quote as &#34;, html.escape as &quot;: both are HTML)
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt; &amp; North Quay" in raw
    assert TAMPERED_SHOWN in [s["text"] for s in page.statements]
    assert page.h2[:2] == ["Contents", "Overview"] and "North Quay" in page.h2 and "Puffin Holm" in page.h2
    assert "Household recycling rate" in page.h2  # the topic sections follow the entity sections
    assert any("Council waste returns" in s for s in page.sources)


def test_html_sections_by_topic(published: dict[str, Any], tmp_path: Path, demo_files: Path) -> None:
    out = tmp_path / "by-topic.html"
    published["cli"]("publish", "--format", "html", "--sections", "topic", "-o", str(out), "--by", "admin")
    page = read_html(out)
    with (demo_files / "topics.csv").open(encoding="utf-8") as fh:
        labels = [row["label"] for row in csv.DictReader(fh)]
    assert "Household recycling rate" in page.h2
    assert set(page.h2) - {"Contents", "Overview", FIGURE_NOTES} <= set(labels)
    assert "North Quay" not in page.h2


# -- JSON -------------------------------------------------------------------------------------

def test_json_traces_numbers_and_gives_provenance(published: dict[str, Any]) -> None:
    items = {i["slot"]: i for i in json.loads(published["files"]["json"].read_text(encoding="utf-8"))}
    wrack = items[WRACKHAVEN]
    assert wrack["entity"] == "wrackhaven" and wrack["topic"] == "recycling" and wrack["kind"] == "blurb"
    assert {"text": "45.7%", "fact": "value"} in wrack["numbers"]
    assert {"text": "50.0%", "fact": "target"} in wrack["numbers"]
    assert wrack["provenance"]["edition"] == "2025"
    assert wrack["provenance"]["written_by"] is None
    tampered = items[TAMPERED]
    assert tampered["status"] == "edited"
    assert tampered["text"] == TAMPERED_SHOWN
    assert tampered["html"] == (
        "<p>=1+2 &lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; North Quay recycled 46.5%; 999 bins.</p>")
    assert {"text": "46.5%", "fact": "value"} in tampered["numbers"]
    assert {"text": "999", "fact": None} in tampered["numbers"]
    assert tampered["provenance"]["written_by"] == "editor"
    assert tampered["provenance"]["approved_by"] is None
    pinned = items["roundup/broadband"]
    assert pinned["provenance"]["written_by"] == "editor"
    approved = [i for i in items.values() if i["status"] == "approved"]
    assert approved and all(i["provenance"]["approved_by"] == "reviewer" for i in approved)
    assert all(re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ", i["provenance"]["approved_at"]) for i in approved)


# -- CSV --------------------------------------------------------------------------------------

@pytest.mark.parametrize("cell, expected", [
    ("=SUM(A1)", "'=SUM(A1)"),
    ("@cmd", "'@cmd"),
    ("+44 1234", "'+44 1234"),
    ("-2+3", "'-2+3"),
    ("North Quay", "North Quay"),
    ("", ""),
    (None, ""),
    ("a=b", "a=b"),
])
def test_neutralise_formula_like_cells(cell: str | None, expected: str) -> None:
    assert neutralise(cell) == expected


def test_csv_columns_names_and_neutralised_rewrite(published: dict[str, Any]) -> None:
    with published["files"]["csv"].open(encoding="utf-8", newline="") as fh:
        reader = csv.DictReader(fh)
        rows = {row["slot"]: row for row in reader}
        assert reader.fieldnames == ["slot", "entity", "topic", "kind", "status", "text", "notes", "entity_name",
                                     "topic_label", "section", "category", "role", "value", "rank", "rank_of",
                                     "change", "previous", "chart"]
    assert rows[TAMPERED]["text"] == "'" + TAMPERED_SHOWN
    assert rows[TAMPERED]["status"] == "edited" and rows["headline"]["status"] == "approved"
    assert rows["profile/north-quay"]["notes"].split("\n") == [NOTE] and rows[TAMPERED]["notes"] == ""
    assert rows[WRACKHAVEN]["entity_name"] == "Wrackhaven" and rows[WRACKHAVEN]["section"] == "Wrackhaven"
    # the fixture drafts the part kinds too: a standing statement is a part of the blurb it folds beneath
    assert rows[WRACKHAVEN]["category"] == "Environment" and rows["standing/wrackhaven/recycling"]["role"] == "part"
    assert rows[WRACKHAVEN]["role"] == "composed" and rows[WRACKHAVEN]["value"] == "45.7%"
    assert rows[WRACKHAVEN]["topic_label"] == "Household recycling rate"
    assert rows["headline"]["entity"] == "" and rows["headline"]["entity_name"] == ""
    assert not any(cell.startswith(("=", "+", "-", "@")) for row in rows.values() for cell in row.values())


# -- Word -------------------------------------------------------------------------------------

def test_docx_structure_styles_and_toc(published: dict[str, Any], demo_files: Path) -> None:
    path = published["files"]["docx"]
    document = docx.Document(str(path))
    styles = {s.name: s for s in document.styles}
    from docx.enum.style import WD_STYLE_TYPE
    assert styles["Statement"].type == WD_STYLE_TYPE.PARAGRAPH
    assert styles["Note"].type == WD_STYLE_TYPE.PARAGRAPH
    paragraphs = document.paragraphs
    assert paragraphs[0].style.name == "Title"
    assert paragraphs[0].text == "Kestrel Sound Regional Council: Service Scorecard"
    assert document.core_properties.title == paragraphs[0].text
    headings = [p.text for p in paragraphs if p.style.name == "Heading 1"]
    with (demo_files / "entities.csv").open(encoding="utf-8") as fh:
        # Larkholt left the data at the 2025 load, renamed Larkholt Vale (seed_data/renames-2025.csv)
        towns = [row["name"] for row in csv.DictReader(fh) if row["entity"] != "larkholt"]
    with (demo_files / "topics.csv").open(encoding="utf-8") as fh:
        labels = [row["label"] for row in csv.DictReader(fh) if row["topic"] != "paper-timetables"]
    assert headings[:len(towns) + 1] == ["Overview", *towns] and headings[-1] == FIGURE_NOTES
    assert sorted(headings[len(towns) + 1:-1]) == sorted(labels)
    contents = [p.text for p in paragraphs if p.style.name == "Contents Entry"]
    assert [c.split("\t")[0] for c in contents] == headings  # the headings shown without refreshing anything
    assert "Environment" in [p.text for p in paragraphs if p.style.name == "Heading 2"]
    assert len(document.tables) > 100 and [c.text for c in document.tables[-1].rows[0].cells][0] == "Rank"
    pictures = document.inline_shapes
    assert len(pictures) > 100 and all(p._inline.docPr.get("descr") for p in pictures)
    assert any("qualified person must check" in p.text for p in paragraphs)
    with zipfile.ZipFile(path) as z:
        body = z.read("word/document.xml").decode("utf-8")
    w = "{http://schemas.openxmlformats.org/wordprocessingml/2006/main}"
    tree = ElementTree.fromstring(body)
    fields = [(f.text or "").strip() for f in tree.iter(f"{w}instrText")]
    # each contents line ends with a page reference to a bookmark that spans its heading
    marks = [b.get(f"{w}name") for p in tree.iter(f"{w}p") for b in p.iter(f"{w}bookmarkStart")
             if any(s.get(f"{w}val") == "Heading1" for s in p.iter(f"{w}pStyle"))]
    assert len(marks) == len(headings) and fields == [PAGE_REFERENCE.format(name=m) for m in marks]
    assert PAGE_REFERENCE.format(name=marks[0]) == f"PAGEREF {marks[0]} \\h"
    tampered = next(p for p in paragraphs if p.style.name == "Statement" and "North Quay recycled" in p.text)
    assert tampered.text == TAMPERED_SHOWN  # stored as text, not markup


def test_docx_needs_an_output_file(published: dict[str, Any]) -> None:
    result = published["cli"]("publish", "--format", "docx", "--by", "admin", ok=False)
    assert result.exit_code == 2
    assert "binary format" in result.stderr and "-o" in result.stderr
    assert result.stdout == ""


def test_each_publication_is_recorded_with_its_checksum(published: dict[str, Any]) -> None:
    ws = open_workspace(published["path"])
    try:
        with ws.session() as session:
            events = session.scalars(select(Event).where(Event.action == "publish").order_by(Event.id)).all()
            recorded: dict[str, str] = {}
            for e in events:  # the fixture's publications come first
                recorded.setdefault(e.detail["format"], e.detail["sha256"])
    finally:
        ws.close()
    for fmt, path in published["files"].items():
        assert recorded[fmt] == hashlib.sha256(path.read_bytes()).hexdigest(), fmt


# -- the gate -----------------------------------------------------------------------------------

@pytest.mark.parametrize("fmt", FORMATS)
def test_the_gate_refuses_every_format_while_a_recheck_is_open(demo_cli: Cli, tmp_path: Path, fmt: str) -> None:
    out = tmp_path / f"report.{fmt}"
    refused = demo_cli("publish", "--format", fmt, "-o", str(out), "--by", "admin", ok=False)
    assert refused.exit_code == 1
    assert "publishing refused" in refused.stderr
    assert "blurb/heronsford/parks-satisfaction" in refused.stderr
    assert not out.exists()


def test_unknown_format_is_refused(demo_cli: Cli) -> None:
    result = demo_cli("publish", "--format", "pdf", "--by", "admin", ok=False)
    assert result.exit_code == 2
    assert "pdf" in result.stderr
