"""Drafting in several processes.

A large edition drafts its statement kinds in worker processes (``concurrent.futures`` over the
tasks of :func:`drafting_tasks`: the blurbs with the cell kinds they are composed of, the other
kinds); the drafts are joined back in kind order, so the result is exactly that of one process:
the same drafts, in the same order, with the same text, evidence and claims. Workers are forked
when the calling process runs a single thread (they start at once and share the edition's
context) and spawned otherwise (beside the web server's threads, where a fork is unsafe); a
spawned worker imports the engine and receives the context once.

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
from collections.abc import Collection, Iterator
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from pathlib import Path
from typing import Any

import orjson

from stetline.drafting import CELL_KINDS, Context, Draft, draft_all, draft_with_parts
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
                    progress: Progress = no_progress, start: str | None = None,
                    facts_for: Collection[str] | None = None) -> Iterator[list[Draft]]:
    """Draft as :func:`draft_kinds` does, handing over each kind's drafts in kind order as they are ready.

    A load writes each batch of drafts and lets it go before the next comes, so it never holds
    every draft of the edition. A batch holds drafts of one kind only: the whole kind in one
    process; from workers, at most :data:`_DRAFTS_A_BATCH` (a kind back before the kinds ahead
    of it waits in its file). Drafting starts (and is reported) at the call.
    ``facts_for``: the slots whose composed facts are read (those with human work); the workers
    send no other slot's (default: every slot's, as one process keeps them).
    """
    kinds = chosen(ctx.kinds)
    workers = min(workers, len(kinds))
    progress("drafting statements", 0, None)
    if workers <= 1:
        return _one_process(ctx, phrasing_dir, kinds, progress)
    wanted = None if facts_for is None else frozenset(facts_for)
    return _in_workers(ctx, phrasing_dir, kinds, workers, progress, start or _start_method(), wanted)


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
                progress: Progress, method: str, facts_for: frozenset[str] | None) -> Iterator[list[Draft]]:
    ready: dict[int, Path] = {}  # kinds back from their workers, still in their files
    drafted = 0
    following = 0  # the next kind to hand over
    tasks = drafting_tasks(kinds)
    with tempfile.TemporaryDirectory(prefix="stetline-drafts-") as folder, ProcessPoolExecutor(
            max_workers=min(workers, len(tasks)), mp_context=multiprocessing.get_context(method),
            initializer=_start, initargs=(ctx, phrasing_dir)) as pool:
        pending = [pool.submit(_draft_task, task, folder, facts_for) for task in tasks]
        try:
            while pending:
                done, _ = wait(pending, return_when=FIRST_COMPLETED)
                for future in done:
                    pending.remove(future)
                    for index, name, _n in future.result():  # a worker's error (a template that fails) is raised here
                        ready[index] = Path(name)
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


def drafting_tasks(kinds: tuple[Any, ...]) -> list[list[int]]:
    """How the kinds (indexes in kind order) are shared among the workers, the longest task first.

    A kind composed of the cell kinds' facts (the blurb) works them all out; drafted alone, it did
    that work again beside the workers drafting the cell kinds. It now drafts, in one task, those
    of its part kinds the workspace drafts too, each part's drafts made as it reads them (see
    drafting.draft_with_parts). The other cell kinds come next, each a task, then the topic and
    entity kinds in one task (they read the same movement and leaders facts). One task that would
    hold every kind is split a kind per task, so that a worker count above one still means something.
    """
    names = [k.KIND for k in kinds]
    tasks: list[list[int]] = []
    taken: set[int] = set()
    for i, kind in enumerate(kinds):
        parts = [names.index(p) for p in getattr(kind, "PARTS", ()) if p in CELL_KINDS and p in names]
        if set(getattr(kind, "PARTS", ())) & CELL_KINDS:
            tasks.append(sorted(parts + [i]))
            taken.update(parts + [i])
    tasks += [[i] for i, name in enumerate(names) if i not in taken and name in CELL_KINDS]
    rest = [i for i, name in enumerate(names) if i not in taken and name not in CELL_KINDS]
    if rest:
        tasks.append(rest)
    if len(tasks) == 1:
        return [[i] for i in tasks[0]]
    return tasks


def _start_method() -> str:
    """Fork in a single-threaded process where the platform offers it (instant, context shared), else spawn."""
    return "fork" if threading.active_count() == 1 and "fork" in multiprocessing.get_all_start_methods() else "spawn"


def _start(ctx: Context, phrasing_dir: Path | None) -> None:
    """Set a worker up: the context and the compiled templates, kept for every kind it drafts."""
    gc.disable()  # as in the load itself: many small objects; the few cycles are collected per chunk
    gc.freeze()  # what the worker inherits is never scanned (its pages stay shared with the loading process)
    _worker["ctx"] = ctx
    _worker["renderer"] = Renderer(ctx.style, phrasing_dir)


def _draft_task(task: list[int], folder: str, facts_for: frozenset[str] | None = None) -> list[tuple[int, str, int]]:
    """Draft a task's kinds in a worker, each kind into a file of the load's own temporary folder.

    Returns (kind index, file, drafts) of each kind. The drafts go as rows (their JSON already
    made), pickled a thousand at a time as they are drafted, so neither the worker nor the loading
    process ever holds a kind's drafts as one message (a list of rows and its pickle at once took
    several times the memory of the drafts). A composed draft's facts go only for the slots of
    ``facts_for`` (None: every slot).
    """
    ctx = _worker["ctx"]
    kinds = chosen(ctx.kinds)
    files = {kinds[i].KIND: _DraftFile(Path(folder) / f"{i}-{kinds[i].KIND}.drafts", facts_for) for i in task}
    try:
        composed = [kinds[i] for i in task if set(getattr(kinds[i], "PARTS", ())) & CELL_KINDS]
        if composed and len(task) > 1:
            parts = {kinds[i]: files[kinds[i].KIND].add for i in task if kinds[i] is not composed[0]}
            drafts = draft_with_parts(ctx, _worker["renderer"], composed[0], parts)
        else:
            drafts = draft_all(ctx, _worker["renderer"], [kinds[i] for i in task])
        for d in drafts:
            files[d.kind].add(d)
    finally:
        for f in files.values():
            f.close()
    return [(i, str(files[kinds[i].KIND].path), files[kinds[i].KIND].count) for i in task]


class _DraftFile:
    """A worker's file of one kind's drafts, written a thousand rows a pickle."""

    def __init__(self, path: Path, facts_for: frozenset[str] | None) -> None:
        self.path, self.count, self._facts_for = path, 0, facts_for
        self._out = path.open("wb")
        self._rows: list[tuple[Any, ...]] = []

    def add(self, d: Draft) -> None:
        """Send one draft (its composed facts only when wanted)."""
        self._rows.append(d.to_row(self._facts_for is None or d.slot in self._facts_for))
        self.count += 1
        if len(self._rows) == _ROWS_A_PICKLE:
            pickle.dump(self._rows, self._out, pickle.HIGHEST_PROTOCOL)
            self._rows = []
            gc.collect(0)  # the reference cycles each render leaves (Jinja2's contexts): freed, not kept

    def close(self) -> None:
        """Write the last rows and close the file."""
        if not self._out.closed:
            pickle.dump(self._rows, self._out, pickle.HIGHEST_PROTOCOL)
            self._out.close()


def _batches_of(path: Path) -> Iterator[list[Draft]]:
    """A kind's drafts from its worker's file, :data:`_DRAFTS_A_BATCH` at a time, in the order drafted."""
    batch: list[Draft] = []
    for row in _rows_of(path):
        batch.append(SentDraft(row))
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


class SentDraft(Draft):
    """A draft made in another process, sent back as JSON: evidence and claims are parsed on first use.

    Most drafts of a load are only compared by digest and written as the JSON they came with, so
    their evidence is never rebuilt; what is rebuilt equals the original (a JSON round trip).
    """

    def __init__(self, row: tuple[Any, ...]) -> None:
        slot, kind, entity, topic, text, interest, choice, serialised, facts = row
        self.__dict__.update(slot=slot, kind=kind, entity=entity, topic=topic, text=text, interest=interest,
                             phrasing=choice, _sent=serialised)
        self.__dict__["_facts_sent"] = facts

    @property  # type: ignore[override]
    def facts(self) -> dict[str, Any] | None:
        """The composed kind's facts, unpickled when first read."""
        sent = self.__dict__.get("_facts_sent")
        if isinstance(sent, bytes):
            sent = self.__dict__["_facts_sent"] = pickle.loads(sent)
        return sent

    @facts.setter
    def facts(self, value: dict[str, Any] | None) -> None:
        self.__dict__["_facts_sent"] = value

    def __getattr__(self, name: str) -> Any:
        if name in ("evidence", "claims"):
            evidence, claims, _digest = self.__dict__["_sent"]
            self.__dict__.update(evidence=orjson.loads(evidence), claims=orjson.loads(claims))
            return self.__dict__[name]
        raise AttributeError(name)

    def _serialised(self) -> tuple[str, str, str]:
        sent: tuple[str, str, str] = self.__dict__["_sent"]
        return sent
