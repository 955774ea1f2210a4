"""The capped Jinja2 sandbox that renders text people wrote: live fields, phrasing copies, layouts.

Jinja2's immutable sandbox stops escapes but not work. This one counts it, per render: every
loop round, call and filter spends a step; every render has a wall-clock deadline; no string or
list a template builds may pass ``MAX_STRING`` items; the printed text is counted as it is made;
``**``, ``*`` on text and ``%`` on text are refused, as are the string methods and filters that
can build a huge string from a small number (``center``, ``format``, ...). A template that goes
over any cap, or recurses until Python's stack runs out, stops with ``TemplateTooCostly`` and a
clear message. It must not import anything of Stetline's but ``errors``.
"""

from __future__ import annotations

import functools
import operator
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import jinja2
from jinja2 import nodes
from jinja2.compiler import CodeGenerator, Frame
from jinja2.runtime import Context
from jinja2.sandbox import ImmutableSandboxedEnvironment, SecurityError
from markupsafe import Markup

MAX_PRODUCT = 10**9
MAX_STRING = 200_000  # characters of any one string (items of any one list) a template builds
MAX_STEPS = 100_000  # loop rounds, calls and filters of one render
MAX_PRINTED = 1_000_000  # characters printed by one render, counted as they are printed
MAX_SECONDS = 2.0  # wall time of one render
MAX_WIDTH = 10_000  # a width or count given to a filter or a string method
REFUSED_FILTERS = frozenset({"format", "center", "filesizeformat", "xmlattr", "urlize"})
REFUSED_METHODS = frozenset({"center", "ljust", "rjust", "zfill", "expandtabs", "format", "format_map"})
WIDTH_FILTERS = frozenset({"indent", "wordwrap", "truncate", "batch", "slice"})
_ROUNDS = "stetline rounds"  # names with a space cannot be written in a template
_TEXT = "stetline text"


class TemplateTooCostly(SecurityError):
    """A template went over a cap of the sandbox (steps, time, size, recursion)."""


@dataclass
class Budget:
    """What one render may still spend: steps, printed characters and time."""

    steps: int | None
    printed: int | None
    deadline: float | None
    seconds: float | None

    def spend(self, steps: int = 1) -> None:
        """Take steps from the budget; raise when a cap is passed or the time is up."""
        if self.steps is not None:
            self.steps -= steps
            if self.steps < 0:
                raise TemplateTooCostly(f"the template does too much work (more than {MAX_STEPS:,} loop rounds "
                                        "and calls); simplify its loops and macros")
        if self.deadline is not None and time.monotonic() > self.deadline:
            raise TemplateTooCostly(f"the template took longer than {self.seconds:g} seconds to render and was stopped")

    def print(self, chars: int) -> None:
        """Count printed characters against the cap."""
        if self.printed is not None:
            self.printed -= chars
            if self.printed < 0:
                raise TemplateTooCostly(f"the template prints more than {MAX_PRINTED:,} characters")
        self.spend(0)


_local = threading.local()
_UNLIMITED = Budget(None, None, None, None)


def _budget() -> Budget:
    return getattr(_local, "budget", None) or _UNLIMITED


def _checked(value: Any) -> Any:
    if isinstance(value, (str, list, tuple)) and len(value) > MAX_STRING:
        raise TemplateTooCostly(f"the template builds a text or list longer than {MAX_STRING:,}")
    return value


def _width_args(name: str, args: tuple[Any, ...], kwargs: dict[str, Any]) -> None:
    for a in (*args, *kwargs.values()):
        if isinstance(a, int) and not isinstance(a, bool) and abs(a) > MAX_WIDTH:
            raise TemplateTooCostly(f"{name} was given {a}; widths and counts above {MAX_WIDTH:,} are refused")


def _joined_size(items: Any, sep: str) -> int:
    if not isinstance(items, (list, tuple, str, dict, range)):
        return 0
    return sum(len(str(x)) for x in items) + len(sep) * len(items)


def _replaced_size(text: str, old: str, new: str) -> int:
    return len(text) + max(0, len(new) - len(old)) * (text.count(old) if old else len(text) + 1)


def guard(name: str, f: Callable[..., Any]) -> Callable[..., Any]:
    """Wrap a filter so that it spends a step, refuses huge widths and oversized results."""

    @functools.wraps(f)  # keeps jinja_pass_arg (context, environment) for Jinja
    def run(*args: Any, **kwargs: Any) -> Any:
        _budget().spend()
        if name in WIDTH_FILTERS:
            _width_args(name, args[1:], kwargs)
        sep = str(args[2] if len(args) > 2 else kwargs.get("d", ""))
        if name == "join" and len(args) > 1 and _joined_size(args[1], sep) > MAX_STRING:
            raise TemplateTooCostly(f"the template builds a text longer than {MAX_STRING:,}")
        texts = [a for a in args if isinstance(a, str)]
        if name == "replace" and len(texts) >= 3 and _replaced_size(*texts[:3]) > MAX_STRING:
            raise TemplateTooCostly(f"the template builds a text longer than {MAX_STRING:,}")
        return _checked(f(*args, **kwargs))

    return run


def _refused(name: str) -> Callable[..., Any]:
    def refuse(*_args: Any, **_kwargs: Any) -> Any:
        raise SecurityError(f"the {name} filter is not allowed here")

    return refuse


@jinja2.pass_context
def _rounds(_context: Context, iterable: Any) -> Any:
    budget = _budget()
    for item in iterable:
        budget.spend()
        yield item


@jinja2.pass_context
def _text(_context: Context, data: str) -> Markup:
    return Markup(data)


def _finalize(value: Any) -> Any:
    _budget().print(len(str(value)) if value is not None else 0)
    return value


class _Generator(CodeGenerator):
    """Compiles ``~`` so that the joined text is checked against the size cap."""

    def visit_Concat(self, node: nodes.Concat, frame: Frame) -> None:
        self.write("environment.checked_text(")
        super().visit_Concat(node, frame)
        self.write(")")


class BudgetedTemplate(jinja2.Template):
    """A template whose every render gets a fresh budget; deep recursion becomes a clear error."""

    def render(self, *args: Any, **kwargs: Any) -> str:
        """Render within the environment's caps."""
        env = self.environment
        if getattr(_local, "budget", None) is not None or not isinstance(env, CappedSandbox):
            return super().render(*args, **kwargs)
        _local.budget = env.new_budget()
        try:
            return super().render(*args, **kwargs)
        except RecursionError:
            raise TemplateTooCostly("the template calls itself too deeply (a macro or loop that never ends)") from None
        finally:
            _local.budget = None


class CappedSandbox(ImmutableSandboxedEnvironment):
    """Jinja2's immutable sandbox with the work of each render counted and capped.

    ``steps``, ``printed`` and ``seconds`` default to the caps above; ``None`` lifts one (a
    publication's layout prints every statement, so it is capped in size but not in steps).
    """

    intercepted_binops = frozenset(["*", "**", "+", "%"])
    code_generator_class = _Generator
    template_class = BudgetedTemplate

    def __init__(self, *args: Any, steps: int | None = MAX_STEPS, printed: int | None = MAX_PRINTED,
                 seconds: float | None = MAX_SECONDS, **kwargs: Any) -> None:
        kwargs.setdefault("finalize", _finalize)
        super().__init__(*args, **kwargs)
        self.caps = (steps, printed, seconds)
        self.globals.pop("lipsum", None)
        self.filters = {}
        self.add_filters(jinja2.filters.FILTERS)
        self.filters[_ROUNDS] = _rounds
        self.filters[_TEXT] = _text

    def add_filters(self, filters: dict[str, Callable[..., Any]]) -> None:
        """Offer filters to templates, each guarded (the refused ones refuse)."""
        for name, f in filters.items():
            self.filters[name] = _refused(name) if name in REFUSED_FILTERS else guard(name, f)

    def new_budget(self) -> Budget:
        """A fresh budget for one render."""
        steps, printed, seconds = self.caps
        return Budget(steps, printed, None if seconds is None else time.monotonic() + seconds, seconds)

    def _parse(self, source: str, name: str | None, filename: str | None) -> nodes.Template:
        tree = super()._parse(source, name, filename)
        for loop in tree.find_all(nodes.For):
            loop.iter = nodes.Filter(loop.iter, _ROUNDS, [], [], None, None, lineno=loop.lineno)
        for output in tree.find_all(nodes.Output):
            output.nodes = [
                nodes.Filter(nodes.Const(n.data), _TEXT, [], [], None, None, lineno=n.lineno)
                if isinstance(n, nodes.TemplateData) else n for n in output.nodes
            ]
        return tree

    def checked_text(self, value: Any) -> Any:
        """Check a text joined with ``~`` against the size cap."""
        _budget().spend(0)
        return _checked(value)

    def call_binop(self, context: Context, operator_name: str, left: Any, right: Any) -> Any:
        """Refuse ``**``, repeated text and text formatting; cap products and joined sizes."""
        _budget().spend(0)
        if operator_name == "**":
            raise SecurityError("the ** operator is not allowed here")
        if operator_name == "%":
            if isinstance(left, str):
                raise SecurityError("formatting text with % is not allowed here")
            return operator.mod(left, right)
        if operator_name == "+":
            return _checked(operator.add(left, right))
        if isinstance(left, (str, list, tuple)) or isinstance(right, (str, list, tuple)):
            raise SecurityError("repeating text with * is not allowed here")
        result = operator.mul(_raw(left), _raw(right))
        if isinstance(result, (int, float)) and abs(result) > MAX_PRODUCT:
            raise SecurityError("the product is too large")
        return result

    def call(__self, __context: Context, __obj: Any, *args: Any, **kwargs: Any) -> Any:
        """Spend a step per call; refuse string methods that can build huge texts."""
        _budget().spend()
        owner = getattr(__obj, "__self__", None)
        if isinstance(owner, str):
            name = getattr(__obj, "__name__", "")
            if name in REFUSED_METHODS:
                raise SecurityError(f"the string method {name} is not allowed here")
            _width_args(name, args, kwargs)
            if name == "join" and args and _joined_size(args[0], owner) > MAX_STRING:
                raise TemplateTooCostly(f"the template builds a text longer than {MAX_STRING:,}")
            if name == "replace" and len(args) >= 2 and _replaced_size(owner, str(args[0]), str(args[1])) > MAX_STRING:
                raise TemplateTooCostly(f"the template builds a text longer than {MAX_STRING:,}")
        return _checked(super().call(__context, __obj, *args, **kwargs))


def _raw(x: Any) -> Any:
    """A live field's raw value (anything with a ``value`` and a ``shown``), else the object."""
    return x.value if hasattr(x, "shown") and hasattr(x, "value") else x
