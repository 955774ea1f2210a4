"""Render a Publication in the publication formats: Markdown, HTML, JSON, CSV and Word (docx).

Every renderer works from the same Publication (see stetline.publish.gather), so the statements,
their order, the notes and the caveats are the same in every format. Text from the data or from
editors is always treated as text: HTML escapes it, CSV neutralises cells a spreadsheet would run
as a formula, Word gets it in runs with characters XML cannot carry removed.
"""

from __future__ import annotations

import csv
import html
import io
import json
import re
from collections.abc import Callable
from pathlib import Path
from typing import Any

from stetline.numbers import find_numbers, trace
from stetline.publication import CAUTION, RECHECK_MARK, WAITING_HEADING, WAITING_INTRO, Publication, Statement

FORMATS = ("md", "html", "json", "csv", "docx")
BINARY = frozenset({"docx"})
MEDIA_TYPES = {
    "md": "text/markdown; charset=utf-8",
    "html": "text/html; charset=utf-8",
    "json": "application/json",
    "csv": "text/csv; charset=utf-8",
    "docx": "application/vnd.openxmlformats-officedocument.wordprocessingml.document",
}
FIGURE_NOTES = "Notes on the figures"
TOC_INSTRUCTION = 'TOC \\o "1-3" \\h \\z \\u'
CSV_COLUMNS = ("slot", "entity", "topic", "kind", "status", "text", "notes", "entity_name", "topic_label")
NOTES_SEPARATOR = "\n"  # the notes of a statement, one a line, in one CSV cell
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")


def render(pub: Publication, fmt: str, layouts_dir: Path | None = None) -> bytes:
    """A publication in one format, as the bytes of the file (md and html use the layouts)."""
    if fmt in ("md", "html"):
        from stetline import layout

        return layout.render(pub, fmt, layouts_dir).encode("utf-8")
    try:
        renderer = _RENDERERS[fmt]
    except KeyError:
        raise ValueError(f"unknown format {fmt!r}; available: {', '.join(FORMATS)}") from None
    return renderer(pub)


def sources_line(pub: Publication, statements: list[Statement]) -> str | None:
    """The sources of the topics a section's statements use, as one sentence (None if none)."""
    used = sorted({st.topic for st in statements if st.topic and st.topic in pub.sources})
    return "Sources: " + "; ".join(pub.sources[t] for t in used) + "." if used else None


def _caveat_numbers(pub: Publication) -> dict[int, int]:
    """Footnote numbers of the statements with a caveat, keyed by id(), in reading order."""
    numbers: dict[int, int] = {}
    for _key, _heading, statements in pub.sections:
        for st in statements:
            if st.caveat:
                numbers[id(st)] = len(numbers) + 1
    return numbers


def _caveats(pub: Publication) -> list[str]:
    return [st.caveat for _k, _h, sts in pub.sections for st in sts if st.caveat]


def to_html(pub: Publication) -> bytes:
    """A standalone HTML document (inline CSS, no external assets), from the html layout."""
    from stetline import layout

    return layout.render(pub, "html").encode("utf-8")


# -- JSON ------------------------------------------------------------------------------------

def _numbers(st: Statement) -> list[dict[str, Any]]:
    found = []
    for number in find_numbers(st.text):
        facts = trace(number, st.evidence) if st.evidence else []
        found.append({"text": number.text, "fact": facts[0] if facts else None})
    return found


def statement_json(st: Statement, edition: str) -> dict[str, Any]:
    """One published statement as a JSON object."""
    return {
        "slot": st.slot,
        "entity": st.entity,
        "topic": st.topic,
        "kind": st.kind,
        "status": st.status,
        "text": st.text,
        "html": f"<p>{html.escape(st.text, quote=True)}</p>",
        "notes": list(st.notes),
        "caveat": st.caveat,
        "numbers": _numbers(st),
        "provenance": {
            "edition": edition,
            "written_by": st.written_by,
            "approved_by": st.approved_by,
            "approved_at": st.approved_at,
        },
        "warning": st.warning,
    }


def to_json(pub: Publication) -> bytes:
    """A JSON list with one object per published statement, in publication order."""
    items = [statement_json(st, pub.edition) for _k, _h, sts in pub.sections for st in sts]
    return (json.dumps(items, ensure_ascii=False, indent=2) + "\n").encode("utf-8")


# -- CSV -------------------------------------------------------------------------------------

def neutralise(cell: Any) -> str:
    """A cell a spreadsheet will show as text: one starting like a formula gets a leading quote."""
    text = "" if cell is None else str(cell)
    return "'" + text if text.startswith(_FORMULA_START) else text


def to_csv(pub: Publication) -> bytes:
    """One row per published statement, formula-like cells neutralised."""
    buf = io.StringIO(newline="")
    writer = csv.writer(buf)
    writer.writerow(CSV_COLUMNS)
    for _k, _h, statements in pub.sections:
        for st in statements:
            writer.writerow([neutralise(c) for c in (
                st.slot, st.entity, st.topic, st.kind, st.status, st.text, NOTES_SEPARATOR.join(st.notes),
                pub.entity_names.get(st.entity or "", ""), pub.topic_labels.get(st.topic or "", ""),
            )])
    return buf.getvalue().encode("utf-8")


# -- Word ------------------------------------------------------------------------------------

def _x(text: Any) -> str:
    return _NOT_XML.sub("", str(text))


def _styles(document: Any) -> None:
    """Add the paragraph styles a designer restyles: Statement, Note, Source, Caution, Figure Note."""
    from docx.enum.style import WD_STYLE_TYPE
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
    for style in (note, source, caution, figure):
        style.next_paragraph_style = statement


def _toc(document: Any) -> None:
    """A table-of-contents field (Word fills it in when fields are updated, as on opening)."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    document.add_paragraph("Contents", style="TOC Heading")
    field = OxmlElement("w:fldSimple")
    field.set(qn("w:instr"), TOC_INSTRUCTION)
    run = OxmlElement("w:r")
    text = OxmlElement("w:t")
    text.text = "Update this field to show the table of contents."
    run.append(text)
    field.append(run)
    document.add_paragraph()._p.append(field)
    update = OxmlElement("w:updateFields")
    update.set(qn("w:val"), "true")
    document.settings.element.append(update)


def to_docx(pub: Publication) -> bytes:
    """A Word document: Title, Heading 1 per section, Statement and Note styles, figure notes, TOC."""
    import docx

    document = docx.Document()
    _styles(document)
    document.core_properties.title = _x(pub.title)
    document.core_properties.subject = _x(f"Edition {pub.edition}")
    document.add_paragraph(_x(pub.title), style="Title")
    document.add_paragraph(_x(f"Edition {pub.edition} · {pub.date}"), style="Subtitle")
    document.add_paragraph(_x(CAUTION), style="Caution")
    _toc(document)
    numbers = _caveat_numbers(pub)
    for _key, heading, statements in pub.sections:
        document.add_heading(_x(heading), level=1)
        for st in statements:
            paragraph = document.add_paragraph(style="Statement")
            if st.status == "recheck":
                paragraph.add_run(RECHECK_MARK + " ").bold = True
            paragraph.add_run(_x(st.text))
            n = numbers.get(id(st))
            if n is not None:
                paragraph.add_run(str(n)).font.superscript = True
            for note in st.notes:
                p = document.add_paragraph(style="Note")
                p.add_run("Note: ").bold = True
                p.add_run(_x(note))
        line = sources_line(pub, statements)
        if line:
            document.add_paragraph(_x(line), style="Source")
    caveats = _caveats(pub)
    if caveats:
        document.add_heading(FIGURE_NOTES, level=1)
        for n, caveat in enumerate(caveats, 1):
            p = document.add_paragraph(style="Figure Note")
            p.add_run(str(n)).font.superscript = True
            p.add_run(" " + _x(caveat))
    if pub.waiting:
        document.add_heading(WAITING_HEADING, level=1)
        document.add_paragraph(_x(WAITING_INTRO), style="Figure Note")
        for slot, reason in pub.waiting:
            p = document.add_paragraph(style="List Bullet")
            p.add_run(_x(slot)).bold = True
            p.add_run(" " + _x(reason))
    buf = io.BytesIO()
    document.save(buf)
    return buf.getvalue()


_RENDERERS: dict[str, Callable[[Publication], bytes]] = {
    "html": to_html, "json": to_json, "csv": to_csv, "docx": to_docx,
}
