"""What every command module shares: the shell's error handling, the common options, opening the
workspace, and choices read from the engine's declarations.

Nothing heavy is imported here (no pandas, Jinja2, Babel, inflect, no web app), so that
``stetline --help`` starts at once; command modules import the engine inside their commands.
"""

from __future__ import annotations

import getpass
import json
import sys
import time
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import click
from sqlalchemy.exc import SQLAlchemyError

from stetline.errors import StetlineError
from stetline.progress import Progress, describe, no_progress
from stetline.workspace import Workspace, default_path, init_workspace, open_workspace

MAX_MESSAGE = 300


def _one_line(text: str) -> str:
    return " ".join(text.split())[:MAX_MESSAGE]


@contextmanager
def messages_for_errors() -> Iterator[None]:
    """Turn every error of a command into one line on stderr and exit code 1 (never a traceback)."""
    try:
        yield
    except (click.ClickException, click.exceptions.Exit, click.Abort, BrokenPipeError):
        raise  # click prints these, and ends quietly on a closed pipe
    except StetlineError as exc:
        raise click.ClickException(str(exc)) from None
    except OSError as exc:
        raise click.ClickException(f"{exc.strerror or exc}: {exc.filename or ''}".rstrip(": ")) from None
    except SQLAlchemyError as exc:
        detail = _one_line(str(getattr(exc, "orig", exc)))
        raise click.ClickException(
            f"the workspace database could not complete the command ({detail}); nothing was changed"
        ) from None
    except Exception as exc:  # a bug or an unforeseen input: still one line, never a traceback
        detail = _one_line(str(exc)) or "no detail"
        raise click.ClickException(f"unexpected error ({type(exc).__name__}): {detail}") from None


class Shell(click.Group):
    """The ``stetline`` group: runs each command under the shell's error handling."""

    def invoke(self, ctx: click.Context) -> Any:
        """Run the chosen command; its errors become one-line messages."""
        with messages_for_errors():
            return super().invoke(ctx)


class Declared(click.Choice):  # type: ignore[type-arg]
    """A choice among names the engine declares, read only when click first needs them."""

    def __init__(self, load: Callable[[], Iterable[str]]) -> None:
        self._load = load
        self._names: tuple[str, ...] | None = None
        super().__init__(())

    @property  # type: ignore[override]
    def choices(self) -> tuple[str, ...]:
        """The declared names."""
        if self._names is None:
            self._names = tuple(self._load())
        return self._names

    @choices.setter
    def choices(self, _value: Iterable[str]) -> None:
        """Ignore click's own setting: the names come from the declaration."""


def _kinds() -> Iterable[str]:
    from stetline.kinds import BY_NAME

    return BY_NAME


def _statuses() -> Iterable[str]:
    from stetline.actions import STATUSES

    return STATUSES


def _roles() -> Iterable[str]:
    from stetline.accounts import ROLES

    return ROLES


def _formats() -> Iterable[str]:
    from stetline.formats import FORMATS

    return FORMATS


KIND = Declared(_kinds)
STATUS = Declared(_statuses)
ROLE = Declared(_roles)
FORMAT = Declared(_formats)


def _default_by() -> str:
    try:
        return getpass.getuser()
    except Exception:  # no login name on some containers
        return "unknown"


workspace_option = click.option(
    "-w", "--workspace", "workspace", type=click.Path(file_okay=False, path_type=Path),
    default=None, help="Workspace folder (default: $STETLINE_WORKSPACE or ./workspace).",
)
by_option = click.option("--by", default=_default_by, show_default="your login name",
                         help="Who acts (recorded in the history).")
json_option = click.option("--json", "as_json", is_flag=True, help="Print as JSON.")


def closing(ws: Workspace) -> Workspace:
    """Close the workspace (releasing its database connections) when the running command ends."""
    ctx = click.get_current_context(silent=True)
    if ctx is not None:
        ctx.call_on_close(ws.close)
    return ws


def open_ws(path: Path | None) -> Workspace:
    """Open the workspace at PATH (or the default one) for the running command."""
    return closing(open_workspace(path or default_path()))


def init_ws(path: Path | None) -> Workspace:
    """Create (or bring up to date) the workspace at PATH for the running command."""
    return closing(init_workspace(path or default_path()))


def echo_json(data: Any) -> None:
    """Print data as indented JSON."""
    click.echo(json.dumps(data, indent=2, ensure_ascii=False))


@contextmanager
def shown_progress(command: str, as_json: bool = False) -> Iterator[Progress]:
    """A progress callback showing the stage and count on one line of stderr, rewritten in place.

    Only on a terminal: nothing when stdout or stderr is a pipe or a file, nor with ``--json``.
    The line is cleared when the work ends, before the command prints its result.
    """
    out, err = sys.stdout, sys.stderr
    if as_json or not (out.isatty() and err.isatty()):
        yield no_progress
        return
    width, last_stage, last_at = 0, "", 0.0

    def show(stage: str, done: int, total: int | None) -> None:
        nonlocal width, last_stage, last_at
        now = time.monotonic()
        if stage == last_stage and now - last_at < 0.2:
            return  # at most five redraws a second within a stage
        line = f"{command}: {describe(stage, done, total)}"
        err.write("\r" + line.ljust(width))
        err.flush()
        width, last_stage, last_at = max(width, len(line)), stage, now

    try:
        yield show
    finally:
        if width:
            err.write("\r" + " " * width + "\r")
            err.flush()
