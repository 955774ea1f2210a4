"""Smoke test of the load benchmark at a tiny size: it runs and prints every ratio line.

Times are never asserted (the machine is shared); only that each figure is printed with its
target and verdict, and that the no-op refresh wrote no draft, layer or approval row, which is
a matter of correctness, not speed. The full run drafts a new workspace's default kinds; the
loads-only run (``--memory-only``) drafts every kind, as bench.py does by default.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

SCRIPT = Path(__file__).resolve().parent / "bench.py"
TINY = ["--entities", "30", "--topics", "5", "--periods", "3"]
LOADS = ("refresh", "no-op rows", "no-op refresh", "memory", "refresh memory")
LINES = ("load vs floor", "load vs bare floor", "cli help", "cli status", *LOADS, "entity page", "topic page",
         "recheck queue", r"statement page \(cold\)", r"statement page \(warm\)")


def _bench(*args: str) -> str:
    out = subprocess.run([sys.executable, str(SCRIPT), *TINY, *args], capture_output=True, text=True, timeout=900)
    assert out.returncode == 0, out.stdout + out.stderr[-3000:]
    assert re.search(r"^no-op rows: .*\(target equal\) PASS", out.stdout, re.M), out.stdout
    return out.stdout


def _printed(stdout: str, names: tuple[str, ...]) -> list[str]:
    """The ratio lines among ``names`` that ``stdout`` prints, with their target and verdict."""
    return [name for name in names if re.search(rf"^{name}: \S+.*\(target [^)]+\) (PASS|FAIL)", stdout, re.M)]


def test_the_benchmark_prints_every_ratio_line_with_the_default_kinds() -> None:
    stdout = _bench("--kinds", "default", "--page-requests", "3", "--start-repeats", "1")
    assert _printed(stdout, LINES) == list(LINES), stdout
    assert re.search(r"^first load: [\d,]+ statements \(the default kinds\)", stdout, re.M), stdout
    # the small workspace's queue holds more than a page, so the queue's ratio compares full pages
    queue = re.search(r"^recheck queue: .*in recheck: ([\d,]+) and", stdout, re.M)
    assert queue and int(queue.group(1).replace(",", "")) > 50, stdout
    # both memory lines name the loading process's own peak
    assert len(re.findall(r"^(refresh )?memory: .*\[peak RSS: loading process \d+ MB", stdout, re.M)) == 2, stdout


def test_the_loads_only_run_drafts_every_kind_and_prints_their_lines_only() -> None:
    stdout = _bench("--memory-only")
    assert _printed(stdout, LINES) == list(LOADS), stdout
    assert re.search(r"^first load: [\d,]+ statements \(every kind\)", stdout, re.M), stdout
