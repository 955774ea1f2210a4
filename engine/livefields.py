"""Live fields in rewrites: ``{{ value }}`` shows a slot's current fact, rendered in a sandbox.

A rewrite may embed any fact of its slot's evidence by name; it shows as the fact is shown
(``{{ value }}`` → "45.2%"). Filters reformat the raw value: ``number(d)``, ``percent(d)``,
``points(d)``, ``relative``, ``ordinal``, ``count``, ``short``. A quarter or a month shows as prose
names it (``{{ period }}`` → "the third quarter of 2025", "March 2025"); ``short`` gives the form
of tables ("Q3 2025"); both from stetline.periods.period_label; a year shows as written. The text
renders in Jinja2's immutable sandbox with strict undefined names (``stetline.sandbox``: no ``*``
on strings, no ``**``, and every render capped in steps, size and time) and a cap on output
length. Rendering never raises anything but ``LiveFieldError``: whatever goes wrong becomes its
message.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import jinja2
from jinja2.sandbox import SecurityError

from stetline import periods, phrasing
from stetline.errors import StetlineError
from stetline.phrasing import HouseStyle
from stetline.sandbox import CappedSandbox

MAX_OUTPUT = 5_000
MAX_TEXT = 10_000  # characters of a rewrite as typed (live fields included)


class LiveFieldError(StetlineError):
    """A rewrite's live field cannot be rendered (unknown name, bad syntax, refused operation)."""


@dataclass(frozen=True)
class Field:
    """A fact offered to live fields: shows as its displayed text, filters use its raw value."""

    value: Any
    shown: str

    def __str__(self) -> str:
        return self.shown


def _raw(x: Any) -> Any:
    return x.value if isinstance(x, Field) else x


def _number_arg(x: Any) -> float:
    raw = _raw(x)
    if isinstance(raw, bool) or not isinstance(raw, (int, float)):
        raise LiveFieldError(f"this filter needs a number, not {str(x)!r}")
    return float(raw)


def _filters(style: HouseStyle) -> dict[str, Callable[..., Any]]:
    return {
        "number": lambda x, d=0: phrasing.number(_number_arg(x), int(d), style),
        "percent": lambda x, d=0: phrasing.percent(_number_arg(x), int(d), style),
        "points": lambda x, d=1: phrasing.points(abs(_number_arg(x)), int(d), style),
        "relative": lambda x: phrasing.relative(abs(_number_arg(x)), style),
        "ordinal": lambda x: phrasing.ordinal(int(_number_arg(x))),
        "count": lambda x: phrasing.count(int(_number_arg(x)), style),
        "short": lambda x: periods.period_label(_period_arg(x), "short", style.locale),
    }


def _period_arg(x: Any) -> str:
    raw = _raw(x)
    if not isinstance(raw, str) or periods.period_format(raw) is None:
        raise LiveFieldError(f"this filter needs a period, not {str(x)!r}")
    return raw


def _field(entry: dict[str, Any], locale: str) -> Field:
    """One evidence fact as a live field: a quarter or a month shown as prose names it, else as shown."""
    value, shown = entry.get("value"), str(entry.get("shown"))
    if isinstance(value, str) and shown == value and periods.is_within_year(value):
        shown = periods.period_label(value, "long", locale)
    return Field(value, shown)


FILTER_HELP = {
    "number(d)": "the raw value with d decimals: {{ value | number(1) }}",
    "percent(d)": "the raw value as a percentage: {{ value | percent(1) }}",
    "points(d)": "a difference in percentage points: {{ change | points(1) }}",
    "relative": "a relative change given as a fraction, as per cent: {{ change | relative }}",
    "ordinal": "a rank as an ordinal: {{ rank | ordinal }}",
    "count": "a whole number, small ones in words when house style says so: {{ rank_of | count }}",
    "short": "a quarter or a month as tables print it: {{ period | short }} (Q3 2025, where prose says the third "
             "quarter of 2025)",
}


class LiveFields:
    """Renders rewrites with live fields for one house style; templates are compiled once."""

    def __init__(self, style: HouseStyle) -> None:
        self.env = CappedSandbox(undefined=jinja2.StrictUndefined, autoescape=False)
        self.env.filters = {k: v for k, v in self.env.filters.items() if k.startswith("stetline ")}
        self.env.add_filters(_filters(style))
        self._cache: dict[str, jinja2.Template] = {}
        self.locale = style.locale

    def render(self, text: str, evidence: dict[str, dict[str, Any]]) -> str:
        """Render a rewrite against evidence; raise LiveFieldError with a clear message."""
        if not has_live_fields(text):
            return text
        try:
            template = self._cache.get(text) or self.env.from_string(text)
            self._cache[text] = template
            fields = {name: _field(e, self.locale) for name, e in evidence.items()}
            out = template.render(fields)
        except jinja2.UndefinedError as exc:
            known = ", ".join(sorted(evidence))
            raise LiveFieldError(f"unknown live field: {exc.message}; available: {known}") from None
        except jinja2.TemplateSyntaxError as exc:
            raise LiveFieldError(f"live field syntax error on line {exc.lineno}: {exc.message}") from None
        except SecurityError as exc:
            raise LiveFieldError(f"refused in a live field: {exc}") from None
        except LiveFieldError:
            raise
        except (TypeError, ValueError, ZeroDivisionError, OverflowError, jinja2.TemplateError) as exc:
            raise LiveFieldError(f"live field error: {exc}") from None
        except RecursionError:
            raise LiveFieldError("refused in a live field: it calls itself too deeply") from None
        except MemoryError:
            raise LiveFieldError("refused in a live field: it needs too much memory") from None
        except Exception as exc:  # a rendering must never take a page or a command down
            raise LiveFieldError(f"live field error: {type(exc).__name__}: {exc}") from None
        if len(out) > MAX_OUTPUT:
            raise LiveFieldError(f"the rendered text is longer than {MAX_OUTPUT} characters")
        return out


def has_live_fields(text: str) -> bool:
    """True when a text holds a live field or template tag."""
    return "{{" in text or "{%" in text


