"""Helpers the page groups share: the acting name, safe redirects, Markdown previews, word diffs."""

from __future__ import annotations

from typing import Any

import markdown
import nh3
from flask import request, session as cookie

from engine.livefields import LiveFields
from engine.textmerge import word_diff

DEFAULT_NAME = "web"
MAX_NAME = 100


def acting_name() -> str:
    """Who acts: a name given in the form (then kept in the session cookie), else the kept one."""
    given = (request.form.get("by") or "").strip()[:MAX_NAME]
    if given:
        cookie["by"] = given
        return given
    return str(cookie.get("by") or DEFAULT_NAME)


def current_name() -> str:
    """The name kept in the session cookie, or the default."""
    return str(cookie.get("by") or DEFAULT_NAME)


def safe_next(default: str) -> str:
    """The form's ``next`` address when it is a path on this site, else the default."""
    target = (request.form.get("next") or "").strip()
    if target.startswith("/") and not target.startswith("//") and "\\" not in target:
        return target
    return default


def markdown_html(text: str) -> str:
    """Markdown rendered to HTML and cleaned (scripts, handlers and unknown tags removed)."""
    return nh3.clean(markdown.markdown(text))


def preview_html(live: LiveFields, text: str, evidence: dict[str, dict[str, Any]]) -> str:
    """A rewrite as it would read: live fields rendered, then Markdown, then cleaned."""
    return markdown_html(live.render(text, evidence))


def diff(old: str | None, new: str | None) -> list[tuple[str, str]]:
    """A word-level diff between two texts (either may be missing), neighbouring changes joined.

    Changes separated only by white space read as one removal and one addition, so that a
    rewritten phrase shows as the old phrase struck out and the new one inserted.
    """
    ops = word_diff(old or "", new or "")
    out: list[tuple[str, str]] = []
    i = 0
    while i < len(ops):
        if ops[i][0] == "same":
            out.append(ops[i])
            i += 1
            continue
        removed, added = "", ""
        while i < len(ops):
            op, text = ops[i]
            if op == "del":
                removed += text
            elif op == "add":
                added += text
            elif text.isspace() and i + 1 < len(ops) and ops[i + 1][0] != "same":
                removed += text
                added += text
            else:
                break
            i += 1
        if removed:
            out.append(("del", removed))
        if added:
            out.append(("add", added))
    return out
