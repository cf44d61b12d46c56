"""Tidemark's own exception and warning types.

Every message is written for a lab user: it names the file, row and column where they are
known, says what was found, and says what would fix it.
"""

from __future__ import annotations

from dataclasses import dataclass


class TidemarkError(Exception):
    """Base class of every error Tidemark raises on purpose."""


@dataclass(frozen=True)
class Problem:
    """One located problem in an input file.

    ``row`` is the 1-based line number in the original file (``None`` when the problem is not
    tied to one line); ``column`` is the header as written in the file (or ``None``).
    """

    message: str
    fix: str = ""
    file: str | None = None
    row: int | None = None
    column: str | None = None

    def describe(self) -> str:
        where = []
        if self.file:
            where.append(f"file '{self.file}'")
        if self.row is not None:
            where.append(f"line {self.row}")
        if self.column:
            where.append(f"column '{self.column}'")
        head = ", ".join(where)
        text = f"{head}: {self.message}" if head else self.message
        if self.fix:
            text += f" — {self.fix}"
        return text


class ImportRejected(TidemarkError):
    """A file could not be turned into a session. Nothing was written.

    Carries one or more :class:`Problem` records; ``str()`` gives a readable message.
    """

    def __init__(self, problems: list[Problem] | Problem) -> None:
        if isinstance(problems, Problem):
            problems = [problems]
        self.problems: list[Problem] = list(problems)
        super().__init__("\n".join(p.describe() for p in self.problems))


class InvalidParameter(TidemarkError, ValueError):
    """A function argument is outside what it accepts (name, expected, received)."""

    def __init__(self, name: str, expected: str, received: object) -> None:
        self.name = name
        self.expected = expected
        self.received = received
        super().__init__(f"'{name}' must be {expected}; received {received!r}.")


class AnalysisError(TidemarkError):
    """The analysis cannot be carried out on this session (with the reason and a remedy)."""


class DataQualityWarning(UserWarning):
    """A data problem that does not stop the analysis (gaps, implausible breaths, ...)."""


def require(condition: bool, name: str, expected: str, received: object) -> None:
    """Raise :class:`InvalidParameter` unless ``condition`` holds."""
    if not condition:
        raise InvalidParameter(name, expected, received)
