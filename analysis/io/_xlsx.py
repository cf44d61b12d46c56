"""Reading .xlsx workbooks (openpyxl): sheet names and the rows of one sheet.

Untrusted workbooks are bounded before and while they are parsed (:mod:`analysis.io._limits`):
the zip container's declared sizes and packing ratios are checked before anything is unpacked,
the sheet is streamed (openpyxl read-only mode) and the rows are counted as they arrive, and
openpyxl parses the XML through ``defusedxml`` (a dependency), which refuses entity tricks.
"""

from __future__ import annotations

import io
import zipfile
from typing import Any

from analysis.errors import ImportRejected, InvalidParameter, Problem, name_list, quoted, shorten
from analysis.io._limits import MAX_COLUMNS, MAX_ROWS, RowBudget, check_zip_container
from analysis.io._table import Row


def _open(data: bytes, file_name: str) -> Any:
    import openpyxl  # imported here: only needed for workbooks

    if zipfile.is_zipfile(io.BytesIO(data)):
        check_zip_container(data, file_name=file_name)
    try:
        return openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception:  # noqa: BLE001 - any failure of the parser on untrusted bytes is bad input
        if not zipfile.is_zipfile(io.BytesIO(data)):
            what = "the file starts like a zip/.xlsx file but is damaged or incomplete"
        else:
            what = "the file is a zip archive but not a readable .xlsx workbook"
        raise ImportRejected(
            Problem(what, "open it in a spreadsheet program and save it again as .xlsx or as CSV", file_name)
        ) from None


def list_sheets(data: bytes, *, file_name: str = "workbook.xlsx") -> list[str]:
    """Names of the worksheets of an .xlsx workbook, in workbook order.

    Raises
    ------
    ImportRejected
        The bytes are not a readable .xlsx workbook.
    """
    wb = _open(data, file_name)
    try:
        return list(wb.sheetnames)
    finally:
        wb.close()


def _cell(value: object) -> object:
    if value is None:
        return None
    if isinstance(value, str):
        return value if value.strip() else None
    return value


def sheet_rows(data: bytes, sheet: str | int, *, file_name: str) -> tuple[str, list[Row]]:
    """The rows of one sheet as ``(row number, cells)``; ``sheet`` is a name or a 0-based index."""
    wb = _open(data, file_name)
    try:
        names = list(wb.sheetnames)
        if isinstance(sheet, int) and not isinstance(sheet, bool):
            if not 0 <= sheet < len(names):
                raise InvalidParameter("sheet", f"an index from 0 to {len(names) - 1} or a name in {names}", sheet)
            name = names[sheet]
        elif isinstance(sheet, str) and sheet in names:
            name = sheet
        else:
            raise ImportRejected(
                Problem(
                    f"there is no sheet named {quoted(sheet)}",
                    f"choose one of: {name_list(names)}",
                    file_name,
                )
            )
        ws = wb[name]
        declared_cols, declared_rows = ws.max_column, ws.max_row
        if (declared_cols or 0) > MAX_COLUMNS or (declared_rows or 0) > MAX_ROWS:
            ws.reset_dimensions()  # a declared size beyond the bounds would pad every row
        rows: list[Row] = []
        budget = RowBudget(file_name)
        try:
            for number, values in enumerate(ws.iter_rows(min_row=1, values_only=True), start=1):
                cells = [_cell(v) for v in values]
                budget.take(number, cells)
                rows.append((number, cells))
        except ImportRejected:
            raise
        except Exception:  # noqa: BLE001 - damaged sheet XML on untrusted input
            raise ImportRejected(
                Problem(
                    f"sheet '{shorten(name)}' cannot be read (the workbook is damaged)",
                    "open it in a spreadsheet program and save it again as .xlsx or as CSV",
                    file_name,
                )
            ) from None
        return name, rows
    finally:
        wb.close()
