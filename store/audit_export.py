"""The audit trail as a spreadsheet-safe CSV text (for a lab's records or an inspection)."""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Iterable
from typing import Any

from analysis.exports import safe_csv_cell
from store.records import AuditEntry

#: Columns of the audit CSV, in order.
AUDIT_COLUMNS: tuple[str, ...] = (
    "time_utc", "actor", "action", "test_id", "person_id", "field", "old_value", "new_value", "reason",
)


def _value_cell(value: Any) -> Any:
    """Numbers and text as they are; lists, dicts and booleans as JSON text."""
    if value is None or isinstance(value, str) or (isinstance(value, (int, float)) and not isinstance(value, bool)):
        return value
    return json.dumps(value, sort_keys=True, ensure_ascii=False)


def audit_to_csv(entries: Iterable[AuditEntry]) -> str:
    """Render audit entries as CSV text (RFC 4180: CRLF line ends, header row first).

    Every cell goes through :func:`analysis.exports.safe_csv_cell`, so a name, note or reason
    starting with ``=``, ``+``, ``-`` or ``@`` cannot run as a spreadsheet formula.
    """
    buf = io.StringIO()
    # CRLF (RFC 4180) also makes the writer quote any cell holding a lone CR or LF.
    writer = csv.writer(buf, lineterminator="\r\n")
    writer.writerow(AUDIT_COLUMNS)
    for e in entries:
        row = (
            e.at.strftime("%Y-%m-%d %H:%M:%S"), e.actor, e.action, e.test_id, e.person_id, e.field,
            _value_cell(e.old_value), _value_cell(e.new_value), e.reason,
        )
        writer.writerow([safe_csv_cell(v) for v in row])
    return buf.getvalue()
