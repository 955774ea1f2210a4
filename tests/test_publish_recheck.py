"""Publishing while statements wait in recheck: each is marked in every format, and no text the
current data contradict (an earlier rewrite, pin or approved text) is printed."""

from __future__ import annotations

import csv
import json
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path
from typing import Any

import docx
import pytest
from helpers import Cli

from stetline.actions import views
from stetline.publication import RECHECK_MARK, WAITING_HEADING
from stetline.store import ops
from stetline.workspace import open_workspace

FORMATS = ("md", "html", "json", "csv", "docx")
GONE = "blurb/wrackhaven/paper-timetables"  # its topic left the data; a person had worked on it
CLAIMS = "blurb/high-ferrow/bus-punctuality"  # claim-changed: the earlier approved text is contradicted
NUMBERS = "blurb/heronsford/parks-satisfaction"  # numbers-changed with a clean proposal


@pytest.fixture(scope="module")
def waiting(demo_template: Path, tmp_path_factory: pytest.TempPathFactory) -> dict[str, Any]:
    """The demo as built (statements wait in recheck), published with --allow-recheck in every format."""
    root = tmp_path_factory.mktemp("waiting")
    shutil.copytree(demo_template, root / "ws")
    cli = Cli(root / "ws")
    listed = {item["slot"]: item for item in cli.json("list", "--status", "recheck")}
    ws = open_workspace(root / "ws")
    try:
        with ws.reading() as s:
            stale: dict[str, set[str]] = {}
            for v in views(s, ops.SlotFilter(status="recheck")):
                texts = {x.text for x in v.layers if x.text and x.type in ("rewrite", "pin", "annotate")}
                last = ops.last_approval(s, v.slot.id)
                if last is not None:
                    texts.add(last.text)
                stale[v.slot.id] = texts
    finally:
        ws.close()
    files, stderr = {}, {}
    for fmt in FORMATS:
        files[fmt] = root / f"report.{fmt}"
        result = cli("publish", "--format", fmt, "-o", str(files[fmt]), "--allow-recheck", "--by", "admin")
        stderr[fmt] = result.stderr
    return {"listed": listed, "stale": stale, "files": files, "stderr": stderr}


def _printed(waiting: dict[str, Any]) -> dict[str, str]:
    """The text `list --json` says the next publication prints, for each waiting statement that prints one."""
    return {slot: item["text"] for slot, item in waiting["listed"].items() if item["text"] is not None}


def _contradicted(waiting: dict[str, Any]) -> list[str]:
    """Every earlier human or approved text of a waiting statement that differs from what it now prints."""
    printed = _printed(waiting)
    kept = {slot: item["printed"]["notes"] for slot, item in waiting["listed"].items()}
    return [t for slot, texts in waiting["stale"].items() for t in texts
            if t != printed.get(slot) and t not in kept[slot]]


def test_the_demo_has_every_kind_of_wait(waiting: dict[str, Any]) -> None:
    listed = waiting["listed"]
    assert listed[GONE]["recheck"]["reasons"] == ["slot-gone"] and listed[GONE]["text"] is None
    assert "claim-changed" in listed[CLAIMS]["recheck"]["reasons"]
    assert listed[NUMBERS]["recheck"]["reasons"] == ["numbers-changed"] and listed[NUMBERS]["recheck"]["clean"]
    # what is printed follows the rule: new draft, clean proposal, nothing for a gone slot
    assert listed[CLAIMS]["text"] == listed[CLAIMS]["draft"]
    assert listed[NUMBERS]["text"] == listed[NUMBERS]["recheck"]["proposed"]
    assert len(_contradicted(waiting)) >= 5  # the demo's rewrites, pins, notes and approvals that went stale


def test_markdown_marks_each_waiting_statement_and_lists_them(waiting: dict[str, Any]) -> None:
    md = waiting["files"]["md"].read_text(encoding="utf-8")
    for slot, text in _printed(waiting).items():
        assert f"**{RECHECK_MARK}** {text}\n" in md, slot
    closing = md[md.index(f"## {WAITING_HEADING}"):]
    for slot in waiting["listed"]:
        assert f"- `{slot}`: " in closing
    assert f"`{GONE}`: Waits in recheck (slot-gone)" in closing
    for text in _contradicted(waiting):
        assert text not in md


class _Html(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[tuple[str, dict[str, str | None]]] = []
        self.statements: dict[str, dict[str, str]] = {}
        self.waiting: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        a = dict(attrs)
        self.stack.append((tag, a))
        if tag == "p" and a.get("data-slot"):
            self.statements[str(a["data-slot"])] = {"status": str(a.get("data-status")), "mark": "", "text": ""}

    def handle_endtag(self, tag: str) -> None:
        while self.stack and self.stack.pop()[0] != tag:
            pass

    def handle_data(self, data: str) -> None:
        slot = next((a.get("data-slot") for t, a in reversed(self.stack) if t == "p" and a.get("data-slot")), None)
        if slot is not None:
            part = "mark" if any(a.get("class") == "mark" for _t, a in self.stack) else "text"
            self.statements[str(slot)][part] += data
        elif any(a.get("class") == "waiting" for _t, a in self.stack) and self.stack[-1][0] == "code":
            self.waiting.append(data)


def test_html_marks_each_waiting_statement_and_lists_them(waiting: dict[str, Any]) -> None:
    raw = waiting["files"]["html"].read_text(encoding="utf-8")
    reader = _Html()
    reader.feed(raw)
    for slot, text in _printed(waiting).items():
        st = reader.statements[slot]
        assert st["status"] == "recheck" and st["mark"] == RECHECK_MARK and st["text"].strip() == text
    assert all(st["mark"] == "" for slot, st in reader.statements.items() if slot not in waiting["listed"])
    assert sorted(reader.waiting) == sorted(waiting["listed"])
    shown = "\n".join(st["text"] for st in reader.statements.values())
    for text in _contradicted(waiting):
        assert text not in shown


def test_json_status_holds_the_status_word_and_text_the_text_alone(waiting: dict[str, Any]) -> None:
    items = {i["slot"]: i for i in json.loads(waiting["files"]["json"].read_text(encoding="utf-8"))}
    for slot, text in _printed(waiting).items():
        assert items[slot]["status"] == "recheck" and items[slot]["text"] == text
        assert items[slot]["warning"].startswith("Waits in recheck")
        assert items[slot]["provenance"]["approved_by"] is None  # an earlier approval is not carried over
    assert GONE not in items
    assert {i["status"] for i in items.values()} <= {"draft", "edited", "approved", "recheck"}
    everything = json.dumps(items, ensure_ascii=False)
    for text in _contradicted(waiting):
        assert json.dumps(text, ensure_ascii=False) not in everything


def test_csv_status_and_notes_columns(waiting: dict[str, Any]) -> None:
    with waiting["files"]["csv"].open(encoding="utf-8", newline="") as fh:
        rows = {r["slot"]: r for r in csv.DictReader(fh)}
    for slot, text in _printed(waiting).items():
        assert rows[slot]["status"] == "recheck" and rows[slot]["text"] == text
        assert rows[slot]["notes"] == "\n".join(waiting["listed"][slot]["printed"]["notes"])
    assert all(RECHECK_MARK not in r["text"] for r in rows.values())
    for text in _contradicted(waiting):
        assert not any(text in cell for r in rows.values() for cell in r.values())


def test_docx_marks_each_waiting_statement_and_lists_them(waiting: dict[str, Any]) -> None:
    document = docx.Document(str(waiting["files"]["docx"]))
    paragraphs = document.paragraphs
    statements = [p for p in paragraphs if p.style is not None and p.style.name == "Statement"]
    for slot, text in _printed(waiting).items():
        marked = [p for p in statements if p.text == f"{RECHECK_MARK} {text}"]
        assert marked and marked[0].runs[0].bold, slot
    at = next(i for i, p in enumerate(paragraphs) if p.text == WAITING_HEADING and p.style.name == "Heading 1")
    listed = [p.text for p in paragraphs[at + 1:] if p.style.name == "List Bullet"]
    assert sorted(line.split(" ")[0] for line in listed) == sorted(waiting["listed"])
    body = "\n".join(p.text for p in paragraphs)
    for text in _contradicted(waiting):
        assert text not in body


def test_stderr_warnings_use_the_reasons_the_pages_show(waiting: dict[str, Any]) -> None:
    for fmt in FORMATS:
        for slot, item in waiting["listed"].items():
            assert f"warning: {slot}: {item['printed']['reason']}" in waiting["stderr"][fmt]
    assert re.search(r"untraced number", waiting["stderr"]["md"]) is None  # the stale typed numbers are not printed
