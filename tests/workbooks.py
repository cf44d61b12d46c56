"""Spreadsheet files built in memory for the import tests (import as ``from tests.workbooks import ...``)."""

from __future__ import annotations

import io
from collections.abc import Mapping, Sequence


def xlsx_bytes(sheets: Mapping[str, Sequence[Sequence[object]]]) -> bytes:
    """An .xlsx workbook holding ``sheets`` (sheet name -> rows) in the given order, as bytes."""
    from openpyxl import Workbook

    wb = Workbook()
    wb.remove(wb.active)
    for name, rows in sheets.items():
        ws = wb.create_sheet(name)
        for row in rows:
            ws.append(list(row))
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()
