"""The Markdown publication carries no raw HTML from the data or from rewrites.

A static site renders a Markdown file's raw HTML as HTML, so the Markdown layout shows every
value's HTML as text (``&lt;script&gt;``) and breaks links whose target is not a web or mail
address; Markdown emphasis and web links stay. Everything goes through the CLI as a subprocess:
a workspace loaded from files whose entity name, topic label and unit hold HTML, an edition
label with HTML, a rewrite and a note with HTML and a script link.
"""

from __future__ import annotations

import csv
import subprocess
import sys
from pathlib import Path

import markdown
from helpers import stetline_env

STETLINE = str(Path(sys.executable).parent / "stetline")  # the installed command, run as a subprocess
HOSTILE_NAME = "Cairn<script>alert('name')</script>brook"
HOSTILE_LABEL = "Recycling <img src=x onerror=alert('label')>"
HOSTILE_UNIT = "<b>tonnes</b>"


def stetline(ws: Path, *args: str) -> subprocess.CompletedProcess[str]:
    done = subprocess.run([STETLINE, *args, "-w", str(ws)], env=stetline_env(ws), capture_output=True, text=True,
                          timeout=300)
    assert done.returncode == 0, done.stderr
    return done


def rewrite_rows(src: Path, dst: Path, change: dict[str, dict[str, str]], key: str) -> None:
    with src.open(newline="", encoding="utf-8-sig") as f:
        rows = list(csv.DictReader(f))
    for row in rows:
        row.update(change.get(row[key], {}))
    with dst.open("w", newline="", encoding="utf-8") as f:
        writer = csv.DictWriter(f, fieldnames=list(rows[0]))
        writer.writeheader()
        writer.writerows(rows)


def test_markdown_shows_html_from_the_data_and_rewrites_as_text(tmp_path: Path, demo_files: Path) -> None:
    ws = tmp_path / "ws"
    entities, topics = tmp_path / "entities.csv", tmp_path / "topics.csv"
    rewrite_rows(demo_files / "entities.csv", entities, {"cairnbrook": {"name": HOSTILE_NAME}}, "entity")
    rewrite_rows(demo_files / "topics.csv", topics, {"recycling": {"label": HOSTILE_LABEL},
                                                     "bus-punctuality": {"unit": HOSTILE_UNIT}}, "topic")
    stetline(ws, "init")
    stetline(ws, "load", str(demo_files / "observations-2025.csv"), "--topics", str(topics),
             "--entities", str(entities), "--edition", "2025<iframe src=x>", "--by", "ed")
    stetline(ws, "rewrite", "blurb/cairnbrook/recycling",
             "**Cairnbrook** <img src=x onerror=alert('rewrite')> see [the council](https://example.org) "
             "or [this](javascript:alert('link')).", "--by", "ed")
    stetline(ws, "annotate", "blurb/cairnbrook/recycling", "A note <style>body{display:none}</style>", "--by", "ed")
    out = tmp_path / "report.md"
    stetline(ws, "publish", "--format", "md", "-o", str(out), "--by", "ed", "--allow-recheck")
    text = out.read_text(encoding="utf-8")
    for raw in ("<script", "<img", "<iframe", "<style", "<b>", "](javascript:"):
        assert raw not in text, raw
    assert "&lt;script&gt;" in text and "&lt;img src=x onerror=alert('rewrite')&gt;" in text
    assert "&lt;iframe src=x&gt;" in text and "&lt;style&gt;" in text and "&lt;b&gt;tonnes&lt;/b&gt;" in text
    assert "**Cairnbrook**" in text and "[the council](https://example.org)" in text  # Markdown stays
    # what a static site makes of it (Python-Markdown, as the web app uses) holds no tag from the data:
    html = markdown.markdown(text)
    for tag in ("<script", "<img", "<iframe", "<style", "<b>", 'href="javascript'):
        assert tag not in html, tag
    assert '<a href="https://example.org">the council</a>' in html
