"""Drafting in several processes.

A large edition drafts each statement kind in a worker process of its own (``concurrent.futures``
over the kinds, in kind order); the drafts are joined back in kind order, so the result is
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
import pickle  # only rows this load's own workers wrote are unpickled
import tempfile
import threading
from collections.abc import Iterator
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
#: a worker pickles its drafts this many rows at a time (one pickle per row costs ten times the CPU)
_ROWS_A_PICKLE = 1_000
#: the loading process takes a worker's drafts this many at a time (a kind at full size is 100,000)
_DRAFTS_A_BATCH = 10_000
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
    return [draft for batch in draft_each_kind(ctx, phrasing_dir, workers, progress, start) for draft in batch]


def draft_each_kind(ctx: Context, phrasing_dir: Path | None, workers: int = 1,
                    progress: Progress = no_progress, start: str | None = None) -> Iterator[list[Draft]]:
    """Draft as :func:`draft_kinds` does, handing over each kind's drafts in kind order as they are ready.

    A load writes each batch of drafts and lets it go before the next comes, so it never holds
    every draft of the edition. A batch holds drafts of one kind only: the whole kind in one
    process; from workers, at most :data:`_DRAFTS_A_BATCH` (a kind back before the kinds ahead
    of it waits in its file). Drafting starts (and is reported) at the call.
    """
    kinds = chosen(ctx.kinds)
    workers = min(workers, len(kinds))
    progress("drafting statements", 0, None)
    if workers <= 1:
        return _one_process(ctx, phrasing_dir, kinds, progress)
    return _in_workers(ctx, phrasing_dir, kinds, workers, progress, start or _start_method())


def _one_process(ctx: Context, phrasing_dir: Path | None, kinds: tuple[Any, ...],
                 progress: Progress) -> Iterator[list[Draft]]:
    drafted = 0
    batch: list[Draft] = []
    for draft in draft_all(ctx, Renderer(ctx.style, phrasing_dir), kinds):
        if batch and draft.kind != batch[-1].kind:
            yield batch
            batch = []
        batch.append(draft)
        drafted += 1
        if drafted % _REPORT_EVERY == 0:
            progress("drafting statements", drafted, None)
    progress("drafting statements", drafted, None)
    if batch:
        yield batch


def _in_workers(ctx: Context, phrasing_dir: Path | None, kinds: tuple[Any, ...], workers: int,
                progress: Progress, method: str) -> Iterator[list[Draft]]:
    ready: dict[int, Path] = {}  # kinds back from their workers, still in their files
    drafted = 0
    following = 0  # the next kind to hand over
    with tempfile.TemporaryDirectory(prefix="stetline-drafts-") as folder, ProcessPoolExecutor(
            max_workers=workers, mp_context=multiprocessing.get_context(method),
            initializer=_start, initargs=(ctx, phrasing_dir)) as pool:
        # in kind order, so the first kinds come back first and are handed over while the rest are drafted
        pending: dict[Future[str], int] = {pool.submit(_draft_kind, i, folder): i for i in range(len(kinds))}
        try:
            while pending:
                done, _ = wait(pending, return_when=FIRST_COMPLETED)
                for future in done:  # a worker's error (a template that fails) is raised here
                    ready[pending.pop(future)] = Path(future.result())
                while following in ready:
                    sent = ready.pop(following)
                    for batch in _batches_of(sent):
                        drafted += len(batch)
                        yield batch
                    sent.unlink()
                    following += 1
                    progress("drafting statements", drafted, None)
        finally:
            for future in pending:
                future.cancel()


def _start_method() -> str:
    """Fork in a single-threaded process where the platform offers it (instant, context shared), else spawn."""
    return "fork" if threading.active_count() == 1 and "fork" in multiprocessing.get_all_start_methods() else "spawn"


def _start(ctx: Context, phrasing_dir: Path | None) -> None:
    """Set a worker up: the context and the compiled templates, kept for every kind it drafts."""
    gc.disable()  # as in the load itself: many small objects; the few cycles are collected per chunk
    gc.freeze()  # what the worker inherits is never scanned (its pages stay shared with the loading process)
    _worker["ctx"] = ctx
    _worker["renderer"] = Renderer(ctx.style, phrasing_dir)


def _draft_kind(index: int, folder: str) -> str:
    """Draft one kind in a worker into a file of the load's own temporary folder; the file's path.

    The drafts go as rows (their JSON already made), pickled one after another as they are drafted,
    a thousand at a time, so neither the worker nor the loading process ever holds a kind's drafts
    as one message (a list of rows and its pickle at once took several times the memory of the drafts).
    """
    ctx = _worker["ctx"]
    kind = chosen(ctx.kinds)[index]
    path = Path(folder) / f"{index}-{kind.KIND}.drafts"
    with path.open("wb") as out:
        rows: list[tuple[Any, ...]] = []
        for d in draft_all(ctx, _worker["renderer"], [kind]):
            rows.append(d.to_row())
            if len(rows) == _ROWS_A_PICKLE:
                pickle.dump(rows, out, pickle.HIGHEST_PROTOCOL)
                rows = []
                gc.collect(0)  # the reference cycles each render leaves (Jinja2's contexts): freed, not kept
        pickle.dump(rows, out, pickle.HIGHEST_PROTOCOL)
    return str(path)


def _batches_of(path: Path) -> Iterator[list[Draft]]:
    """A kind's drafts from its worker's file, :data:`_DRAFTS_A_BATCH` at a time, in the order drafted."""
    batch: list[Draft] = []
    for row in _rows_of(path):
        batch.append(Draft.from_row(row))
        if len(batch) == _DRAFTS_A_BATCH:
            yield batch
            batch = []
    if batch:
        yield batch


def _rows_of(path: Path) -> Iterator[tuple[Any, ...]]:
    """The rows a worker wrote, one at a time (only files this load's own workers wrote are unpickled)."""
    with path.open("rb") as stream:
        while True:
            try:
                rows = pickle.load(stream)
            except EOFError:
                return
            yield from rows
