"""Progress of long work (a load, a redraft, a publication): a stage and a count, heard by a callback.

The engine calls ``progress(stage, done, total)`` as each stage starts and as its count grows
(``total`` is None when not known in advance). The CLI shows it on a terminal; the web app
records a running load in a small file in the workspace folder (:class:`ProgressFile`), which
the data page reads while other requests go on.
"""

from __future__ import annotations

import json
import os
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

#: a report of progress: the stage, how much of it is done, and its total when known
Progress = Callable[[str, int, "int | None"], None]

#: the file in the workspace folder that records a running load
PROGRESS_FILE = "progress.json"
#: a record not updated for this long belongs to work that ended without clearing it (common practice)
STALE_SECONDS = 15 * 60


def no_progress(stage: str, done: int, total: int | None) -> None:
    """Report nothing (the default where no one watches)."""


def describe(stage: str, done: int, total: int | None) -> str:
    """One line for people: 'drafting statements: 12,000', 'writing statements: 0 of 30,301'."""
    if total is not None:
        return f"{stage}: {done:,} of {total:,}"
    return f"{stage}: {done:,}" if done else f"{stage}"


class ProgressFile:
    """Record the progress of a piece of work in a file of the workspace folder; removed when it ends."""

    def __init__(self, folder: Path, work: str, by: str) -> None:
        self.path = folder / PROGRESS_FILE
        self._head = {"work": work, "by": by, "started": time.time(), "pid": os.getpid()}

    def __call__(self, stage: str, done: int, total: int | None) -> None:
        """Write the current stage and count (atomically: a reader sees the old record or the new)."""
        record = {**self._head, "stage": stage, "done": done, "total": total, "updated": time.time()}
        partial = self.path.with_name(f".{PROGRESS_FILE}.{os.getpid()}")
        try:
            partial.write_text(json.dumps(record), encoding="utf-8")
            partial.replace(self.path)
        except OSError:  # progress is a courtesy: a folder that cannot take it never stops the work
            pass

    def __enter__(self) -> ProgressFile:
        return self

    def __exit__(self, *_exc: object) -> None:
        self.path.unlink(missing_ok=True)


def running(folder: Path, now: float | None = None) -> dict[str, Any] | None:
    """The work running in a workspace as recorded (work, by, stage, done, total, started), or None."""
    try:
        record = json.loads((folder / PROGRESS_FILE).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    now = time.time() if now is None else now
    if not isinstance(record, dict) or now - float(record.get("updated", 0)) > STALE_SECONDS:
        return None
    record["line"] = describe(str(record.get("stage", "")), int(record.get("done", 0)), record.get("total"))
    return record
