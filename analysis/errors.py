"""Tidemark's own exception and warning types.

Every message is written for a lab user: it names the file, row and column where they are
known, says what was found, and says what would fix it.
"""

from __future__ import annotations

from dataclasses import dataclass

#: Longest piece of a file's text quoted in a message, in characters (the rest becomes "…").
QUOTE_MAX_CHARS = 80


def shorten(text: object, *, max_chars: int = QUOTE_MAX_CHARS) -> str:
    """``text`` as a string of at most ``max_chars`` characters plus "…" when it was longer.

    Every message that repeats text from a file or from a caller (a cell, a header, a sheet
    name, a file name) goes through this or :func:`quoted`, so a 100,000-character cell gives
    a message of ordinary length.
    """
    s = text if isinstance(text, str) else str(text)
    return s if len(s) <= max_chars else s[:max_chars] + "…"


def quoted(value: object, *, max_chars: int = QUOTE_MAX_CHARS) -> str:
    """``repr``-style quotation of ``value`` (text in quotes), at most ``max_chars`` of its content."""
    if isinstance(value, str):
        return repr(shorten(value, max_chars=max_chars))
    text = repr(value)
    return text if len(text) <= max_chars else text[:max_chars] + "…"


#: Most names listed in one message (headers, sheets); the rest are counted.
LIST_MAX_ITEMS = 20


def name_list(names: object, *, quote: bool = False, max_items: int = LIST_MAX_ITEMS) -> str:
    """Comma-separated names for a message, each shortened, at most ``max_items`` then a count."""
    items = list(names)  # type: ignore[call-overload]
    shown = [quoted(n) if quote else shorten(n) for n in items[:max_items]]
    if len(items) > max_items:
        shown.append(f"and {len(items) - max_items} more")
    return ", ".join(shown)


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
            where.append(f"file '{shorten(self.file)}'")
        if self.row is not None:
            where.append(f"line {self.row}")
        if self.column:
            where.append(f"column '{shorten(self.column)}'")
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
        super().__init__(f"'{name}' must be {expected}; received {quoted(received)}.")


class OutsideDerivationRange(InvalidParameter):
    """A reference equation asked about a person or test outside what it was derived from (an
    age outside its range, another exercise mode): refused, never extrapolated."""


class AnalysisError(TidemarkError):
    """The analysis cannot be carried out on this session (with the reason and a remedy)."""


class DataQualityWarning(UserWarning):
    """A data problem that does not stop the analysis (gaps, implausible breaths, ...)."""


def require(condition: bool, name: str, expected: str, received: object) -> None:
    """Raise :class:`InvalidParameter` unless ``condition`` holds."""
    if not condition:
        raise InvalidParameter(name, expected, received)
