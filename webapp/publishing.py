"""The publish page: what blocks publication, the numbers no fact backs, and the download.

The download goes through stetline.publish.publish, which applies the gate and records the
publication with its checksum; the file comes back with its format's media type as an attachment.
"""

from __future__ import annotations

import re
from typing import Any

from flask import Blueprint, Response, render_template, request

from stetline import actions, publish, settings
from stetline.errors import Forbidden, StetlineError
from stetline.formats import FORMATS, MEDIA_TYPES
from stetline.livefields import LiveFields
from stetline.loading import house_style
from stetline.publication import CAUTION
from stetline.status import Status
from stetline.store import ops
from stetline.web.common import acting_name
from stetline.web.db import session, workspace
from stetline.web.wording import web_message

bp = Blueprint("publishing", __name__)

FORMAT_LABELS = {
    "md": ("Markdown", "plain text with headings, for editors and static sites"),
    "html": ("HTML", "a standalone web page with its own styles"),
    "json": ("JSON", "one object per statement, with numbers traced to facts"),
    "csv": ("CSV", "one row per statement, for spreadsheets"),
    "docx": ("Word", "a document with restylable paragraph styles and a table of contents"),
}
SECTIONS = {"entity": "by entity", "topic": "by topic", "parent": "by entity, under each parent"}
SHOWN = 100


def _choice() -> dict[str, Any]:
    form = request.form
    return {
        "format": form.get("format", "md"), "sections": form.get("sections", "entity"),
        "allow_recheck": bool(form.get("allow_recheck")), "require_approval": bool(form.get("require_approval")),
    }


def _page(*, error: str | None = None, chosen: dict[str, Any] | None = None, status: int = 200) -> tuple[str, int]:
    s = session()
    edition = ops.current_edition(s)
    waiting = actions.views(s, ops.SlotFilter(status=Status.RECHECK), order="severity") if edition else []
    live = LiveFields(house_style(s)[0])
    shown = [(v.slot.id, v.printed(s, live)) for v in waiting[:SHOWN]]
    counts = ops.status_counts(s)
    untraced = publish.untraced_numbers(s) if edition else []
    mode = settings.with_defaults(ops.get_settings(s))["untraced_numbers"]
    return render_template(
        "publish/page.html", edition=edition, waiting=shown, waiting_total=len(waiting),
        unapproved=counts.get(Status.DRAFT, 0) + counts.get(Status.EDITED, 0), approved=counts.get(Status.APPROVED, 0),
        untraced=untraced[:SHOWN], untraced_total=len(untraced), untraced_mode=mode,
        caution=CAUTION, formats=[(f, *FORMAT_LABELS.get(f, (f, ""))) for f in FORMATS],
        sections=SECTIONS, chosen=chosen or {"format": "md", "sections": "entity"}, error=error,
        publications=ops.events_by_action(s, "publish", 10),
    ), status


@bp.get("/publish")
def page() -> tuple[str, int]:
    """Choose a format and sections; see what stands in the way."""
    return _page()


def _filename(title: str, edition: str, fmt: str) -> str:
    stem = re.sub(r"[^a-z0-9]+", "-", f"{title} {edition}".lower()).strip("-")[:80] or "statements"
    return f"{stem}.{fmt}"


@bp.post("/publish/download")
def download() -> Response | tuple[str, int]:
    """Publish in the chosen format and send the file."""
    chosen = _choice()
    if chosen["format"] not in FORMATS or chosen["sections"] not in SECTIONS:
        return _page(error="Choose one of the formats and one of the section orders shown.", chosen=chosen, status=400)
    by = acting_name()
    try:
        with workspace().session() as s:
            data, pub = publish.publish(s, chosen["format"], by=by, sections=chosen["sections"],
                                        allow_recheck=chosen["allow_recheck"],
                                        require_approval=chosen["require_approval"],
                                        layouts_dir=workspace().layouts_dir,
                                        chart_dir=workspace().chart_dir)
    except publish.GateClosed as exc:
        return _page(error=web_message(exc), chosen=chosen, status=409)
    except StetlineError as exc:
        return _page(error=web_message(exc), chosen=chosen, status=403 if isinstance(exc, Forbidden) else 400)
    name = _filename(pub.title, pub.edition, chosen["format"])
    return Response(data, headers={
        "Content-Type": MEDIA_TYPES[chosen["format"]],
        "Content-Disposition": f'attachment; filename="{name}"',
        "Content-Length": str(len(data)),
        "Cache-Control": "no-store",
        "X-Content-Type-Options": "nosniff",
    })
