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
from collections.abc import Callable
from pathlib import Path
from typing import Any

from stetline.numbers import find_numbers, trace
from stetline.publication import FIGURE_NOTES as FIGURE_NOTES  # re-exported: one wording in every format
from stetline.publication import Figures, Publication, Statement
from stetline.publish_docx import PAGE_REFERENCE as PAGE_REFERENCE  # re-exported
from stetline.publish_structure import Section, structure

FORMATS = ("md", "html", "json", "csv", "docx")
BINARY = frozenset({"docx"})
MEDIA_TYPES = {
    "md": "text/markdown; charset=utf-8",
    "html": "text/html; charset=utf-8",
    "json": "application/json",
    "csv": "text/csv; charset=utf-8",
    "docx": "application/vnd.openxmlformats-officedocument.wordprocessingml.document",
}
CSV_COLUMNS = ("slot", "entity", "topic", "kind", "status", "text", "notes", "entity_name", "topic_label",
               "section", "category", "role", "value", "rank", "rank_of", "change", "previous", "chart")
NOTES_SEPARATOR = "\n"  # the notes of a statement, one a line, in one CSV cell
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


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


def placed(pub: Publication) -> list[tuple[Section, str, str, Statement, Figures | None, Any]]:
    """Every statement in reading order with its section, sub-heading, role, figures and chart spec.

    The role is "lead" (a section's own statements), "composed" (the first statement of a topic
    within a section: the blurb when it is drafted) or "part" (the statements folded after it).
    """
    out: list[tuple[Section, str, str, Statement, Figures | None, Any]] = []
    for section in structure(pub):
        for st in section.lead:
            out.append((section, "", "lead", st, None, None))
        for group in section.groups:
            for item in group.items:
                for i, st in enumerate(item.statements):
                    out.append((section, group.heading, "part" if i else "composed", st, item.figures, item.chart))
    return out


def _docx(pub: Publication) -> bytes:
    from stetline.publish_docx import to_docx

    return to_docx(pub)


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


def _figures_json(figures: Figures | None) -> dict[str, Any] | None:
    if figures is None:
        return None
    return {"period": figures.period, "value": figures.value, "rank": figures.rank, "rank_of": figures.rank_of,
            "change": figures.change or None, "previous": figures.previous or None,
            "previous_period": figures.previous_period or None}


def statement_json(st: Statement, edition: str) -> dict[str, Any]:
    """One published statement as a JSON object (without its place in the report)."""
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
    """A JSON list with one object per published statement, in reading order, with its place and figures."""
    items = []
    tables_given: set[str] = set()
    for section, category, role, st, figures, chart in placed(pub):
        item = statement_json(st, pub.edition)
        item["section"] = {"key": section.key, "heading": section.heading, "kind": section.kind}
        item["category"] = category or None
        item["role"] = role
        item["figures"] = _figures_json(figures)
        item["chart"] = chart.caption if chart is not None else None
        if role == "lead" and section.kind == "topic" and section.key not in tables_given:
            tables_given.add(section.key)  # the ranked table once, on the section's first statement
            item["ranking"] = [{"rank": r.rank, "name": r.name, "value": r.value, "change": r.change or None}
                               for r in section.table]
            item["chart"] = section.chart.caption if section.chart is not None else None
        items.append(item)
    return (json.dumps(items, ensure_ascii=False, indent=2) + "\n").encode("utf-8")


# -- CSV -------------------------------------------------------------------------------------

def neutralise(cell: Any) -> str:
    """A cell a spreadsheet will show as text: one starting like a formula gets a leading quote."""
    text = "" if cell is None else str(cell)
    return "'" + text if text.startswith(_FORMULA_START) else text


def to_csv(pub: Publication) -> bytes:
    """One row per published statement in reading order, with its place and figures; formula-like cells neutralised."""
    buf = io.StringIO(newline="")
    writer = csv.writer(buf)
    writer.writerow(CSV_COLUMNS)
    for section, category, role, st, figures, chart in placed(pub):
        f = figures
        writer.writerow([neutralise(c) for c in (
            st.slot, st.entity, st.topic, st.kind, st.status, st.text, NOTES_SEPARATOR.join(st.notes),
            pub.entity_names.get(st.entity or "", ""), pub.topic_labels.get(st.topic or "", ""),
            section.heading, category, role, f.value if f else "", f.rank if f else "", f.rank_of if f else "",
            f.change if f else "", f.previous if f else "", chart.caption if chart is not None else "",
        )])
    return buf.getvalue().encode("utf-8")


_RENDERERS: dict[str, Callable[[Publication], bytes]] = {
    "html": to_html, "json": to_json, "csv": to_csv, "docx": _docx,
}
