"""Type-check the package under its one import name, ``stetline``, and report source paths.

The folders engine/, webapp/, migrations/ and seed_data/ are mapped onto ``stetline`` by
pyproject.toml; mypy cannot follow that mapping (nor an editable install's import hook), so this
script lays the same tree out in a temporary folder, runs mypy there with the project's settings,
and prints every finding with the path of the file in the checkout. Exit code: mypy's.

    python tests/typecheck.py
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
# where each folder lands inside the package (pyproject.toml, [tool.setuptools.package-dir])
MAPPING = {"engine": "stetline", "webapp": "stetline/web", "migrations": "stetline/migrations",
           "seed_data": "stetline/seed_data"}


def main() -> int:
    """Lay out the package, run mypy on it, and translate the paths back."""
    with tempfile.TemporaryDirectory() as tmp:
        for folder, inside in MAPPING.items():
            shutil.copytree(ROOT / folder, Path(tmp) / inside, dirs_exist_ok=True,
                            ignore=shutil.ignore_patterns("__pycache__"))
        done = subprocess.run(
            [sys.executable, "-m", "mypy", "--config-file", str(ROOT / "pyproject.toml"),
             "-p", "stetline"],
            cwd=tmp, capture_output=True, text=True,
        )
    for line in (done.stdout + done.stderr).splitlines():
        # longest prefix first, so stetline/web/ is not read as engine/web/
        for folder, inside in sorted(MAPPING.items(), key=lambda kv: -len(kv[1])):
            if line.startswith(inside + "/"):
                line = folder + line[len(inside):]
                break
        print(line)
    return done.returncode


if __name__ == "__main__":
    sys.exit(main())
