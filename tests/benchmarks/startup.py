"""How quickly the CLI answers: `stetline --help` and `stetline status` against a bare process.

The bare process imports click and SQLAlchemy and runs one query (a count of the statements) on
the same database; each command runs several times and the medians are compared, wall time and
CPU time alike (CPU time is the steadier guide on a shared machine).
"""

from __future__ import annotations

import statistics
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

BARE = """
import click, sqlalchemy
engine = sqlalchemy.create_engine("sqlite:///" + {db!r})
with engine.connect() as conn:
    conn.execute(sqlalchemy.text("SELECT COUNT(*) FROM slot")).scalar()
"""


def measure(cli: str, ws: Path, timed: Callable[[list[str], Path], Any], repeats: int = 5) -> dict[str, Any]:
    """Median wall and CPU seconds of --help, status and the bare process, run in turn."""
    commands = {
        "help": [cli, "--help"],
        "status": [cli, "status", "-w", str(ws)],
        "bare": [sys.executable, "-c", BARE.format(db=str(ws / "stetline.db"))],
    }
    runs: dict[str, list[Any]] = {name: [] for name in commands}
    for _ in range(repeats):
        for name, cmd in commands.items():
            runs[name].append(timed(cmd, ws.parent))
    out: dict[str, Any] = {}
    for name, done in runs.items():
        cpu = [r.cpu_seconds for r in done if r.cpu_seconds is not None]
        out[name] = (statistics.median(r.seconds for r in done), statistics.median(cpu) if cpu else None)
    return out
