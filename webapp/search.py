"""Search: every statement text (current drafts, rewrites, pins), note and comment holding all
the words of a query, fifty to a page."""

from __future__ import annotations

from flask import Blueprint, render_template, request, url_for

from stetline.store import ops
from stetline.web.common import highlight
from stetline.web.db import session

bp = Blueprint("search", __name__)

MAX_QUERY = 200
PLACES = {"draft": "draft", "rewrite": "rewrite", "pin": "pinned text", "note": "note", "comment": "comment",
          "send-back": "sent back"}


@bp.get("/search")
def results() -> str:
    """Show the results of a search."""
    query = (request.args.get("q") or "").strip()[:MAX_QUERY]
    try:
        page = max(1, int(request.args.get("page", "1")))
    except ValueError:
        page = 1
    found = None
    hits = []
    terms = ops.search_terms(query)
    if terms:
        found = ops.search(session(), query, limit=ops.SEARCH_LIMIT, offset=(page - 1) * ops.SEARCH_LIMIT)
        hits = [{"hit": h, "place": PLACES.get(h.where, h.where), "pieces": highlight(h.text, terms)}
                for h in found.hits]
    pages = 0 if found is None else max(1, -(-found.total // ops.SEARCH_LIMIT))

    def page_url(n: int) -> str:
        return url_for("search.results", q=query, page=n)

    return render_template("search/results.html", query=query, found=found, hits=hits, page=page, pages=pages,
                           page_url=page_url, first=(page - 1) * ops.SEARCH_LIMIT + 1)
