"""A hash chain over the audit trail: each row carries the SHA-256 of the row before it.

Every audit row stores ``prev_hash`` (the ``row_hash`` of the row written before it, or
:data:`GENESIS` for the first) and ``row_hash`` = SHA-256 of ``prev_hash`` and the row's
content in a canonical form. Changing, removing or reordering a row breaks the link to the
next one; removing rows at the end is caught by the head (``store_info.audit_head``: number of
rows and the last hash), which is updated in the same transaction as each new row, under a lock
(SQLite ``BEGIN IMMEDIATE``; PostgreSQL ``SELECT ... FOR UPDATE`` on the head row) so that
concurrent writers extend one chain.

A chain is evidence against changes made outside Tidemark (a database tool, a restored
backup, a script with the application's credentials): database triggers refuse UPDATE and
DELETE on the table, and whoever removes a trigger to change a row must also rewrite every
later hash and the head. Note the last hash (``tidemark audit verify`` prints it) somewhere
outside the database to anchor it.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

#: ``prev_hash`` of the first audit row.
GENESIS = "0" * 64
#: ``store_info`` key of the chain head (JSON: number of rows and last hash).
AUDIT_HEAD_KEY = "audit_head"


def _when(at: datetime) -> str:
    aware = at if at.tzinfo is not None else at.replace(tzinfo=UTC)
    return aware.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def row_hash(prev_hash: str, *, at: datetime, actor_id: int | None, actor_name: str, action: str,
             test_id: int | None, person_id: int | None, field: str | None, old_value: str | None,
             new_value: str | None, reason: str | None) -> str:
    """SHA-256 (hex) of ``prev_hash`` and one audit row's content in canonical JSON."""
    content = [prev_hash, _when(at), actor_id, actor_name, action, test_id, person_id, field,
               old_value, new_value, reason or ""]
    text = json.dumps(content, ensure_ascii=False, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def hash_of(row: Any, prev_hash: str) -> str:
    """:func:`row_hash` of an ``AuditEvent`` row (or any object with the same attributes)."""
    return row_hash(prev_hash, at=row.at, actor_id=row.actor_id, actor_name=row.actor_name, action=row.action,
                    test_id=row.test_id, person_id=row.person_id, field=row.field, old_value=row.old_value,
                    new_value=row.new_value, reason=row.reason)


def encode_head(rows: int, last_hash: str) -> str:
    return json.dumps({"rows": rows, "hash": last_hash}, sort_keys=True)


def decode_head(value: str | None) -> tuple[int, str]:
    """``(rows, last hash)`` from the stored head; ``(0, GENESIS)`` for none or an unreadable one."""
    try:
        data = json.loads(value or "")
        return int(data["rows"]), str(data["hash"])
    except (ValueError, KeyError, TypeError):
        return 0, GENESIS


@dataclass(frozen=True)
class ChainReport:
    """Outcome of :func:`verify_rows`: rows checked, the first broken link (if any), the last hash."""

    rows: int
    last_hash: str
    broken_at_id: int | None = None
    problem: str = ""

    @property
    def ok(self) -> bool:
        return self.broken_at_id is None and not self.problem


def _describe(row: Any) -> str:
    return f"row {row.id} ({_when(row.at)[:19].replace('T', ' ')} UTC, {row.action} by {row.actor_name})"


def verify_rows(rows: Iterable[Any], head: tuple[int, str] | None) -> ChainReport:
    """Walk audit rows in id order and report the first broken link.

    ``head`` is the stored ``(rows, last hash)``; ``None`` when the store keeps none.
    """
    prev = GENESIS
    count = 0
    for row in rows:
        count += 1
        if row.prev_hash is None or row.row_hash is None:
            return ChainReport(count, prev, row.id, f"{_describe(row)} carries no link: it was written outside Tidemark")
        if row.prev_hash != prev:
            return ChainReport(
                count, prev, row.id,
                f"{_describe(row)} does not follow the row before it: a row was removed, inserted or moved there",
            )
        expected = hash_of(row, prev)
        if expected != row.row_hash:
            return ChainReport(count, prev, row.id, f"{_describe(row)} was changed after it was written")
        prev = row.row_hash
    if head is not None and (head[0] != count or head[1] != prev):
        if head[0] > count:
            problem = f"the last {head[0] - count} row(s) of the audit trail are missing (it ends at row {count} of {head[0]})"
        else:
            problem = f"the audit trail does not end where its head says (head: {head[0]} rows; found {count})"
        return ChainReport(count, prev, None, problem)
    return ChainReport(count, prev)
