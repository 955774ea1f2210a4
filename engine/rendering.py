"""The compiled templates of every kind, and clear messages for a template that cannot be used."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import jinja2

from stetline import phrasing
from stetline.errors import StetlineError
from stetline.phrasing import HouseStyle

TEMPLATES = Path(__file__).parent / "kinds" / "templates"


def lower_first(text: str) -> str:
    """Lower-case the first letter only when the first word is plainly an ordinary word (names, GP, No. 12 kept)."""
    return phrasing.in_sentence(text)


class Renderer:
    """The compiled templates of every kind; workspace copies render in the sandbox."""

    def __init__(self, style: HouseStyle, workspace_dir: Path | None = None) -> None:
        filters = phrasing.make_filters(style)
        filters["and_list"] = filters.pop("join")  # keep Jinja's own join filter
        filters["lower_first"] = lower_first
        self._builtin = jinja2.Environment(
            loader=jinja2.FileSystemLoader(str(TEMPLATES)), autoescape=False,
            undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
        )
        self._builtin.filters.update(filters)
        self._sandbox: jinja2.Environment | None = None
        self._workspace_dir = workspace_dir
        if workspace_dir is not None and workspace_dir.is_dir():
            from stetline.sandbox import CappedSandbox  # caps the work of each render

            self._sandbox = CappedSandbox(
                loader=jinja2.FileSystemLoader(str(workspace_dir)), autoescape=False,
                undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
            )
            self._sandbox.add_filters(filters)
        self._cache: dict[str, jinja2.Template] = {}

    def template(self, kind: str) -> jinja2.Template:
        """The compiled template of a kind: the workspace's copy if there is one."""
        if kind not in self._cache:
            name = f"{kind}.j2"
            try:
                if self._sandbox is not None and self._workspace_dir and (self._workspace_dir / name).exists():
                    template = self._sandbox.get_template(name)
                else:
                    template = self._builtin.get_template(name)
            except jinja2.TemplateSyntaxError as exc:
                raise template_error(kind, exc.filename or name, exc.lineno, exc) from None
            # Jinja2 chains a template's globals over its environment's and copies the chain at
            # every render; one flat copy (this renderer never changes them) saves a third of
            # each render's overhead
            template.globals = dict(template.globals)
            self._cache[kind] = template
        return self._cache[kind]

    def render(self, kind: str, variables: dict[str, Any]) -> str:
        """Render a kind's template and tidy the spacing."""
        return phrasing.tidy(self.template(kind).render(variables))


def template_error(kind: str, where: str, line: int | None, exc: jinja2.TemplateError,
                   slot: str | None = None) -> StetlineError:
    """A clear message for a kind's template that cannot be compiled or rendered."""
    at = f"{where}, line {line}" if line else where
    during = f", while drafting {slot}" if slot else ""
    return StetlineError(
        f"the {kind} template cannot be used ({at}{during}): {exc.message or exc}; fix the template and run the "
        f"command again (the opening comment of the built-in {kind} template lists the variables it offers)"
    )


def line_in(exc: BaseException, filename: str) -> int | None:
    """The template line an error was raised at (Jinja2 puts template lines in the traceback)."""
    line = None
    tb = exc.__traceback__
    while tb is not None:
        if tb.tb_frame.f_code.co_filename == filename:
            line = tb.tb_lineno
        tb = tb.tb_next
    return line
