"""Errors the engine raises for people to read: every message names what is wrong and where."""

from __future__ import annotations

from dataclasses import dataclass, field


class StetlineError(Exception):
    """An error meant for the person using the tool; its message is complete on its own."""


@dataclass(frozen=True)
class Problem:
    """One thing wrong with an input file: which file, row and column, and what is wrong."""

    file: str
    row: int | None
    column: str | None
    message: str

    def __str__(self) -> str:
        where = self.file
        if self.row is not None:
            where += f", row {self.row}"
        if self.column:
            where += f", column {self.column!r}"
        return f"{where}: {self.message}"


@dataclass
class ValidationError(StetlineError):
    """The input files do not hold a valid edition; nothing was written."""

    problems: list[Problem] = field(default_factory=list)

    def __str__(self) -> str:
        lines = [f"{len(self.problems)} problem(s) in the input; nothing was written:"]
        lines += [f"  {p}" for p in self.problems[:50]]
        if len(self.problems) > 50:
            lines.append(f"  … and {len(self.problems) - 50} more")
        return "\n".join(lines)


class NotFound(StetlineError):
    """A slot, edition, entity or topic that the workspace does not hold."""


class Conflict(StetlineError):
    """A change made against a version of a slot that is no longer current."""


class Forbidden(StetlineError):
    """The acting account's role does not allow this action."""
