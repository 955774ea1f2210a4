"""Report layouts: the Markdown and HTML publications are Jinja2 templates a team can copy.

The built-in layouts live in ``engine/layouts``; ``stetline layout copy NAME`` puts one in the
workspace's ``layouts/`` folder, where it takes precedence. Layouts render in the capped
sandbox; the HTML layout escapes every value. The Markdown layout keeps Markdown (emphasis,
links to web addresses) but turns raw HTML in any value (names, labels, units, edition labels,
rewrites, notes) into visible text, and breaks links to anything but http, https and mailto, so
a static site that renders the file shows no markup that came from the data or a rewrite.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

import jinja2
from markupsafe import Markup

from stetline import charts
from stetline.errors import StetlineError
from stetline.publication import (
    CAUTION,
    FIGURE_NOTES,
    RECHECK_MARK,
    WAITING_HEADING,
    WAITING_INTRO,
    Publication,
    Statement,
)
from stetline.publish_structure import figure_cells, figure_headers, sources_line, structure
from stetline.publish_structure import footnotes as caveat_notes
from stetline.sandbox import CappedSandbox

BUILTIN = Path(__file__).parent / "layouts"
LAYOUTS = ("md", "html")


def _statement(st: Statement, numbers: dict[int, int], printed_notes: set[str]) -> dict[str, Any]:
    notes = [n for n in st.notes if n not in printed_notes]  # a note repeated word for word prints once
    printed_notes.update(notes)
    return {"slot": st.slot, "kind": st.kind, "entity": st.entity, "topic": st.topic, "text": st.text,
            "notes": notes, "footnote": numbers.get(id(st)), "status": st.status,
            "mark": RECHECK_MARK if st.status == "recheck" else ""}


def _chart(spec: Any, with_images: bool) -> dict[str, Any] | None:
    if spec is None:
        return None
    return {"caption": spec.caption, "title": spec.title,
            "src": Markup(charts.data_uri(spec)) if with_images else ""}


_FIGURE = re.compile(r"([+\u2212-]?[\d.,]+)\s+(\S.*)")  # a figure and its unit: "+0.3 percentage points"


def shared_unit(cells: list[str]) -> tuple[str, list[str]]:
    """The unit every figure of a table column shares (its plural when both forms occur) and the cells
    without it, so a narrow column shows "+0.3" under "Change (percentage points)"; ("", the cells) when
    they do not share one unit. Figures with their unit joined ("59.3%") and words ("no change") stay whole."""
    found = [m for m in (_FIGURE.fullmatch(c) for c in cells) if m]
    if len({m.group(2).removesuffix("s") for m in found}) != 1:
        return "", cells
    unit = max((m.group(2) for m in found), key=len)
    return unit, [m.group(1) if (m := _FIGURE.fullmatch(c)) else c for c in cells]


def context(pub: Publication, *, with_images: bool = True) -> dict[str, Any]:
    """What a layout template sees: the publication as plain dicts and lists.

    Each section has ``lead`` statements, ``groups`` (heading, entries: heading, statements, figures
    with headers and cells, chart with caption and src), a ranked ``table`` (rows: rank, name, value, change,
    and value_figure and change_figure: without the ``value_unit`` and ``change_unit`` every row shares, ""
    when none), a ``chart`` and
    ``sources``; ``statements`` lists all of the section's statements in order (older layouts).
    """
    sections_ = structure(pub)
    footnotes, numbers = caveat_notes(sections_)
    sections = []
    for index, sec in enumerate(sections_, 1):
        printed: set[str] = set()
        lead = [_statement(st, numbers, printed) for st in sec.lead]
        groups: list[dict[str, Any]] = []
        for group in sec.groups:
            items: list[dict[str, Any]] = []
            for item in group.items:
                seen: set[str] = set()
                figures = None if item.figures is None else {
                    "headers": figure_headers(item.figures), "cells": figure_cells(item.figures)}
                items.append({"key": item.key, "heading": item.heading, "figures": figures,
                              "statements": [_statement(st, numbers, seen) for st in item.statements],
                              "chart": _chart(item.chart, with_images)})
            groups.append({"heading": group.heading, "entries": items})
        flat = lead + [st for g in groups for item in g["entries"] for st in item["statements"]]
        value_unit, values = shared_unit([r.value for r in sec.table])
        change_unit, changes = shared_unit([r.change for r in sec.table])
        table = [{"rank": r.rank, "name": r.name, "value": r.value, "change": r.change, "value_figure": v,
                  "change_figure": c} for r, v, c in zip(sec.table, values, changes)]
        sections.append({"key": sec.key, "heading": sec.heading, "kind": sec.kind, "anchor": f"section-{index}",
                         "lead": lead, "groups": groups, "statements": flat, "table": table,
                         "table_period": sec.table_period, "value_unit": value_unit,
                         "change_unit": change_unit, "noun": pub.entity_noun.capitalize(),
                         "chart": _chart(sec.chart, with_images), "sources": sources_line(sec.sources)})
    return {"title": pub.title, "edition": pub.edition, "date": pub.date, "caution": CAUTION,
            "sections": sections, "footnotes": footnotes, "figure_notes": FIGURE_NOTES,
            "waiting": [{"slot": slot, "reason": reason} for slot, reason in pub.waiting],
            "waiting_heading": WAITING_HEADING, "waiting_intro": WAITING_INTRO, "contents": "Contents"}


# a Markdown link or image target: ](target   — allowed when it is a web or mail address
LINK_TARGET = re.compile(r"\]\(\s*<?(?!https?://|mailto:|#)(?=[a-z][a-z0-9+.-]*:)", re.IGNORECASE)


def markdown_safe(text: str) -> str:
    """A value as Markdown a static site may render: raw HTML shown as text, odd link schemes broken."""
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return LINK_TARGET.sub("]\\(", text)


def _markdown_value(value: Any) -> Any:
    if value is None or isinstance(value, Markup):  # the layout's own text stays as written
        return value
    return markdown_safe(str(value))


def _environment(folder: Path, name: str) -> jinja2.Environment:
    extra: dict[str, Any] = {"finalize": _markdown_value} if name == "md" else {}
    return CappedSandbox(
        loader=jinja2.FileSystemLoader(str(folder)), autoescape=(name == "html"), **extra,
        undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
        steps=None, printed=None, seconds=None,  # a layout prints every statement: capped in size only
    )


def render(pub: Publication, name: str, workspace_dir: Path | None = None) -> str:
    """Render a publication with a layout: the workspace's copy if there is one, else built-in."""
    if name not in LAYOUTS:
        raise StetlineError(f"unknown layout {name!r}; layouts: {', '.join(LAYOUTS)}")
    folder = workspace_dir if workspace_dir is not None and (workspace_dir / f"{name}.j2").exists() else BUILTIN
    try:
        out = _environment(folder, name).get_template(f"{name}.j2").render(context(pub, with_images=name == "html"))
    except jinja2.TemplateError as exc:
        raise StetlineError(f"the {name} layout in {folder} cannot be rendered: {exc}") from None
    return out.rstrip() + "\n"


def copy_layout(folder: Path, name: str, *, force: bool = False) -> Path:
    """Copy a built-in layout into a workspace's layouts folder for the team to edit."""
    from stetline.workspace import copy_builtin

    if name not in LAYOUTS:
        raise StetlineError(f"unknown layout {name!r}; layouts: {', '.join(LAYOUTS)}")
    return copy_builtin(BUILTIN / f"{name}.j2", folder, force=force)
