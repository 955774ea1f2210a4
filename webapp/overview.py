"""The overview page: the current edition, counts by status and recheck reason, editions so far."""

from __future__ import annotations

from flask import Blueprint, render_template

from stetline.publication import CAUTION
from stetline.summary import status_summary
from stetline.web.db import session

bp = Blueprint("overview", __name__)


@bp.get("/")
def index() -> str:
    """Show the overview of the workspace."""
    summary = status_summary(session())
    return render_template(
        "overview.html", edition=summary.edition, editions=summary.editions, by_status=summary.by_status,
        reasons=summary.recheck_reasons, total=summary.total, waiting=summary.waiting, ready=summary.ready,
        caution=CAUTION, counts_summary=summary.phrase(),
    )
