"""Drafting in several processes.

A large edition drafts each statement kind in a worker process of its own (``concurrent.futures``
over the kinds, the costliest first); the drafts are joined back in kind order, so the result is
exactly that of one process: the same drafts, in the same order, with the same text, evidence and
claims. Workers are forked when the calling process runs a single thread (they start at once and
share the edition's context) and spawned otherwise (beside the web server's threads, where a fork
is unsafe); a spawned worker imports the engine and receives the context once.

``STETLINE_WORKERS`` sets the number of processes (``1``: one process). Without it an edition of
fewer than :data:`PARALLEL_FROM` entity × topic cells drafts in one process (a spawned worker costs
about a second to start), a larger one in as many processes as there are cores.
"""

from __future__ import annotations

import gc
import multiprocessing
import os
import threading
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from pathlib import Path
from typing import Any

from stetline.drafting import Context, Draft, draft_all
from stetline.errors import StetlineError
from stetline.kinds import chosen
from stetline.progress import Progress, no_progress
from stetline.rendering import Renderer

#: fewer entity × topic cells than this draft in one process unless STETLINE_WORKERS says otherwise
PARALLEL_FROM = 5_000
WORKERS_ENV = "STETLINE_WORKERS"
#: the kinds that draft one statement per entity × topic cell: the costliest, submitted first
_CELL_KINDS = ("standing", "change", "trend")
#: one process reports drafting progress every this many statements
_REPORT_EVERY = 2_000

_worker: dict[str, Any] = {}


def worker_count(cells: int) -> int:
    """How many processes draft an edition of ``cells`` entity × topic cells."""
    raw = os.environ.get(WORKERS_ENV, "").strip()
    if raw:
        try:
            n = int(raw)
        except ValueError:
            n = 0
        if n < 1:
            raise StetlineError(f"{WORKERS_ENV} must be a whole number of processes (1 or more), not {raw!r}")
        return n
    if cells < PARALLEL_FROM:
        return 1
    return max(1, os.cpu_count() or 1)


def draft_kinds(ctx: Context, phrasing_dir: Path | None, workers: int = 1,
                progress: Progress = no_progress, start: str | None = None) -> list[Draft]:
    """Draft every statement of a context in ``workers`` processes; the same drafts as one process.

    ``start`` names the way workers start ("fork" or "spawn"); by default fork when this process
    runs one thread and the platform has it, else spawn.
    """
    kinds = chosen(ctx.kinds)
    workers = min(workers, len(kinds))
    if workers <= 1:
        drafts: list[Draft] = []
        for draft in draft_all(ctx, Renderer(ctx.style, phrasing_dir), kinds):
            drafts.append(draft)
            if len(drafts) % _REPORT_EVERY == 0:
                progress("drafting statements", len(drafts), None)
        progress("drafting statements", len(drafts), None)
        return drafts
    order = sorted(range(len(kinds)), key=lambda i: kinds[i].KIND not in _CELL_KINDS)
    by_kind: dict[int, list[Draft]] = {}
    drafted = 0
    progress("drafting statements", 0, None)
    method = start or _start_method()
    with ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(method),
                             initializer=_start, initargs=(ctx, phrasing_dir)) as pool:
        pending: dict[Future[list[tuple[Any, ...]]], int] = {pool.submit(_draft_kind, i): i for i in order}
        while pending:
            done, _ = wait(pending, return_when=FIRST_COMPLETED)
            for future in done:
                rows = future.result()  # a worker's error (a template that fails) is raised here
                by_kind[pending.pop(future)] = [Draft.from_row(row) for row in rows]
                drafted += len(rows)
            progress("drafting statements", drafted, None)
    return [draft for i in range(len(kinds)) for draft in by_kind[i]]


def _start_method() -> str:
    """Fork in a single-threaded process where the platform offers it (instant, context shared), else spawn."""
    return "fork" if threading.active_count() == 1 and "fork" in multiprocessing.get_all_start_methods() else "spawn"


def _start(ctx: Context, phrasing_dir: Path | None) -> None:
    """Set a worker up: the context and the compiled templates, kept for every kind it drafts."""
    gc.disable()  # as in the load itself: many small objects, almost no cycles
    _worker["ctx"] = ctx
    _worker["renderer"] = Renderer(ctx.style, phrasing_dir)


def _draft_kind(index: int) -> list[tuple[Any, ...]]:
    """Draft one kind in a worker; the drafts as rows, their JSON already made."""
    ctx = _worker["ctx"]
    return [d.to_row() for d in draft_all(ctx, _worker["renderer"], [chosen(ctx.kinds)[index]])]
