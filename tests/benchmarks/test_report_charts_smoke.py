"""Smoke test of the report-charts benchmark on the demo: it runs, and a report published again
reads its charts from the chart folder (no chart drawn, a file of the same size).

The ratios it prints are measurements, not asserted.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

SCRIPT = Path(__file__).resolve().parent / "report_charts.py"


def test_the_report_charts_benchmark_prints_its_ratios_and_the_same_files() -> None:
    out = subprocess.run([sys.executable, str(SCRIPT)], capture_output=True, text=True, timeout=600)
    assert out.returncode == 0, out.stdout + out.stderr
    sizes: dict[str, str] = {}
    drawn: dict[str, int] = {}
    for name in ("html first", "html again", "docx first", "docx again"):
        pattern = rf"^{name}: [\d.]+ \(target <= [\d.]+\) (PASS|FAIL) \[[\d.]+ s, ([\d,]+) bytes, (\d+) drawn\]$"
        line = re.search(pattern, out.stdout, re.MULTILINE)
        assert line is not None, out.stdout
        sizes[name], drawn[name] = line.group(2), int(line.group(3))
    assert drawn["html first"] > 100 and drawn["docx first"] > 100  # a chart per town and topic
    assert drawn["html again"] == 0 and drawn["docx again"] == 0
    assert sizes["html first"] == sizes["html again"] and sizes["docx first"] == sizes["docx again"]
