"""Read and write Tidemark session files (see ``docs/session-format.md``).

A session file is UTF-8 CSV: optional ``# key: value`` metadata lines, then one header row of
canonical column names, then one row per breath.
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Sequence
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, Any, Literal

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.io._decode import _LINE_BREAK
from analysis.io._gc import gc_paused
from analysis.session import META_FLOAT_KEYS, Session

if TYPE_CHECKING:
    from analysis.io._validate import ProblemLog

#: pandas' C parser reads decimal numbers to the nearest double, as ``float()`` does: by default
#: from pandas 3 on (where the option is deprecated), with "round_trip" before.
_NEAREST_DOUBLE: Literal["round_trip"] | None = None if int(pd.__version__.split(".")[0]) >= 3 else "round_trip"

#: Order in which canonical columns are written.
COLUMN_ORDER: tuple[str, ...] = tuple(C.COLUMNS)


#: Text starting with one of these is run as a formula by spreadsheet programs (common practice).
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
#: A cell of a metadata line's value (after a comma) that starts, after spaces, like a formula:
#: ``=`` or ``@``, or ``+``/``-`` before a letter or bracket (``+0.5 km/h`` is a number, kept).
_FORMULA_AFTER_COMMA = re.compile(r",(\s*)(?=[=@]|[+\-][^\d\s.,])")


def _neutral_text(value: Any) -> Any:
    """Text that a spreadsheet would run as a formula gets a leading apostrophe (as exports do)."""
    return "'" + value if isinstance(value, str) and value.startswith(_FORMULA_START) else value


def _format_meta_value(value: Any) -> str:
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        if math.isinf(value):
            return repr(value)
        return repr(round(value, 6)).rstrip("0").rstrip(".") if value != int(value) else str(int(value))
    text = str(value).replace("\r", " ").replace("\n", " ")
    # the line itself starts with '#'; a comma starts a new cell when a spreadsheet opens the file
    return _FORMULA_AFTER_COMMA.sub(r",\1'", text)


def session_to_text(session: Session) -> str:
    """Render a session as the text of a session file."""
    lines = [f"# {key}: {_format_meta_value(value)}" for key, value in session.meta.items() if value is not None]
    cols = [c for c in COLUMN_ORDER if c in session.breaths.columns]
    table = session.breaths[cols]
    text_cols = [c for c in (C.PHASE, C.MARKER) if c in cols]
    if text_cols:  # one breath per line: line breaks inside a marker become spaces
        table = table.copy()
        for c in text_cols:
            table[c] = table[c].map(
                lambda v: _neutral_text(v.replace("\r", " ").replace("\n", " ")) if isinstance(v, str) else v
            )
    buf = io.StringIO()
    table.to_csv(buf, index=False, float_format="%.6g", lineterminator="\n")
    return ("\n".join(lines) + "\n" if lines else "") + buf.getvalue()


def write_session(session: Session, path: str | Path) -> Path:
    """Write ``session`` to ``path`` (UTF-8, ``\\n`` line ends). Returns the path."""
    path = Path(path)
    path.write_text(session_to_text(session), encoding="utf-8", newline="\n")
    return path


def parse_meta_line(line: str) -> tuple[str, str] | None:
    """``'# key: value'`` -> ``(key, value)``; anything else -> ``None``."""
    body = line.lstrip()
    if not body.startswith("#"):
        return None
    body = body[1:].strip()
    if ":" not in body:
        return None
    key, value = body.split(":", 1)
    key = key.strip()
    if not key or " " in key:
        return None
    return key, value.strip()


def coerce_meta(raw: dict[str, str]) -> dict[str, Any]:
    """Known numeric keys become floats (when they parse); everything else stays text."""
    meta: dict[str, Any] = {}
    for key, value in raw.items():
        if key in META_FLOAT_KEYS or key.startswith("truth_"):
            try:
                meta[key] = float(value.replace(",", "."))
                continue
            except ValueError:
                pass
        meta[key] = value
    return meta


def _body_cell(body: Sequence[tuple[int, Sequence[object]]], k: int, j: int) -> object:
    """The original cell of body row ``j`` in column ``k`` (quoted in error messages)."""
    return body[j][1][k]


def _session_bytes(source: str | Path | bytes, file_name: str | None, max_bytes: int) -> tuple[bytes, str]:
    from analysis.errors import ImportRejected, Problem
    from analysis.io._decode import check_size

    if isinstance(source, (bytes, bytearray)):
        name = file_name or "session.csv"
        check_size(len(source), max_bytes=max_bytes, file_name=name)
        return bytes(source), name
    path = Path(source)
    name = file_name or path.name
    try:
        check_size(path.stat().st_size, max_bytes=max_bytes, file_name=name)
        return path.read_bytes(), name
    except FileNotFoundError:
        raise ImportRejected(Problem("the session file does not exist", "check the path", str(path))) from None
    except IsADirectoryError:
        raise ImportRejected(Problem("this is a folder, not a session file", "give the file's path", str(path))) from None
    except OSError as exc:
        raise ImportRejected(Problem(f"the file cannot be read ({exc.strerror})", "check its permissions", name)) from None


@gc_paused
def read_session(source: str | Path | bytes, *, file_name: str | None = None, max_bytes: int | None = None) -> Session:
    """Read a Tidemark session file strictly (format in ``docs/session-format.md``).

    Parameters
    ----------
    source : str, Path or bytes
        A path, or the file's content.
    file_name : str, optional
        Name used in messages and as ``Session.source_name`` (default: the path's name).
    max_bytes : int, optional
        Size limit (default :data:`analysis.io.DEFAULT_MAX_BYTES`).

    Returns
    -------
    Session
        Validated like an import: impossible values rejected, suspicious rows in
        ``session.flags``; ``breaths["source_row"]`` is the 1-based line number in the file.

    Raises
    ------
    ImportRejected
        Anything outside the format: not UTF-8, unknown or repeated column names, a missing
        required column, a row with the wrong number of cells, text in a numeric column, or a
        value the importer would reject.

    Examples
    --------
    >>> s = read_session(b"# body_mass_kg: 70\\nt_s,vo2_ml_min,vco2_ml_min,ve_l_min\\n0,300,250,10\\n")
    >>> s.meta, s.breaths["source_row"].tolist(), s.breaths["vo2_ml_min"].tolist()
    ({'body_mass_kg': 70.0}, [3], [300.0])
    """
    from analysis.errors import ImportRejected, Problem
    from analysis.io._decode import DEFAULT_MAX_BYTES, decode_text, split_lines
    from analysis.io._table import split_rows
    from analysis.io._validate import ProblemLog, checked_meta, finish_session
    from analysis.io.mapping import TARGET_ALIASES

    data, name = _session_bytes(source, file_name, max_bytes or DEFAULT_MAX_BYTES)
    text = decode_text(data, file_name=name, strict_utf8=True).text
    meta_entries: list[tuple[str, str, int | None]] = []
    start, line_no = 0, 1  # the header line: the first that is neither empty nor a '#' line
    while start < len(text):
        brk = _LINE_BREAK.search(text, start)
        line = text[start : brk.start() if brk else len(text)]
        if line.strip() and not line.lstrip().startswith("#"):
            break
        parsed = parse_meta_line(line)
        if parsed:
            meta_entries.append((parsed[0], parsed[1], line_no))
        start, line_no = (brk.end() if brk else len(text)), line_no + 1
    if start == len(text):
        raise ImportRejected(
            Problem("there is no header row", f"the first line after the '# key: value' lines names the columns ({', '.join(C.REQUIRED)})", name)
        )
    brk = _LINE_BREAK.search(text, start)
    header_text, body_text = (text[start : brk.start()], text[brk.end() :]) if brk else (text[start:], "")
    # a quoted header may hold line breaks: then the csv reader splits header and body together
    quoted_header = '"' in header_text
    rows = split_rows(split_lines(text[start:]) if quoted_header else [header_text], delimiter=",", file_name=name, first_line=line_no)
    header_line, header_cells = rows[0]
    problems = ProblemLog(name)
    headers = [str(h).strip() for h in header_cells]
    columns: dict[str, int] = {}
    factors: dict[str, float] = {}
    for k, header in enumerate(headers):
        canonical, scale = header, 1.0
        if header in TARGET_ALIASES:
            canonical, scale = TARGET_ALIASES[header][0], 1000.0
        if canonical not in C.COLUMNS:
            problems.add(
                f"'{header}' is not a Tidemark column name",
                f"use one of: {', '.join(C.COLUMNS)} (or import the file with 'tidemark import', which maps other names)",
                row=header_line,
                column=header,
            )
        elif canonical in columns:
            problems.add("this column appears twice", "delete one of them", row=header_line, column=header)
        else:
            columns[canonical] = k
            factors[canonical] = scale
    for required in C.REQUIRED:
        if required not in columns:
            problems.add(
                f"the required column '{required}' is missing",
                f"a session file needs {', '.join(C.REQUIRED)}",
                row=header_line,
            )
    problems.raise_if_any()
    shown = {c: headers[k] for c, k in columns.items()}
    text_cols = {c: k for c, k in columns.items() if c not in C.NUMERIC}
    frame: dict[str, object] | None = None if quoted_header else _plain_body(body_text, first_line=line_no + 1, width=len(headers), columns=columns, text_columns=text_cols)
    if frame is None:  # quoted cells, blank lines, unusual cells or problems: read cell by cell
        if not quoted_header:
            rows = split_rows(split_lines(text[start:]), delimiter=",", file_name=name, first_line=line_no)
        frame = _body_cell_by_cell(rows[1:], headers=headers, columns=columns, problems=problems)
    for canonical, factor in factors.items():
        if factor != 1.0:
            frame[canonical] = np.asarray(frame[canonical]) * factor
    problems.raise_if_any()
    meta = checked_meta(meta_entries, problems)
    return finish_session(frame, meta=meta, file_name=name, problems=problems, headers=shown)


def _plain_body(
    body: str, *, first_line: int, width: int, columns: dict[str, int], text_columns: dict[str, int]
) -> dict[str, object] | None:
    """The breath columns of a plain body, read by pandas' C parser; ``None`` when it is not plain.

    Plain: no quotation marks, no blank lines, exactly ``width`` cells on every line, every
    numeric cell empty or a finite number. Then each line is one row and a row's
    ``source_row`` is its line number, and the values are those the cell-by-cell reader gives
    (pandas reads decimal numbers to the nearest double, as ``float()`` does; a property test
    compares the two readers on random files). Anything else — a word, ``inf``, ``n/a``, an
    empty required cell, a missing cell — returns ``None`` and the cell-by-cell reader finds
    and words the problem. This path exists for speed only: it reads a 20,000-breath file
    several times faster (docs/benchmarks.md).
    """
    from analysis.io._cells import text_values

    if "\r" in body:  # line breaks as split_lines reads them: \r\n, \r or \n
        body = body.replace("\r\n", "\n").replace("\r", "\n")
    if body and not body.endswith("\n"):
        body += "\n"
    if not body or '"' in body:
        return None
    encoded = body.encode()  # the C parser reads bytes: given text, it would encode it again
    n = encoded.count(b"\n")
    # exactly width cells on every line: the parser refuses a line with more, so this total
    # leaves none with fewer (and no blank line, which has no comma)
    if encoded.count(b",") != n * (width - 1):
        return None
    try:
        table = pd.read_csv(
            io.BytesIO(encoded),
            header=None,
            names=list(range(width)),
            index_col=False,
            dtype={k: np.dtype(object if k in text_columns.values() else np.float64) for k in columns.values()},
            keep_default_na=False,
            na_values=[""],  # empty cells only; a text cell read as NaN is None like an empty one
            engine="c",
            float_precision=_NEAREST_DOUBLE,
        )
    except (ValueError, pd.errors.ParserError):
        return None
    if len(table) != n:
        return None
    data: dict[str, object] = {"source_row": np.arange(first_line, first_line + n, dtype=np.int64)}
    for canonical, k in columns.items():
        if k in text_columns.values():
            codes, uniques = pd.factorize(table[k], use_na_sentinel=False)  # few distinct labels
            data[canonical] = np.array(text_values(list(uniques)) or [None], dtype=object)[codes]
            continue
        values = table[k].to_numpy(dtype=float)
        readable = np.isfinite(values) if canonical in C.REQUIRED else ~np.isinf(values)  # empty (NaN) if optional
        if not readable.all():
            return None
        data[canonical] = values
    return data


def _body_cell_by_cell(
    rows: Sequence[tuple[int, Sequence[object]]], *, headers: list[str], columns: dict[str, int], problems: ProblemLog
) -> dict[str, object]:
    """The breath rows read cell by cell, every unreadable cell added to ``problems`` with its line."""
    from analysis.io._cells import parse_numbers, text_values
    from analysis.io._validate import report_cells

    body = [(n, cells) for n, cells in rows if len(cells) > 1 or (cells and str(cells[0]).strip())]
    for n, cells in body:
        if len(cells) != len(headers):
            problems.add(
                f"the line has {len(cells)} cells but the header has {len(headers)}",
                "every line needs one value (or an empty cell) per column",
                row=n,
            )
    problems.raise_if_any()
    line_numbers = np.array([n for n, _ in body], dtype=np.int64)
    data: dict[str, object] = {"source_row": line_numbers}
    shown = {c: headers[k] for c, k in columns.items()}
    by_column = list(zip(*(row for _, row in body), strict=True)) if body else [()] * len(headers)
    for canonical, k in columns.items():
        cells = list(by_column[k])
        if canonical in C.NUMERIC:
            values, missing, bad = parse_numbers(cells, decimal=".")
            report_cells(
                problems,
                name=canonical,
                header=shown[canonical],
                bad=bad,
                missing=missing,
                line_numbers=line_numbers,
                cell_at=partial(_body_cell, body, k),
            )
            data[canonical] = values
        else:
            data[canonical] = pd.Series(text_values(cells), dtype=object)  # None stays None
    return data
