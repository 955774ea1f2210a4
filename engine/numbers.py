"""Numbers typed by people: find them in a text, trace them to facts, update them from new facts.

A typed number is traced to a fact of the basis evidence when it reads exactly as the fact is
shown (45.2% ↔ "45.2%"), or, failing that, when the fact's value rounds to it at the typed
precision (45% ↔ 45.21). Live fields (``{{ … }}``) and template tags are not typed numbers.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

from stetline.rounding import round_half_up
from stetline.words import ordinal

NUMBER = re.compile(
    r"(?<![\w.,])(?P<cur>[£$€])?(?P<int>\d{1,3}(?:,\d{3})+|\d+)(?P<dec>\.\d+)?"
    r"(?P<suf>%|st\b|nd\b|rd\b|th\b)?(?![\w])"
)
TEMPLATE = re.compile(r"\{\{.*?\}\}|\{%.*?%\}|\{#.*?#\}", re.S)


@dataclass(frozen=True)
class TypedNumber:
    """One number in a text: where it is, how it is written and its value."""

    start: int
    end: int
    text: str
    digits: str  # the number as written, without currency or suffix ("1,234.5")
    value: float
    decimals: int
    suffix: str
    currency: str

    @property
    def grouped(self) -> bool:
        """True when the number was written with thousands separators."""
        return "," in self.digits


def find_numbers(text: str) -> list[TypedNumber]:
    """Every number typed in a text, outside live fields and template tags."""
    masked = TEMPLATE.sub(lambda m: " " * len(m.group(0)), text)
    found = []
    for m in NUMBER.finditer(masked):
        digits = m.group("int") + (m.group("dec") or "")
        value = float(digits.replace(",", ""))
        decimals = len(m.group("dec")) - 1 if m.group("dec") else 0
        found.append(TypedNumber(
            m.start(), m.end(), text[m.start():m.end()], digits, value, decimals,
            m.group("suf") or "", m.group("cur") or "",
        ))
    return found


def _shown_number(shown: str) -> TypedNumber | None:
    numbers = find_numbers(shown)
    return numbers[0] if numbers else None


def trace(number: TypedNumber, evidence: dict[str, dict[str, Any]]) -> list[str]:
    """The facts a typed number stands for: exact display matches first, else value matches."""
    exact, close = [], []
    for name, entry in evidence.items():
        shown = _shown_number(str(entry.get("shown", "")))
        if shown is not None and shown.digits == number.digits:
            exact.append(name)
            continue
        raw = entry.get("value")
        if isinstance(raw, (int, float)) and not isinstance(raw, bool) and math.isfinite(raw):
            for candidate in (raw, abs(raw), raw * 100 if number.suffix == "%" and abs(raw) < 10 else None):
                if candidate is None:
                    continue
                if float(round_half_up(candidate, number.decimals)) == number.value:
                    close.append(name)
                    break
    return exact or close


def _rewrite(number: TypedNumber, old: dict[str, Any], new: dict[str, Any]) -> str | None:
    """How the typed number reads with the new fact, at the precision the person typed."""
    old_shown = _shown_number(str(old.get("shown", "")))
    new_shown = _shown_number(str(new.get("shown", "")))
    if new_shown is None:
        return None
    if old_shown is not None and old_shown.digits == number.digits:
        digits = new_shown.digits
    else:
        raw = new.get("value")
        if not isinstance(raw, (int, float)) or isinstance(raw, bool):
            return None
        old_value = old.get("value")
        if old_shown is not None and old_value is not None and (
            float(round_half_up(abs(float(old_value)), number.decimals)) == number.value
        ):
            raw = abs(float(raw))
        q = round_half_up(float(raw), number.decimals)
        digits = f"{q:,.{number.decimals}f}" if number.grouped else f"{q:.{number.decimals}f}"
    suffix = number.suffix
    if suffix in ("st", "nd", "rd", "th"):
        whole = int(float(digits.replace(",", "")))
        return number.currency + ordinal(whole)
    return number.currency + digits + suffix


@dataclass
class Substitution:
    """The outcome of updating the typed numbers of a text from new evidence."""

    text: str
    replaced: list[tuple[str, str, str]]  # (fact, old text, new text)
    ambiguous: list[str]  # typed numbers whose facts disagree on the new value
    untraced: list[str]  # typed numbers that match no fact


def substitute(text: str, old: dict[str, dict[str, Any]], new: dict[str, dict[str, Any]]) -> Substitution:
    """Replace each typed number traced to a basis fact with the fact's new value."""
    out, pos = [], 0
    replaced: list[tuple[str, str, str]] = []
    ambiguous: list[str] = []
    untraced: list[str] = []
    for number in find_numbers(text):
        facts = trace(number, old)
        if not facts:
            untraced.append(number.text)
            continue
        options = {f: _rewrite(number, old[f], new[f]) for f in facts if f in new}
        values = {v for v in options.values() if v is not None}
        if len(values) != 1 or len(options) != len(facts):
            if len({_rewrite(number, old[f], old[f]) for f in facts}) and values and len(values) > 1:
                ambiguous.append(number.text)
            continue
        replacement = values.pop()
        if replacement != number.text:
            out.append(text[pos:number.start])
            out.append(replacement)
            pos = number.end
            replaced.append((facts[0], number.text, replacement))
    out.append(text[pos:])
    return Substitution("".join(out), replaced, ambiguous, untraced)


def shown_changes(old: dict[str, dict[str, Any]], new: dict[str, dict[str, Any]]) -> list[dict[str, Any]]:
    """The facts whose displayed text differs between two evidence sets, as {fact, old, new}."""
    changes = []
    for name in sorted(set(old) | set(new)):
        a = old.get(name, {}).get("shown")
        b = new.get(name, {}).get("shown")
        if a != b:
            changes.append({"fact": name, "old": a, "new": b})
    return changes
