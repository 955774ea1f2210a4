"""The project installs one import name, ``stetline``, and ships what it needs inside it."""

from __future__ import annotations

import shutil
import subprocess
import sys
import zipfile
from importlib import metadata, resources
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def _top_level(names: list[str]) -> set[str]:
    """The top-level names a list of installed paths puts into site-packages."""
    tops = set()
    for name in names:
        first = name.replace("\\", "/").split("/")[0]
        if first.endswith((".dist-info", ".data")) or first in {"..", "bin", "Scripts"}:
            continue
        tops.add(first.removesuffix(".py"))
    return tops


@pytest.fixture(scope="module")
def wheel(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A wheel built from this checkout, as `pip install .` would build it."""
    out = tmp_path_factory.mktemp("wheel")
    # built from a clean copy: setuptools reuses a checkout's build/ folder, which can hold
    # modules the package list no longer (or never) names
    source = tmp_path_factory.mktemp("source") / "stetline"
    shutil.copytree(ROOT, source, ignore=shutil.ignore_patterns(
        ".git", ".venv", "build", "dist", "*.egg-info", "__pycache__", ".*_cache", ".hypothesis"))
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q",
         "-w", str(out), str(source)],
        check=True, capture_output=True,
    )
    (found,) = out.glob("stetline-*.whl")
    return found


def test_the_wheel_installs_one_top_level_package(wheel: Path) -> None:
    with zipfile.ZipFile(wheel) as archive:
        names = archive.namelist()
        record = next(n for n in names if n.endswith(".dist-info/RECORD"))
        recorded = [line.split(",")[0] for line in archive.read(record).decode().splitlines()]
    assert _top_level(recorded) == {"stetline"}
    # and it carries every room of the design under that name
    for inside in ("stetline/reconcile.py", "stetline/web/__init__.py",
                   "stetline/migrations/env.py", "stetline/seed_data/topics.csv",
                   "stetline/kinds/templates/change.j2", "stetline/web/templates/base.html"):
        assert inside in names, inside


def test_the_wheel_holds_every_module_of_the_tree(wheel: Path) -> None:
    # pyproject.toml lists the packages by hand: a new subpackage left out would install without
    # its modules, and only a non-editable install (CI's) would notice
    rooms = {"engine": "stetline", "webapp": "stetline/web", "migrations": "stetline/migrations",
             "seed_data": "stetline/seed_data"}
    with zipfile.ZipFile(wheel) as archive:
        names = set(archive.namelist())
    expected = {f"{inside}/{path.relative_to(ROOT / folder).as_posix()}"
                for folder, inside in rooms.items() for path in (ROOT / folder).rglob("*.py")
                if "__pycache__" not in path.parts}
    assert len(expected) > 80
    assert sorted(expected - names) == []


def test_the_top_level_check_would_see_a_second_package() -> None:
    # the check above must be able to fail: a stray module beside the package is reported
    assert _top_level(["stetline/__init__.py", "engine/__init__.py", "six.py",
                       "stetline-0.1.0.dist-info/RECORD"]) == {"stetline", "engine", "six"}


def test_the_installed_distribution_claims_only_stetline() -> None:
    dist = metadata.distribution("stetline")
    files = [str(f) for f in dist.files or []]
    editable = any("__editable__" in f for f in files)
    if editable:
        # an editable install maps the one name onto the source folders through its finder
        finder = next(f for f in files if f.startswith("__editable__") and f.endswith("finder.py"))
        text = Path(str(dist.locate_file(finder))).read_text(encoding="utf-8")
        mapping_line = next(line for line in text.splitlines() if line.startswith("MAPPING"))
        assert "'stetline':" in mapping_line
        assert "'engine':" not in mapping_line and "'webapp':" not in mapping_line
    else:
        assert _top_level(files) == {"stetline"}


def test_the_package_ships_its_data() -> None:
    versions = resources.files("stetline.migrations") / "versions"
    assert any(p.name.startswith("0001") for p in versions.iterdir())
    for name in ("topics.csv", "entities.csv", "observations-2024.csv", "observations-2025.csv"):
        assert (resources.files("stetline.seed_data") / name).is_file(), name


def test_the_console_script_runs() -> None:
    done = subprocess.run([str(Path(sys.executable).with_name("stetline")), "--help"],
                          capture_output=True, text=True, check=True)
    assert "Draft, keep and recheck" in done.stdout
