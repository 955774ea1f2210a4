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

TOOLS = {"soffice": "libreoffice-writer-nogui", "pdftotext": "poppler-utils"}
HERONSFORD = "Heronsford residents remain among the most satisfied"  # the demo's rewrite, opening words


def _tool(name: str) -> str:
    path = shutil.which(name)
    if path is None:  # never a skip: CI installs these (see .ci/run)
        pytest.fail(f"{name} is not installed; install Debian's {TOOLS[name]} (.ci/run does) to run this test")
    return path


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


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

    # The section headings, each on a line of its own, in the order of the Markdown publication
    # (a contents list's entries carry page numbers, so they never match a whole line).
    md_headings = [line.removeprefix("## ") for line in md_lines if line.startswith("## ")]
    assert md_headings[0] == "Overview" and len(md_headings) > 3
    # The Markdown gives its caveats as footnotes; the Word document closes with them as a section.
    expected = [*md_headings, FIGURE_NOTES]
    assert [line for line in lines if line in set(expected)] == expected
