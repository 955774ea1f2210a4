"""The Word report: the same structure as the HTML one, with real tables, charts as images and a contents list.

Title, then the caution, then a contents list written from the section headings, each line a link
with a page reference field that the word processor fills in as it lays out the pages.
Each section is a Heading 1; categories are Heading 2, topics Heading 3. Figure tables are Word
tables; charts are PNG images (stetline.charts) whose alternative text is the caption stating the
numbers. Text from the data or from editors goes into runs with characters XML cannot carry removed.
"""

from __future__ import annotations

import io
import re
from typing import Any
from weakref import WeakKeyDictionary

from stetline import charts
from stetline.publication import (
    CAUTION,
    FIGURE_NOTES,
    RECHECK_MARK,
    WAITING_HEADING,
    WAITING_INTRO,
    Publication,
    Statement,
)
from stetline.publish_structure import figure_cells, figure_headers, footnotes, sources_line, structure

PAGE_REFERENCE = "PAGEREF {name} \\h"  # a contents line's page number: the page of the heading's bookmark
CONTENTS = "Contents"
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")


def _x(text: Any) -> str:
    return _NOT_XML.sub("", str(text))


_style_ids: WeakKeyDictionary[Any, dict[str, str]] = WeakKeyDictionary()


def _style_id(document: Any, name: str) -> str:
    """A style's id, looked up once per document (python-docx searches every style on each lookup by name)."""
    ids = _style_ids.setdefault(document.part, {})
    if name not in ids:
        ids[name] = document.styles[name].style_id
    return ids[name]


def _para(document: Any, style: str, text: str = "") -> Any:
    """A new paragraph in a style (by name), with its text when given."""
    paragraph = document.add_paragraph(text)
    paragraph._p.style = _style_id(document, style)
    return paragraph


def _styles(document: Any) -> None:
    """Add the paragraph styles a designer restyles: Statement, Note, Source, Caution, Figure Note."""
    from docx.enum.style import WD_STYLE_TYPE
    from docx.enum.text import WD_TAB_ALIGNMENT, WD_TAB_LEADER
    from docx.shared import Cm, Pt, RGBColor

    styles = document.styles
    normal = styles["Normal"]

    def add(name: str) -> Any:
        style = styles.add_style(name, WD_STYLE_TYPE.PARAGRAPH)
        style.base_style = normal
        style.quick_style = True
        return style

    statement = add("Statement")
    statement.paragraph_format.space_after = Pt(8)
    note = add("Note")
    note.font.italic = True
    note.paragraph_format.left_indent = Cm(1)
    note.paragraph_format.space_after = Pt(8)
    source = add("Source")
    source.font.size = Pt(9)
    source.font.color.rgb = RGBColor(0x55, 0x55, 0x55)
    caution = add("Caution")
    caution.font.italic = True
    caution.paragraph_format.space_after = Pt(12)
    figure = add("Figure Note")
    figure.font.size = Pt(9)
    entry = add("Contents Entry")
    entry.paragraph_format.space_after = Pt(2)
    page = document.sections[0]
    text_width = page.page_width - page.left_margin - page.right_margin  # page numbers at the right margin
    entry.paragraph_format.tab_stops.add_tab_stop(text_width, WD_TAB_ALIGNMENT.RIGHT, WD_TAB_LEADER.DOTS)
    for style in (note, source, caution, figure):
        style.next_paragraph_style = statement


def _field_char(kind: str) -> Any:
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    char = OxmlElement("w:fldChar")
    char.set(qn("w:fldCharType"), kind)
    return char


def _bookmark(paragraph: Any, name: str, number: int) -> None:
    """Mark a whole paragraph (a section heading) with a bookmark the contents' page references point to."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    start, end = OxmlElement("w:bookmarkStart"), OxmlElement("w:bookmarkEnd")
    start.set(qn("w:id"), str(number))
    start.set(qn("w:name"), name)
    end.set(qn("w:id"), str(number))
    paragraph._p.insert(1 if paragraph._p.pPr is not None else 0, start)
    paragraph._p.append(end)


def _field(paragraph: Any, instruction: str, shown: str = "") -> None:
    """A complete field in a paragraph: its instruction and the result shown until it is updated."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    paragraph.add_run()._r.append(_field_char("begin"))
    instr = OxmlElement("w:instrText")
    instr.set(qn("xml:space"), "preserve")
    instr.text = f" {instruction} "
    paragraph.add_run()._r.append(instr)
    paragraph.add_run()._r.append(_field_char("separate"))
    paragraph.add_run(shown)
    paragraph.add_run()._r.append(_field_char("end"))


def _contents(document: Any, headings: list[str]) -> list[str]:
    """The contents: a line per heading, written from the headings (shown without refreshing anything),
    each a link to its heading's bookmark followed by a PAGEREF field to it, so the word processor puts
    in the page numbers as it lays the pages out. (LibreOffice keeps a TOC field's shown result as
    plain text and drops the page references inside it, so the list is not wrapped in a TOC field.)
    Returns the bookmark names, one per heading, for ``_bookmark``."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    _para(document, "TOC Heading", CONTENTS)
    names = [f"_Toc{n:06d}" for n in range(1, len(headings) + 1)]
    for heading, name in zip(headings, names):
        paragraph = _para(document, "Contents Entry")
        link = OxmlElement("w:hyperlink")
        link.set(qn("w:anchor"), name)
        link.set(qn("w:history"), "1")
        link.append(paragraph.add_run(_x(heading))._r)
        paragraph._p.append(link)
        paragraph.add_run("\t")
        _field(paragraph, PAGE_REFERENCE.format(name=name))
    update = OxmlElement("w:updateFields")  # Word offers to fill in the page numbers on opening
    update.set(qn("w:val"), "true")
    document.settings.element.append(update)
    return names


def _statement(document: Any, st: Statement, numbers: dict[int, int], printed: set[str]) -> None:
    paragraph = _para(document, "Statement")
    if st.status == "recheck":
        paragraph.add_run(RECHECK_MARK + " ").bold = True
    paragraph.add_run(_x(st.text))
    n = numbers.get(id(st))
    if n is not None:
        paragraph.add_run(str(n)).font.superscript = True
    for note in st.notes:
        if note in printed:  # a note repeated word for word prints once
            continue
        printed.add(note)
        p = _para(document, "Note")
        p.add_run("Note: ").bold = True
        p.add_run(_x(note))


def _table(document: Any, headers: list[str], rows: list[list[str]]) -> None:
    from docx.enum.table import WD_TABLE_ALIGNMENT

    table = document.add_table(rows=1, cols=len(headers))
    table._tbl.tblStyle_val = _style_id(document, "Light List Accent 1")
    table.alignment = WD_TABLE_ALIGNMENT.LEFT
    for cell, text in zip(table.rows[0].cells, headers):
        cell.text = _x(text)
    for row in rows:
        for cell, text in zip(table.add_row().cells, row):
            cell.text = _x(text)
    document.add_paragraph()


def _chart(document: Any, spec: Any, width_cm: float) -> None:
    from docx.shared import Cm

    paragraph = document.add_paragraph()
    shape = paragraph.add_run().add_picture(io.BytesIO(charts.render(spec, "png")), width=Cm(width_cm))
    shape._inline.docPr.set("descr", _x(spec.caption))  # the alternative text
    shape._inline.docPr.set("title", _x(spec.title))
    _para(document, "Caption", _x(spec.caption))


def to_docx(pub: Publication) -> bytes:
    """A Word document: Title, contents, Heading 1 per section, categories, figure tables, charts, notes."""
    import docx

    sections = structure(pub)
    notes, numbers = footnotes(sections)
    document = docx.Document()
    _styles(document)
    document.core_properties.title = _x(pub.title)
    document.core_properties.subject = _x(f"Edition {pub.edition}")
    _para(document, "Title", _x(pub.title))
    _para(document, "Subtitle", _x(f"Edition {pub.edition} · {pub.date}"))
    _para(document, "Caution", _x(CAUTION))
    extra = ([FIGURE_NOTES] if notes else []) + ([WAITING_HEADING] if pub.waiting else [])
    marks = iter(enumerate(_contents(document, [s.heading for s in sections] + extra), 1))

    def heading(text: str) -> None:
        number, name = next(marks)
        _bookmark(_para(document, "Heading 1", text), name, number)

    for section in sections:
        heading(_x(section.heading))
        printed: set[str] = set()
        for st in section.lead:
            _statement(document, st, numbers, printed)
        if section.table:
            _table(document, ["Rank", pub.entity_noun.capitalize(), section.table_period, "Change"],
                   [[r.rank, r.name, r.value, r.change or "–"] for r in section.table])
        if section.chart is not None:
            _chart(document, section.chart, 14)
        for group in section.groups:
            _para(document, "Heading 2", _x(group.heading))
            for item in group.items:
                _para(document, "Heading 3", _x(item.heading))
                seen: set[str] = set()
                for st in item.statements:
                    _statement(document, st, numbers, seen)
                if item.figures is not None:
                    _table(document, figure_headers(item.figures), [figure_cells(item.figures)])
                if item.chart is not None:
                    _chart(document, item.chart, 11)
        line = sources_line(section.sources)
        if line:
            _para(document, "Source", _x(line))
    if notes:
        heading(FIGURE_NOTES)
        for n, caveat in enumerate(notes, 1):
            p = _para(document, "Figure Note")
            p.add_run(str(n)).font.superscript = True
            p.add_run(" " + _x(caveat))
    if pub.waiting:
        heading(WAITING_HEADING)
        _para(document, "Figure Note", _x(WAITING_INTRO))
        for slot, reason in pub.waiting:
            p = _para(document, "List Bullet")
            p.add_run(_x(slot)).bold = True
            p.add_run(" " + _x(reason))
    buf = io.BytesIO()
    document.save(buf)
    return buf.getvalue()
