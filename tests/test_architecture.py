"""The claims DEVELOPERS.md makes about the code, checked on the source tree.

Each test reads the Python files with ``ast`` (nothing is imported), so a claim that drifts
fails here: imports point down (no cycle, counting imports inside functions and under
``TYPE_CHECKING``), no module is over 450 lines, the engine never imports Flask or the web app
(except the CLI's serving module), and only the store speaks SQL.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
# The folders that make up the installed package, and the import name each has (pyproject.toml).
ROOMS = {
    "engine": "stetline",
    "webapp": "stetline.web",
    "migrations": "stetline.migrations",
    "seed_data": "stetline.seed_data",
}
MAX_LINES = 450
# What modules outside the store may take from SQLAlchemy: the session and engine types to pass
# around, and the exception classes to translate. Building a query is the store's job.
SQL_NAMES_ALLOWED = {"Session", "sessionmaker", "Engine", "SQLAlchemyError", "OperationalError",
                     "IntegrityError", "StaleDataError", "DBAPIError"}


def _modules() -> dict[str, Path]:
    """Every module of the package by its import name."""
    found: dict[str, Path] = {}
    for folder, name in ROOMS.items():
        for path in sorted((ROOT / folder).rglob("*.py")):
            parts = list(path.relative_to(ROOT / folder).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts = parts[:-1]
            found[".".join([name, *parts])] = path
    return found


MODULES = _modules()


def _imports(name: str, path: Path) -> list[tuple[str, list[str]]]:
    """(imported module, imported names) for every import statement, anywhere in the file."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    out: list[tuple[str, list[str]]] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.extend((alias.name, []) for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")
                anchor = anchor[: len(anchor) - node.level + 1]
                base = ".".join(anchor + ([base] if base else []))
            names = [alias.name for alias in node.names]
            # ``from stetline import kinds`` imports the submodule stetline.kinds; the package's
            # own __init__ counts only when a name comes from it
            submodules = [n for n in names if f"{base}.{n}" in MODULES]
            out.extend((f"{base}.{n}", []) for n in submodules)
            if len(submodules) < len(names):
                out.append((base, [n for n in names if n not in submodules]))
    return out


def _graph() -> dict[str, set[str]]:
    """Module → the package modules it imports (a package's own __init__ excluded)."""
    graph: dict[str, set[str]] = {}
    for name, path in MODULES.items():
        targets = set()
        for module, _names in _imports(name, path):
            if module in MODULES and module != name:
                targets.add(module)
        graph[name] = targets
    return graph


def _cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    counter = [0]

    def visit(node: str) -> None:
        index[node] = low[node] = counter[0]
        counter[0] += 1
        stack.append(node)
        on_stack.add(node)
        for nxt in sorted(graph[node]):
            if nxt not in index:
                visit(nxt)
                low[node] = min(low[node], low[nxt])
            elif nxt in on_stack:
                low[node] = min(low[node], index[nxt])
        if low[node] == index[node]:
            component = []
            while True:
                top = stack.pop()
                on_stack.discard(top)
                component.append(top)
                if top == node:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    for node in sorted(graph):
        if node not in index:
            visit(node)
    return found


def test_the_tree_has_the_modules_this_file_reads() -> None:
    # a guard for the checks below: they must look at the real package, not an empty list
    assert "stetline.reconcile" in MODULES and "stetline.web" in MODULES
    assert len(MODULES) > 60


def test_every_import_points_down() -> None:
    assert _cycles(_graph()) == []


def test_the_cycle_finder_finds_a_cycle() -> None:
    # the check above is only worth something if it can fail
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": set()}) == [["a", "b", "c"]]


@pytest.mark.parametrize("name", sorted(MODULES))
def test_no_module_is_over_450_lines(name: str) -> None:
    lines = MODULES[name].read_text(encoding="utf-8").count("\n")
    assert lines <= MAX_LINES, f"{MODULES[name].relative_to(ROOT)} has {lines} lines"


def test_the_engine_never_imports_flask_or_the_web_app() -> None:
    offenders = []
    for name, path in MODULES.items():
        if not name.startswith("stetline.") or name.startswith(("stetline.web", "stetline.migrations")):
            continue
        if name == "stetline.cli.serving":
            continue  # the one module that starts the web app, when `stetline serve` runs
        for module, _names in _imports(name, path):
            web = module.split(".")[0] in {"flask", "flask_wtf"} or module.startswith(
                ("stetline.web", "werkzeug.serving", "werkzeug.wrappers"))
            if web:
                offenders.append(f"{name} imports {module}")
    assert offenders == []


def test_only_the_store_speaks_sql() -> None:
    offenders = []
    for name, path in MODULES.items():
        if name.startswith(("stetline.store", "stetline.migrations")):
            continue
        for module, names in _imports(name, path):
            top = module.split(".")[0]
            if top in {"sqlite3", "psycopg"}:
                offenders.append(f"{name} imports {module}")
            elif top == "sqlalchemy":
                extra = sorted(set(names) - SQL_NAMES_ALLOWED) if names else [module]
                if extra:
                    offenders.append(f"{name} takes {', '.join(extra)} from {module}")
    assert offenders == []


def test_developers_md_lists_every_engine_and_web_module() -> None:
    # the contributors' guide's layout block names each module; a new or removed module fails here
    guide = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    block = guide.split("## Layout", 1)[1].split("```", 2)[1]
    named = set(re.findall(r"\b([a-z_]+)\.py\b", block))
    modules = {p.stem for folder in ("engine", "webapp") for p in (ROOT / folder).glob("*.py")}
    modules -= {"__init__"}
    assert sorted(modules - named) == [], "modules DEVELOPERS.md does not name"
    anywhere = {p.stem for folder in ROOMS for p in (ROOT / folder).rglob("*.py")}
    assert sorted(named - anywhere) == [], "DEVELOPERS.md names modules that do not exist"


def test_tests_take_shared_helpers_from_helpers_not_conftest() -> None:
    # conftest.py holds fixtures; what tests import lives in tests/helpers.py (DEVELOPERS.md)
    offenders = [str(p.relative_to(ROOT)) for p in sorted((ROOT / "tests").rglob("*.py"))
                 if re.search(r"^\s*(from|import) (tests\.)?conftest\b", p.read_text(encoding="utf-8"), re.M)]
    assert offenders == []
