"""Helpers the page groups share: the acting name, safe redirects, Markdown previews, word diffs."""

from __future__ import annotations

from typing import Any
from urllib.parse import urlsplit

import markdown
import nh3
from flask import request
from flask import session as cookie

from stetline.livefields import LiveFields
from stetline.textmerge import word_diff
from stetline.web.guard import site_path

DEFAULT_NAME = "web"
MAX_NAME = 100


def acting_name() -> str:
    """Who acts: the signed-in account when the workspace has accounts; else a name given in the
    form (then kept in the session cookie), else the kept one."""
    from stetline.web.auth import accounts_on, signed_in

    if accounts_on():
        who = signed_in()
        return who[0] if who else ""
    given = (request.form.get("by") or "").strip()[:MAX_NAME]
    if given:
        cookie["by"] = given
        return given
    return str(cookie.get("by") or DEFAULT_NAME)


def current_name() -> str:
    """The signed-in account, else the name kept in the session cookie, else the default."""
    from stetline.web.auth import accounts_on, signed_in

    if accounts_on():
        who = signed_in()
        return who[0] if who else ""
    return str(cookie.get("by") or DEFAULT_NAME)


def safe_next(default: str) -> str:
    """The form's ``next`` address when it is a path on this site, else the default."""
    return site_path(request.form.get("next") or "") or default


def _local_images_only(element: str, attribute: str, value: str) -> str | None:
    """Drop an image's address when it names another site (its loading would tell that site who reads)."""
    if element == "img" and attribute == "src":
        parts = urlsplit(value.strip())
        if parts.scheme or parts.netloc or value.strip().startswith(("//", "\\")):
            return None
    return value


def markdown_html(text: str) -> str:
    """Markdown rendered to HTML and cleaned (scripts, handlers, unknown tags and images from
    other sites removed)."""
    return nh3.clean(markdown.markdown(text), attribute_filter=_local_images_only)


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


def highlight(text: str, terms: list[str], *, around: int = 120) -> list[tuple[str, bool]]:
    """A text cut to the stretch around its first match, as (piece, is_match) pairs to mark up.

    Matching ignores case; a long text keeps ``around`` characters either side of the first
    match, with an ellipsis where it was cut.
    """
    low = text.lower()
    wanted = [t.lower() for t in terms if t]
    first = min((i for i in (low.find(t) for t in wanted) if i >= 0), default=0)
    start = max(0, first - around)
    end = min(len(text), first + around * 2)
    if start > 0:
        space = text.find(" ", start)
        start = space + 1 if 0 <= space < first else start
    piece, low_piece = text[start:end], low[start:end]
    marks = [False] * len(piece)
    for t in wanted:
        at = low_piece.find(t)
        while at >= 0:
            for k in range(at, at + len(t)):
                marks[k] = True
            at = low_piece.find(t, at + len(t))
    out: list[tuple[str, bool]] = [("…", False)] if start > 0 else []
    for ch, mark in zip(piece, marks):
        if out and out[-1][1] == mark and out[-1][0] != "…":
            out[-1] = (out[-1][0] + ch, mark)
        else:
            out.append((ch, mark))
    if end < len(text):
        out.append(("…", False))
    return out
