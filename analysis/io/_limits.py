"""Bounds on the work one uploaded file may cause, checked before and while it is parsed.

A breath-by-breath export is small: a 30-minute test is about 2,000 rows of 10-40 columns.
A hostile or broken file may instead be a zip "bomb" (a few kilobytes that unpack to
gigabytes), hold millions of rows, or cells of millions of characters. Each bound below is far
above any real test and far below what would strain a lab server; a file beyond one is
rejected with the row where the bound was passed, before the rest is read.
"""

from __future__ import annotations

import zipfile
from collections.abc import Sequence

from analysis.errors import ImportRejected, Problem, shorten

#: Most rows (lines) in one table: a two-hour test at 1 breath/s is 7,200 rows (common practice).
MAX_ROWS = 100_000
#: Most cells in one row.
MAX_COLUMNS = 1_000
#: Most cells in the whole table (rows x columns).
MAX_CELLS = 1_000_000
#: Longest text in one cell, in characters: the largest a spreadsheet cell holds (from memory:
#: the documented limit of the common spreadsheet programs is 32,767 characters).
MAX_CELL_CHARS = 32_767

#: Most members in an .xlsx (zip) container; a workbook has a dozen or so.
MAX_ZIP_MEMBERS = 1_000
#: Largest unpacked size of one member of an .xlsx container, in bytes (32 MiB: a sheet of
#: 100,000 rows x 20 numbers is about 30 MB of XML).
MAX_MEMBER_BYTES = 32 * 1024 * 1024
#: Largest unpacked size of all members together, in bytes.
MAX_UNPACKED_BYTES = 96 * 1024 * 1024
#: Largest ratio of unpacked to packed size of a member above :data:`RATIO_CHECK_ABOVE_BYTES`.
#: Spreadsheet XML packs about 5-20 to 1; a ratio of hundreds means a repeated filler (a bomb).
MAX_COMPRESSION_RATIO = 100
RATIO_CHECK_ABOVE_BYTES = 1024 * 1024

_RESAVE = "open it in a spreadsheet program and save it again as .xlsx or as CSV"


def _mb(n: int) -> str:
    return f"{n / 1048576:.1f} MB"


def check_zip_container(data: bytes, *, file_name: str) -> None:
    """Reject an .xlsx whose members would unpack to too much, before any member is unpacked.

    Python's ``zipfile`` never returns more than a member's declared size (it stops there and
    the checksum then fails), so the declared sizes bound what the parser can be made to read.

    Raises
    ------
    ImportRejected
        Too many members, a member or the whole unpacking too large, or a packing ratio only
        a filler reaches.
    """
    import io

    try:
        infos = zipfile.ZipFile(io.BytesIO(data)).infolist()
    except (zipfile.BadZipFile, ValueError, OSError, EOFError, NotImplementedError):
        raise ImportRejected(
            Problem("the file starts like a zip/.xlsx file but is damaged or incomplete", _RESAVE, file_name)
        ) from None
    if len(infos) > MAX_ZIP_MEMBERS:
        raise ImportRejected(
            Problem(f"the workbook holds {len(infos):,} parts, more than the {MAX_ZIP_MEMBERS:,} accepted", _RESAVE, file_name)
        )
    total = 0
    for info in infos:
        size, packed = int(info.file_size), max(int(info.compress_size), 1)
        total += size
        what = None
        if size > MAX_MEMBER_BYTES:
            what = f"unpacks to {_mb(size)}, more than the {_mb(MAX_MEMBER_BYTES)} accepted for one part"
        elif size > RATIO_CHECK_ABOVE_BYTES and size / packed > MAX_COMPRESSION_RATIO:
            what = (
                f"unpacks from {packed:,} bytes to {_mb(size)} (ratio {size / packed:,.0f} to 1, more than "
                f"{MAX_COMPRESSION_RATIO} to 1): that is filler, not a table"
            )
        elif total > MAX_UNPACKED_BYTES:
            what = f"brings the unpacked workbook above {_mb(MAX_UNPACKED_BYTES)}"
        if what:
            raise ImportRejected(
                Problem(
                    f"part '{shorten(info.filename)}' of the workbook {what}; the file was not read",
                    "export the breath table alone (CSV or a plain .xlsx) and import that file",
                    file_name,
                )
            )


def count_lines(text: str) -> int:
    """Number of lines of ``text`` (``\\r\\n``, ``\\r`` or ``\\n`` breaks), without splitting it."""
    n = text.count("\n") + text.count("\r") - text.count("\r\n")
    return n + (0 if not text or text.endswith(("\n", "\r")) else 1)


def too_many_rows(n_rows: int, *, file_name: str) -> ImportRejected:
    return ImportRejected(
        Problem(
            f"the file has more than {MAX_ROWS:,} rows (found {n_rows:,} or more); a breath-by-breath test has "
            "a few thousand",
            "check it is a single test's breath table (not many tests or a sample-by-sample recording)",
            file_name,
            MAX_ROWS + 1 if n_rows > MAX_ROWS else None,
        )
    )


def check_line_count(text: str, *, file_name: str) -> None:
    """Reject text with more than :data:`MAX_ROWS` lines, before it is split into rows."""
    n = count_lines(text)
    if n > MAX_ROWS:
        raise too_many_rows(n, file_name=file_name)


class RowBudget:
    """Counts rows and cells as they are read and rejects at the first row beyond a bound."""

    def __init__(self, file_name: str, *, active: bool = True) -> None:
        self.file_name = file_name
        self.active = active
        self.rows = 0
        self.cells = 0

    def take(self, line: int, cells: Sequence[object]) -> None:
        """Account for one row (``line`` = its number in the file); raise at the first bound passed."""
        if not self.active:
            return
        self.rows += 1
        self.cells += len(cells)
        problem = None
        if self.rows > MAX_ROWS:
            raise too_many_rows(self.rows, file_name=self.file_name)
        if len(cells) > MAX_COLUMNS:
            problem = (f"the row has {len(cells):,} cells, more than the {MAX_COLUMNS:,} accepted",
                       "check the delimiter and that this is a breath table")
        elif self.cells > MAX_CELLS:
            problem = (f"the table passes {MAX_CELLS:,} cells here", "import a single test's breath table")
        else:
            for k, c in enumerate(cells):
                if isinstance(c, str) and len(c) > MAX_CELL_CHARS:
                    problem = (
                        f"cell {k + 1} holds {len(c):,} characters, more than the {MAX_CELL_CHARS:,} a "
                        "spreadsheet cell may hold",
                        "check for an unclosed quotation mark (\") above this line, or export the table again",
                    )
                    break
        if problem:
            raise ImportRejected(Problem(problem[0], problem[1], self.file_name, line))
