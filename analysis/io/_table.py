"""Finding the breath table inside a file: delimiter, header row, unit row, body, footer.

Rows are ``(line_number, cells)`` with 1-based line numbers of the original file.
"""

from __future__ import annotations

import csv
from collections.abc import Sequence
from dataclasses import dataclass, field

from analysis.errors import ImportRejected, Problem
from analysis.io._cells import MISSING_TOKENS, VALUE_RE, is_missing, is_value
from analysis.io._limits import RowBudget
from analysis.io._units import unit_code

Row = tuple[int, Sequence[object]]
#: A row split from text: every cell is a string.
TextRow = tuple[int, list[str]]

#: Candidate delimiters in order of preference when two read a file equally well
#: (``" "`` means runs of spaces). Semicolon before comma: a comma may be the decimal mark.
DELIMITERS: tuple[str, ...] = ("\t", ";", ",", "|", " ")
DELIMITER_NAMES: dict[str, str] = {"\t": "tab", ";": "semicolon", ",": "comma", "|": "bar", " ": "spaces", "": "none"}

#: Lines examined when choosing the delimiter (the header must start within them).
SNIFF_LINES = 400
#: ... and when those hold no table, this many (a longer preamble is not a breath export).
SNIFF_LINES_MAX = 20000


@dataclass
class LocatedTable:
    """Where the table is: header, optional unit row, body rows, everything else."""

    header_line: int
    headers: list[str]
    unit_line: int | None
    unit_row: list[str | None] | None
    body: list[Row]
    preamble: list[Row] = field(default_factory=list)
    interior_skipped: list[int] = field(default_factory=list)
    after: list[Row] = field(default_factory=list)
    #: Note rows inside the table (one cell of words, e.g. ``Recovery start``): ``(line, text)``.
    interior_notes: list[tuple[int, str]] = field(default_factory=list)


class _Split:
    """csv parsing of lines with a fixed delimiter, keeping original line numbers."""

    def __init__(self, delimiter: str, file_name: str, *, bounded: bool = True) -> None:
        self.delimiter = delimiter
        self.file_name = file_name
        self.bounded = bounded

    def rows(self, lines: Sequence[str], first_line: int = 1) -> list[TextRow]:
        budget = RowBudget(self.file_name, active=self.bounded)
        if self.delimiter == " ":
            split: list[TextRow] = []
            for i, line in enumerate(lines):
                cells = line.split()
                budget.take(first_line + i, cells)
                split.append((first_line + i, cells))
            return split
        out: list[TextRow] = []
        reader = csv.reader(lines, delimiter=self.delimiter, skipinitialspace=False, strict=False)
        previous = 0
        try:
            for cells in reader:
                budget.take(first_line + previous, cells)
                out.append((first_line + previous, cells))  # the reader gives a new list per row
                previous = reader.line_num
        except csv.Error as exc:
            raise ImportRejected(
                Problem(
                    f"the table cannot be split into cells ({exc})",
                    "check for an unclosed quotation mark (\") in this or an earlier line",
                    self.file_name,
                    first_line + reader.line_num - 1,
                )
            ) from None
        return out


def split_rows(lines: Sequence[str], *, delimiter: str, file_name: str, first_line: int = 1) -> list[TextRow]:
    """Split every line into cells with ``delimiter`` (csv quoting rules); ``lines[0]`` is ``first_line``."""
    return _Split(delimiter, file_name).rows(lines, first_line)


def _width(cells: Sequence[object]) -> int:
    """Number of cells without trailing empty ones."""
    n = len(cells)
    while n:
        last = cells[n - 1]
        if last is not None and not (isinstance(last, str) and not last.strip()):
            break
        n -= 1
    return n


def classify(cells: Sequence[object]) -> str:
    """``'blank'``, ``'comment'`` (first cell starts with '#'), ``'data'`` or ``'text'``.

    A row is data when at least half of its non-missing cells are numbers or times.
    """
    counted = values = 0
    first = True
    for c in cells:
        if c is None:
            continue
        if type(c) is str:
            t = c.strip()
            if not t:
                continue
            if first and t[0] == "#":
                return "comment"
            first = False
            if t.lower() in MISSING_TOKENS:
                continue
            counted += 1
            if VALUE_RE.fullmatch(t.replace("\u2212", "-")):
                values += 1
        else:
            first = False
            if is_missing(c):
                continue
            counted += 1
            if is_value(c):
                values += 1
    if not counted:
        return "blank"
    return "data" if 2 * values >= counted else "text"


def _looks_like_units(cells: Sequence[object]) -> bool:
    present = [c for c in cells if isinstance(c, str) and c.strip()]
    if not present or any(len(c.strip()) > 16 for c in present):
        return False
    return 2 * sum(1 for c in present if unit_code(c) is not None) >= len(present)


def is_event_row(cells: Sequence[object], width: int) -> bool:
    """A row that starts with a number or time and then has words where numbers belong
    (``12:40, ramp on, ramp on, ...``): an event row inside the table, not a second header."""
    if _width(cells) > width:
        return False
    for c in cells:
        if c is None or (isinstance(c, str) and not c.strip()):
            continue
        return bool(VALUE_RE.fullmatch(str(c).strip().replace("\u2212", "-")))
    return False


def note_text(cells: Sequence[object]) -> str | None:
    """The words of a row with exactly one non-empty cell holding a letter (``Recovery start``,
    ``*** stage 3 ***``): a note inside the table, not a header and not the end of the table."""
    found: str | None = None
    for c in cells:
        if c is None or (isinstance(c, str) and not c.strip()):
            continue
        if found is not None:
            return None
        found = str(c).strip()
    return found if found is not None and any(ch.isalpha() for ch in found) else None


@dataclass(frozen=True)
class _Candidate:
    score: int
    width: int
    header_index: int
    unit_index: int | None
    end_index: int  # one past the last body row


def _candidate(rows: Sequence[Row], kinds: Sequence[str], i: int) -> _Candidate | None:
    header_cells = rows[i][1]
    width = len(header_cells)
    named = sum(1 for c in header_cells if c is not None and str(c).strip())
    if named < 2 or not any(isinstance(c, str) and any(ch.isalpha() for ch in c) for c in header_cells):
        return None  # two or more column names, with letters
    j = i + 1
    n = len(rows)
    while j < n and kinds[j] in ("blank", "comment"):
        j += 1
    unit_index = None
    if j < n and kinds[j] == "text" and _looks_like_units(rows[j][1]):
        unit_index = j
        j += 1
    score = 0
    end = j
    while j < n:
        kind = kinds[j]
        if kind == "data":
            w = _width(rows[j][1])
            if w > width or w < 2:
                break
            score += 1
            end = j + 1
        elif kind == "text" and (is_event_row(rows[j][1], width) or note_text(rows[j][1]) is not None):
            pass  # an event (words in the numeric cells of a timed row) or a note inside the table
        elif kind not in ("blank", "comment"):
            break
        j += 1
    if score == 0:
        return None
    return _Candidate(score, _width(header_cells), i, unit_index, end)


def _best(rows: Sequence[Row], kinds: Sequence[str]) -> _Candidate | None:
    best: _Candidate | None = None
    for i, kind in enumerate(kinds):
        if kind != "text":
            continue
        cand = _candidate(rows, kinds, i)
        if cand and (best is None or (cand.score, cand.width) > (best.score, best.width)):
            best = cand
    return best


def _sniff(sample: Sequence[str], file_name: str) -> tuple[str | None, str | None]:
    """(delimiter giving the best table under a header, delimiter giving most rows of numbers)."""
    best_key: tuple[int, int] | None = None
    chosen: str | None = None
    most_data, fallback = 0, None
    for rank, delim in enumerate(DELIMITERS):
        if delim == " " and best_key is not None:
            break  # runs of spaces only when no real delimiter gives a table
        if delim != " " and not any(delim in line for line in sample):
            continue
        try:
            rows = _Split(delim, file_name, bounded=False).rows(sample)
        except ImportRejected:
            continue
        kinds = [classify(c) for _, c in rows]
        n_data = sum(1 for (_, c), k in zip(rows, kinds, strict=True) if k == "data" and _width(c) >= 2)
        if n_data > most_data:
            most_data, fallback = n_data, delim
        cand = _best(rows, kinds)
        if cand is None:
            continue
        key = (cand.score, -rank)
        if best_key is None or key > best_key:
            best_key, chosen = key, delim
    return chosen, fallback


def choose_delimiter(lines: Sequence[str], *, file_name: str) -> str:
    """The delimiter whose split gives the longest table under a header.

    Judged on the first :data:`SNIFF_LINES` lines (:data:`SNIFF_LINES_MAX` when they hold no
    table). Ties go to the earlier entry of :data:`DELIMITERS`; runs of spaces are tried only
    when no other delimiter gives a table. Without any header, the delimiter that splits most
    rows into numbers (so that the rejection can point at them); comma when nothing does.
    """
    chosen, fallback = _sniff(list(lines[:SNIFF_LINES]), file_name)
    if chosen is None and len(lines) > SNIFF_LINES:
        chosen, fallback = _sniff(list(lines[:SNIFF_LINES_MAX]), file_name)
    return chosen or fallback or ","


def _header_names(cells: Sequence[object], width: int) -> list[str]:
    names: list[str] = []
    seen: dict[str, int] = {}
    for k in range(width):
        raw = cells[k] if k < len(cells) else None
        name = str(raw).strip() if raw is not None else ""
        if isinstance(raw, float) and raw.is_integer():
            name = str(int(raw))
        if not name:
            name = f"(column {k + 1})"
        if name in seen:
            seen[name] += 1
            name = f"{name} #{seen[name]}"
        else:
            seen[name] = 1
        names.append(name)
    return names


def locate_table(rows: Sequence[Row], *, file_name: str) -> LocatedTable:
    """Find the header and the body of the breath table.

    Raises
    ------
    ImportRejected
        No row of column names followed by rows of numbers was found.
    """
    kinds = [classify(cells) for _, cells in rows]
    best = _best(rows, kinds)
    if best is None:
        first_data = next((rows[k][0] for k, kind in enumerate(kinds) if kind == "data"), None)
        if first_data is None:
            message = "no table of numbers was found"
            fix = "check this is a breath-by-breath export (one row per breath, one column per signal)"
        else:
            message = f"no header row above the numbers that start on line {first_data}"
            fix = "add a first row naming the columns (e.g. Time, VO2, VCO2, VE)"
        raise ImportRejected(Problem(message, fix, file_name, first_data))
    header_line, header_cells = rows[best.header_index]
    width = max(len(header_cells), max((_width(c) for _, c in rows[best.header_index + 1 : best.end_index]), default=0))
    headers = _header_names(header_cells, width)
    unit_row = None
    unit_line = None
    if best.unit_index is not None:
        unit_line, ucells = rows[best.unit_index]
        unit_row = [(str(ucells[k]).strip() if k < len(ucells) and ucells[k] is not None else None) for k in range(width)]
    body: list[Row] = []
    interior: list[int] = []
    notes: list[tuple[int, str]] = []
    for k in range(best.header_index + 1, best.end_index):
        if k == best.unit_index:
            continue
        line, cells = rows[k]
        if kinds[k] == "data" or (kinds[k] == "text" and is_event_row(cells, width)):
            padded = list(cells[:width]) + [None] * (width - min(len(cells), width))
            body.append((line, padded))
        else:
            interior.append(line)
            text = note_text(cells) if kinds[k] == "text" else None
            if text is not None:
                notes.append((line, text))
    return LocatedTable(
        header_line=header_line,
        headers=headers,
        unit_line=unit_line,
        unit_row=unit_row,
        body=body,
        preamble=list(rows[: best.header_index]),
        interior_skipped=interior,
        after=list(rows[best.end_index :]),
        interior_notes=notes,
    )
