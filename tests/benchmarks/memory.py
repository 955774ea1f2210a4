"""Peak memory of a ``stetline`` command and of the worker processes it starts.

``bench.py`` runs a load through :func:`wrapped`, which starts this file with ``--run OUT -- ARGS``:
the command runs in this process (as the console script would run it) and, when it ends, OUT
receives the kernel's own peaks (``getrusage``; kilobytes on Linux):

* ``self_mb``: the peak resident set of the loading process (``RUSAGE_SELF``);
* ``children_mb``: the peak of the largest worker process it started and waited for
  (``RUSAGE_CHILDREN``; a worker that drafts kinds one after the other counts once).

Meanwhile :class:`Sampler`, in the benchmark's process, adds up the proportional set size (PSS:
a page shared by a forked worker and the loading process counts half in each) of the process and
all its descendants every ``interval`` seconds and keeps the highest sum, ``together_mb``: what the
command and its workers hold at once. It is sampled, so a peak shorter than the interval can be
missed; the rusage peaks cannot miss one but count a process alone.
"""

from __future__ import annotations

import json
import os
import resource
import sys
from pathlib import Path

HERE = Path(__file__).resolve()
#: seconds between two samples of the process tree
SAMPLE_EVERY = 0.25


def wrapped(args: list[str], out: Path) -> list[str]:
    """The command line running ``stetline ARGS`` through this file, its peaks written to ``out``."""
    return [sys.executable, str(HERE), "--run", str(out), "--", *args]


def _children_of() -> dict[int, list[int]]:
    """Every process's children, from /proc (the parent is the fourth field of /proc/PID/stat)."""
    out: dict[int, list[int]] = {}
    for entry in os.scandir("/proc"):
        if not entry.name.isdigit():
            continue
        try:
            stat = Path(entry.path, "stat").read_text()
        except OSError:
            continue
        parent = int(stat.rsplit(")", 1)[1].split()[1])
        out.setdefault(parent, []).append(int(entry.name))
    return out


def _pss_kb(pid: int) -> int:
    try:
        for line in Path(f"/proc/{pid}/smaps_rollup").read_text().splitlines():
            if line.startswith("Pss:"):
                return int(line.split()[1])
    except (OSError, ValueError):
        pass
    return 0


class Sampler:
    """The highest sum of PSS over a process and its descendants, sampled (Linux only; 0 elsewhere)."""

    def __init__(self, pid: int) -> None:
        self.pid = pid
        self.peak_kb = 0
        self.available = Path(f"/proc/{pid}/smaps_rollup").exists()

    def sample(self) -> None:
        """Add up the process tree's PSS now and keep the highest sum seen."""
        if not self.available:
            return
        children = _children_of()
        tree, todo = [], [self.pid]
        while todo:
            pid = todo.pop()
            tree.append(pid)
            todo += children.get(pid, [])
        self.peak_kb = max(self.peak_kb, sum(_pss_kb(pid) for pid in tree))

    @property
    def peak_mb(self) -> float | None:
        """The highest sum seen, in MB (None when it could not be measured)."""
        return self.peak_kb / 1024 if self.peak_kb else None


def read(out: Path) -> dict[str, float]:
    """The peaks a wrapped run wrote (empty when it wrote none)."""
    try:
        return dict(json.loads(out.read_text()))
    except (OSError, ValueError):
        return {}


def _run(out: Path, args: list[str]) -> int:
    """Run ``stetline ARGS`` here, then write this process's and its largest child's peak RSS."""
    from stetline.cli import main

    code: int | str | None = 0
    try:
        main.main(args=args, prog_name="stetline")
    except SystemExit as stop:
        code = stop.code
    finally:
        mine = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
        workers = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
        out.write_text(json.dumps({"self_mb": mine / 1024, "children_mb": workers / 1024}))
    return code if isinstance(code, int) else 1


if __name__ == "__main__":
    if sys.argv[1:2] != ["--run"] or sys.argv[3:4] != ["--"]:
        raise SystemExit("usage: memory.py --run OUT.json -- STETLINE-ARGS...")
    sys.exit(_run(Path(sys.argv[2]), sys.argv[4:]))
