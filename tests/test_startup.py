"""`stetline status` starts as quickly as `--help`: it reads the workspace without pandas, Jinja2,
the drafting engine or Alembic (the schema check reads the migration files' revision lines)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

from alembic.script import ScriptDirectory
from helpers import stetline_env

from stetline.store import db

HEAVY = ("pandas", "jinja2", "babel", "inflect", "flask", "alembic", "stetline.drafting", "stetline.reconcile")
PROBE = """
import sys
from stetline.cli import main
try:
    main(["status", "-w", {path!r}], prog_name="stetline", standalone_mode=False)
except SystemExit:
    pass
print("heavy:" + ",".join(m for m in {heavy!r} if m in sys.modules))
"""


def test_status_reads_the_workspace_without_the_heavy_libraries(demo_path: Path) -> None:
    done = subprocess.run([sys.executable, "-c", PROBE.format(path=str(demo_path), heavy=HEAVY)],
                          capture_output=True, text=True, check=True, timeout=120, env=stetline_env(demo_path))
    assert "statements" in done.stdout  # the status was printed
    assert done.stdout.strip().splitlines()[-1] == "heavy:"


def test_the_quick_schema_check_names_the_heads_alembic_names(demo_path: Path) -> None:
    heads = set(ScriptDirectory.from_config(db.alembic_config(db.sqlite_url(demo_path / "stetline.db"))).get_heads())
    assert db._file_heads() == heads and heads
