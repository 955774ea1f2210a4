"""The Word publication opened by an independent word processor: LibreOffice lays it out as a PDF,
and poppler reads the pages back, so the test sees what a reader of the printed report sees."""

from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest
from helpers import Cli, resolve_every_recheck

from stetline.demo import TITLE
from stetline.formats import FIGURE_NOTES

TOOLS = {"soffice": "libreoffice-writer-nogui", "pdftotext": "poppler-utils", "pdftohtml": "poppler-utils"}
HERONSFORD = "Heronsford residents remain among the most satisfied"  # the demo's rewrite, opening words


def _tool(name: str) -> str:
    path = shutil.which(name)
    if path is None:  # never a skip: CI installs these (see .ci/run)
        pytest.fail(f"{name} is not installed; install Debian's {TOOLS[name]} (.ci/run does) to run this test")
    return path


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


def _bookmarks(pdf: Path) -> list[tuple[str, int]]:
    """The PDF's top-level bookmarks (title, page), read by poppler's pdftohtml."""
    import xml.etree.ElementTree as ET

    xml = subprocess.run([_tool("pdftohtml"), "-xml", "-i", "-stdout", str(pdf)], capture_output=True, text=True,
                         timeout=60, check=True).stdout
    start = xml.index("<outline>")
    depth, end = 0, start
    for tag in re.finditer(r"</?outline>", xml[start:]):
        depth += -1 if tag.group().startswith("</") else 1
        if depth == 0:
            end = start + tag.end()
            break
    root = ET.fromstring(xml[start:end])
    return [(item.text or "", int(item.get("page", "0"))) for item in root.findall("item")]


def test_word_publication_lays_out_as_a_readable_report(demo_cli: Cli, tmp_path: Path) -> None:
    soffice, pdftotext = _tool("soffice"), _tool("pdftotext")
    resolve_every_recheck(demo_cli)
    md = tmp_path / "report.md"
    docx_path = tmp_path / "report.docx"
    demo_cli("publish", "--format", "md", "-o", str(md), "--by", "admin")
    demo_cli("publish", "--format", "docx", "-o", str(docx_path), "--by", "admin")

    out = tmp_path / "pdf"
    profile = (tmp_path / "lo-profile").as_uri()
    converted = subprocess.run(
        [soffice, f"-env:UserInstallation={profile}", "--headless", "--convert-to", "pdf",
         "--outdir", str(out), str(docx_path)],
        capture_output=True, text=True, timeout=180,
    )
    pdf = out / "report.pdf"
    assert converted.returncode == 0 and pdf.is_file(), converted.stdout + converted.stderr
    print(f"PDF: {pdf}")

    text = subprocess.run(
        [pdftotext, "-layout", str(pdf), "-"], capture_output=True, text=True, timeout=60, check=True,
    ).stdout
    pages = text.split("\f")
    if pages and not pages[-1].strip():
        pages.pop()
    assert len(pages) > 1, "the report fits on one page: sections or statements are missing"
    assert TITLE in _flat(pages[0])
    flat = _flat(text)
    assert "qualified person must check" in flat
    md_lines = md.read_text(encoding="utf-8").splitlines()
    rewrite = next(line for line in md_lines if line.startswith(HERONSFORD))
    assert _flat(rewrite) in flat  # the whole statement, with the figures the Markdown shows
    lines = [line.strip() for line in text.splitlines()]
    assert FIGURE_NOTES in lines, "the notes on the figures are missing"

    # The section headings, each on a line of its own, are the PDF's top-level bookmarks (LibreOffice
    # makes them from the Heading 1 paragraphs), in the order of the Markdown publication and on
    # pages in that order. A topic's name is also the sub-heading of its item in every entity
    # section, so the headings are told apart by level, not by their words.
    md_headings = [line.removeprefix("## ") for line in md_lines if line.startswith("## ")]
    assert md_headings[0] == "Overview" and len(md_headings) > 3
    # Both close with the caveats as a section of notes.
    expected = md_headings
    assert expected[-1] == FIGURE_NOTES
    assert all(heading in lines for heading in expected)
    top = _bookmarks(pdf)
    assert [title for title, _page in top] == expected
    assert [page for _t, page in top] == sorted(page for _t, page in top)
    assert top[-1][1] > top[0][1]  # the sections run over several pages
    # the contents list each heading with the page it is on, as LibreOffice laid it out (dot leaders)
    for title, page in top:
        shown = next((m.group(1) for line in lines if (m := re.fullmatch(rf"{re.escape(title)}[ .]*(\d+)", line))),
                     None)
        assert shown == str(page), f"contents line of {title!r}: page {shown}, the heading is on page {page}"
