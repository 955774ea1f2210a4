"""Smoke test of the load test at a small size: concurrent saves under waitress lose nothing.

This checks correctness (no error, no lost save); the throughput it prints is not asserted.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

SCRIPT = Path(__file__).resolve().parent / "load_test.py"


def test_concurrent_clients_get_no_errors_and_lose_no_save() -> None:
    out = subprocess.run([sys.executable, str(SCRIPT), "--clients", "10", "--requests", "12"],
                         capture_output=True, text=True, timeout=600)
    assert out.returncode == 0, out.stdout + out.stderr[-3000:]
    assert "errors: 0 (target 0)" in out.stdout and "lost: 0 (target 0)" in out.stdout
