"""The data page: upload an edition's files, see what loading them would do, then load them.

The files are kept in a folder of their own under the workspace (``uploads/<token>/``, names
cleaned with secure_filename) between the dry run and the load; the folder goes once the
edition is loaded or refused, and any left over is removed after an hour. Problems in the
files are listed by file, row and column, and nothing is written.
"""

from __future__ import annotations

import json
import re
import secrets
import shutil
import time
from pathlib import Path
from typing import Any

import pandas as pd
from flask import Blueprint, redirect, render_template, request, url_for
from werkzeug.datastructures import FileStorage
from werkzeug.utils import secure_filename
from werkzeug.wrappers import Response

from stetline import accounts, loading, progress
from stetline.dataset import load_dataset
from stetline.errors import Forbidden, Problem, StetlineError, ValidationError
from stetline.reconcile import REASONS
from stetline.store import ops
from stetline.web.common import acting_name
from stetline.web.db import session, workspace
from stetline.web.wording import web_message

bp = Blueprint("data", __name__)

UPLOADS = "uploads"
MANIFEST = "manifest.json"
MAX_AGE_SECONDS = 3600
ROLES = ("observations", "topics", "entities", "renames")  # renames: a mapping of old to new entity keys
SUFFIXES = (".csv", ".txt", ".xlsx", ".xlsm")
TOKEN = re.compile(r"^[0-9a-f]{32}$")
CLAIMED = "-loading"  # an upload being loaded is renamed to this, so it loads once
MAX_LABEL = 100


def uploads_dir() -> Path:
    """The folder that holds uploads waiting to be loaded."""
    return workspace().path / UPLOADS


def sweep(now: float | None = None) -> int:
    """Remove upload folders older than an hour; return how many went."""
    root = uploads_dir()
    if not root.is_dir():
        return 0
    now = time.time() if now is None else now
    gone = 0
    for folder in root.iterdir():
        try:
            old = now - folder.stat().st_mtime > MAX_AGE_SECONDS
        except FileNotFoundError:
            continue
        if folder.is_dir() and old:
            shutil.rmtree(folder, ignore_errors=True)
            gone += 1
    return gone


def _page(*, status: int = 200, **context: Any) -> tuple[str, int]:
    s = session()
    loaded = None
    label = request.args.get("loaded")
    if label:
        edition = ops.edition_by_label(s, label)
        loaded = None if edition is None else {"edition": edition, "summary": edition.summary}
    return render_template(
        "data/page.html", editions=ops.editions(s), current=ops.current_edition(s), reasons=REASONS,
        loaded=loaded, max_mb=(request.max_content_length or 0) // (1024 * 1024),
        running=progress.running(workspace().path), **context,
    ), status


@bp.get("/data")
def page() -> tuple[str, int]:
    """The upload form, the editions loaded so far and the result of the last load."""
    sweep()
    return _page()


def _keep(folder: Path, role: str, upload: FileStorage) -> tuple[str, Problem | None]:
    """Store one uploaded file under a cleaned name; a Problem when it is not CSV or XLSX."""
    name = secure_filename(upload.filename or "") or f"{role}.csv"
    given = upload.filename or name
    if not name.lower().endswith(SUFFIXES):
        return name, Problem(given, None, None, "Stetline reads CSV files (.csv, .txt) or Excel workbooks (.xlsx)")
    (folder / role).mkdir(parents=True, exist_ok=True)
    upload.save(folder / role / name)
    return f"{role}/{name}", None


def _sources(folder: Path, manifest: dict[str, Any]) -> tuple[Path, Path | None, Path | None]:
    """The kept observations, topics and entities files of an upload (observations are required)."""
    files = manifest["files"]
    topics, entities = (folder / files[role] if role in files else None for role in ("topics", "entities"))
    return folder / files["observations"], topics, entities


def _mapping(folder: Path, manifest: dict[str, Any]) -> Path | None:
    """The kept mapping of renamed entity keys (old,new), if one was uploaded."""
    files = manifest["files"]
    return folder / files["renames"] if "renames" in files else None


def _refused() -> tuple[str, int] | None:
    """The 403 page when the acting account may not load data (checked before any file is kept or
    claimed), else None."""
    try:
        accounts.authorize(session(), acting_name(), "load")
    except Forbidden as exc:
        return _page(status=403, form_error=web_message(exc))
    return None


@bp.post("/data")
def check() -> tuple[str, int]:
    """Keep the uploaded files and show what loading them would do (a dry run: nothing written)."""
    sweep()
    refused = _refused()
    if refused is not None:
        return refused
    uploads = {role: request.files.get(role) for role in ROLES}
    label = (request.form.get("label") or "").strip()[:MAX_LABEL] or None
    chosen = {role: f for role, f in uploads.items() if f is not None and f.filename}
    if "observations" not in chosen:
        return _page(status=400, form_error="Choose the observations file to load.", label=label)
    token = secrets.token_hex(16)
    folder = uploads_dir() / token
    folder.mkdir(parents=True)
    files: dict[str, str] = {}
    problems: list[Problem] = []
    for role, upload in chosen.items():
        stored, problem = _keep(folder, role, upload)
        if problem is not None:
            problems.append(problem)
        else:
            files[role] = stored
    if problems:
        shutil.rmtree(folder, ignore_errors=True)
        return _page(status=400, problems=problems, label=label)
    manifest = {"files": files, "label": label, "by": acting_name(), "at": time.time()}
    (folder / MANIFEST).write_text(json.dumps(manifest))
    sources = _sources(folder, manifest)
    try:
        summary = loading.load_edition(workspace(), *sources, label=label, by=str(manifest["by"]), dry_run=True,
                                       renames=_mapping(folder, manifest))
    except ValidationError as exc:
        shutil.rmtree(folder, ignore_errors=True)
        return _page(status=400, problems=exc.problems, label=label)
    except StetlineError as exc:
        shutil.rmtree(folder, ignore_errors=True)
        return _page(status=400, form_error=web_message(exc), label=label)
    names = {role: Path(p).name for role, p in files.items()}
    preview = summary.to_json()
    current = ops.current_edition(session())
    same = current.label if current is not None and _same_as_current(preview, sources) else None
    return _page(preview=preview, token=token, names=names, label=label, same_as=same)


def _rows(frame: pd.DataFrame, columns: list[str]) -> list[tuple[str, ...]]:
    """A frame's rows as sorted tuples of text, so that two frames compare whatever their order and types."""
    return sorted(tuple("" if pd.isna(v) else str(v) for v in row) for row in frame[columns].itertuples(index=False))


def _same_as_current(preview: dict[str, Any], sources: tuple[Path, Path | None, Path | None]) -> bool:
    """True when the uploaded files hold the data the current edition holds (loading them changes nothing).

    Checked only when the dry run changes no statement, so an ordinary upload costs nothing more.
    """
    if preview["drafted"] or preview["updated"] or preview["sent_to_recheck"] or preview["gone"] or preview["moved"]:
        return False
    s = session()
    known_topics, known_entities = ops.topics_frame(s), ops.entities_frame(s)
    try:
        dataset = load_dataset(*sources, known_topics=known_topics, known_entities=known_entities)
    except StetlineError:
        return False
    columns = ["entity", "topic", "period", "value", "margin", "status"]
    if _rows(dataset.observations, columns) != _rows(ops.observations_frame(s), columns):
        return False
    subgroups = ["entity", "topic", "breakdown", "subgroup", "period", "value", "margin", "status", "share"]
    if _rows(dataset.breakdowns, subgroups) != _rows(ops.breakdowns_frame(s), subgroups):
        return False  # the subgroups changed (they may change no statement while the breakdown kind is off)
    metadata = ((sources[1], dataset.topics, known_topics), (sources[2], dataset.entities, known_entities))
    for given, new, known in metadata:
        if given is None:
            continue  # no file: the stored metadata stays as it is
        if known is None:
            return False  # a file where none was stored adds metadata
        shared = [c for c in new.columns if c in known.columns and c != "position"]
        if _rows(new, shared) != _rows(known, shared):
            return False
    return True


@bp.post("/data/load")
def load() -> Response | tuple[str, int]:
    """Load the files a dry run checked, then remove them."""
    refused = _refused()  # before claiming the upload: a refused request leaves it waiting
    if refused is not None:
        return refused
    token = request.form.get("token", "")
    waiting = uploads_dir() / token
    folder = uploads_dir() / f"{token}{CLAIMED}"
    try:
        if not TOKEN.match(token) or not (waiting / MANIFEST).is_file():
            raise FileNotFoundError(token)
        waiting.rename(folder)  # atomic: of two clicks on the same upload, one loads it
    except OSError:
        return _page(status=400, form_error=(
            "These files are no longer here (uploads are kept for an hour, and only until they are "
            "loaded). Upload them again."))
    try:
        manifest = json.loads((folder / MANIFEST).read_text())
        sources = _sources(folder, manifest)
        ws = workspace()
        with progress.ProgressFile(ws.path, "load", acting_name()) as record:  # the data page shows it
            summary = loading.load_edition(ws, *sources, label=manifest.get("label"), by=acting_name(), progress=record,
                                           renames=_mapping(folder, manifest))
    except ValidationError as exc:
        return _page(status=400, problems=exc.problems)
    except StetlineError as exc:
        return _page(status=403 if isinstance(exc, Forbidden) else 400, form_error=web_message(exc))
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    return redirect(url_for("data.page", loaded=summary.edition), code=303)
