"""Smoke test of the load benchmark at a tiny size: it runs and prints every ratio line.

Times are never asserted (the machine is shared); only that each figure is printed with its
target and verdict, and that the no-op refresh wrote no draft, layer or approval row, which is
a matter of correctness, not speed.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

SCRIPT = Path(__file__).resolve().parent / "bench.py"
LINES = ("load vs floor", "load vs bare floor", "cli help", "cli status", "refresh", "no-op rows", "no-op refresh",
         "memory", "entity page", "topic page", "recheck queue")


def test_the_benchmark_prints_every_ratio_line() -> None:
    out = subprocess.run(
        [sys.executable, str(SCRIPT), "--entities", "30", "--topics", "5", "--periods", "3", "--page-requests", "3",
         "--start-repeats", "1"],
        capture_output=True, text=True, timeout=900,
    )
    assert out.returncode == 0, out.stdout + out.stderr[-3000:]
    for name in LINES:
        assert re.search(rf"^{name}: \S+.*\(target [^)]+\) (PASS|FAIL)", out.stdout, re.M), out.stdout
    assert re.search(r"^no-op rows: .*\(target equal\) PASS", out.stdout, re.M), out.stdout
    # the small workspace's queue holds more than a page, so the queue's ratio compares full pages
    queue = re.search(r"^recheck queue: .*in recheck: ([\d,]+) and", out.stdout, re.M)
    assert queue and int(queue.group(1).replace(",", "")) > 50, out.stdout
