"""The overview page: the current edition, counts by status and recheck reason, editions so far."""

from __future__ import annotations

from flask import Blueprint, render_template

from stetline import actions
from stetline.publication import CAUTION
from stetline.reconcile import REASONS
from stetline.store import ops
from stetline.web.db import session

bp = Blueprint("overview", __name__)


@bp.get("/")
def index() -> str:
    """Show the overview of the workspace."""
    s = session()
    counts = ops.workspace_counts(s)
    by_status = {k: counts.by_status.get(k, 0) for k in actions.STATUSES}
    reasons = counts.reasons
    total = counts.statements
    ready = by_status["approved"] + by_status["draft"] + by_status["edited"]
    return render_template(
        "overview.html", edition=ops.current_edition(s), editions=ops.editions(s), by_status=by_status,
        reasons={r: reasons.get(r, 0) for r in REASONS}, total=total, waiting=by_status["recheck"],
        ready=ready, caution=CAUTION, counts_summary=counts.summary(),
    )
