"""Workspace settings, declared once as data: the CLI, the web app and the docs read this list."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from stetline.errors import StetlineError


@dataclass(frozen=True)
class SettingSpec:
    """One setting: its key, default, help text and the values it accepts."""

    key: str
    default: Any
    help: str
    choices: tuple[Any, ...] = ()
    minimum: int | None = None

    def parse(self, text: str) -> Any:
        """Turn a typed value into this setting's type; raise StetlineError when it is not valid."""
        if isinstance(self.default, bool):
            low = text.strip().lower()
            if low in ("true", "yes", "on", "1"):
                return True
            if low in ("false", "no", "off", "0"):
                return False
            raise StetlineError(f"setting {self.key} is true or false, not {text!r}")
        if isinstance(self.default, int):
            try:
                number = int(text)
            except ValueError:
                raise StetlineError(f"setting {self.key} is a whole number, not {text!r}") from None
            if self.minimum is not None and number < self.minimum:
                raise StetlineError(f"setting {self.key} is at least {self.minimum}, not {number}")
            return number
        if self.choices and text not in self.choices:
            raise StetlineError(f"setting {self.key} is one of {', '.join(map(str, self.choices))}, not {text!r}")
        return text


SETTINGS: tuple[SettingSpec, ...] = (
    SettingSpec("title", "Statements report", "The publication's title, printed on its title block."),
    SettingSpec("entity_noun", "area", "What the report calls one entity, singular (town, district, school)."),
    SettingSpec("locale", "en_GB", "Locale of numbers (decimal sign and digit grouping), as a CLDR code.",
                ("en_GB", "en_US", "en_IE", "en_AU", "en_NZ", "en_CA")),
    SettingSpec("serial_comma", False, "Put a comma before the last 'and' of a list (A, B, and C)."),
    SettingSpec("percent_word", "%", "How per cent is written after a number.", ("%", "per cent", "percent")),
    SettingSpec("small_numbers_in_words", True,
                "Write counts from one to nine as words (house style of many statistical offices)."),
    SettingSpec("untraced_numbers", "warn", "What publishing does with typed numbers that match no fact.",
                ("warn", "refuse")),
    SettingSpec("self_approval", False, "Let a reviewer approve their own rewrite (off: two-person rule)."),
    SettingSpec("https", False, "The web app is served over HTTPS: session cookies are marked Secure."),
    SettingSpec("session_idle_minutes", 60, "A web session ends after this many minutes without a request.",
                minimum=1),
    SettingSpec("session_hours", 12, "A web session ends this many hours after signing in, however busy.",
                minimum=1),
)

BY_KEY = {spec.key: spec for spec in SETTINGS}

#: settings that change the wording of drafts (a redraft follows a change)
STYLE_KEYS = ("entity_noun", "locale", "serial_comma", "percent_word", "small_numbers_in_words")


def spec(key: str) -> SettingSpec:
    """The declaration of a setting; raise StetlineError naming the known keys when unknown."""
    try:
        return BY_KEY[key]
    except KeyError:
        raise StetlineError(f"unknown setting {key!r}; known: {', '.join(BY_KEY)}") from None


def with_defaults(stored: dict[str, Any]) -> dict[str, Any]:
    """Every setting's value: the stored one where set, else its default."""
    return {s.key: stored.get(s.key, s.default) for s in SETTINGS}
