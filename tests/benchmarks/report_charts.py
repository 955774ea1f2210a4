"""Benchmark of the charts in a published report, as ratios against a floor measured in the same run.

Run as ``python tests/benchmarks/report_charts.py`` (builds the demo in a temporary folder: 14
towns, 12 topics, about 165 charts a report).

Every figure is a ratio of processor times taken in this one process, so a busy machine moves
both sides alike. The floor is publishing the same report as Markdown (the same gathering and
arrangement, no drawing). Then:

* ``html first``: the HTML report with nothing drawn before (every chart drawn as SVG);
* ``html again``: the HTML report in a new process's state (the in-process cache emptied) with
  the workspace's chart folder kept: every chart read from its file;
* ``docx first`` and ``docx again``: the same for Word (PNG charts).

Each line reads ``name: ratio (target ...) PASS|FAIL [seconds, bytes, charts drawn]``.
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
import time
from pathlib import Path

from stetline import charts, demo, publish
from stetline.workspace import open_workspace

TARGETS = {"html first": 10.0, "html again": 2.0, "docx first": 18.0, "docx again": 5.0}


_drawn: list[str] = []
_draw = charts._save


def _counted(spec: charts.ChartSpec, fmt: str) -> bytes:
    _drawn.append(spec.digest)
    return _draw(spec, fmt)


def _publish(path: Path, fmt: str) -> tuple[float, int]:
    ws = open_workspace(path)
    try:
        start = time.process_time()
        with ws.session() as s:
            data, _pub = publish.publish(s, fmt, by="admin", allow_recheck=True, chart_dir=ws.chart_dir)
        return time.process_time() - start, len(data)
    finally:
        ws.close()


def run(folder: Path) -> list[str]:
    """Build the demo in folder, publish it in each way, and return the report lines."""
    path = folder / "demo"
    demo.build(path, echo=lambda _line: None).close()
    charts._save = _counted  # counts the charts drawn (the drawing itself unchanged)
    _publish(path, "md")  # imports and first queries, outside every measurement
    floor, _size = _publish(path, "md")
    lines = [f"floor (markdown): 1.0 [{floor:.2f} s]"]
    for fmt in ("html", "docx"):
        shutil.rmtree(path / "chart-cache", ignore_errors=True)
        for when in ("first", "again"):
            charts._cache.clear()
            _drawn.clear()
            seconds, size = _publish(path, fmt)
            name = f"{fmt} {when}"
            ratio = seconds / floor
            verdict = "PASS" if ratio <= TARGETS[name] else "FAIL"
            lines.append(f"{name}: {ratio:.1f} (target <= {TARGETS[name]}) {verdict} "
                         f"[{seconds:.2f} s, {size:,} bytes, {len(_drawn)} drawn]")
    return lines


def main() -> None:
    """Print the ratios."""
    argparse.ArgumentParser(description=__doc__.splitlines()[0]).parse_args()
    with tempfile.TemporaryDirectory() as folder:
        for line in run(Path(folder)):
            print(line, flush=True)


if __name__ == "__main__":
    main()
