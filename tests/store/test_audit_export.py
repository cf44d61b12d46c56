"""Audit CSV: spreadsheet formulas neutralised (OWASP CSV Injection guidance), values exact."""

from __future__ import annotations

import csv
import io
import json

import pytest

from store.audit_export import AUDIT_COLUMNS
from tests.store.standin import csv_bytes

FORMULAS = ["=HYPERLINK(\"http://example.invalid\")", "+SUM(A1:A9)", "-1+2", "@cmd", "\tTAB", "\rCR"]


@pytest.mark.parametrize("store_url", ["sqlite"], indirect=True)  # rendering does not depend on the back end
def test_audit_csv_neutralises_formulas_and_keeps_values(store, users, clock):
    tid = store.import_test(csv_bytes(3000.0, subject="=CODE()"), file_name="@file.csv", actor=users["rhea"]).test_id
    settings, v = store.get_settings(tid)
    settings["smoothing"]["window_s"] = 20
    settings["exclusions"] = [[120, 135]]
    for i, reason in enumerate(FORMULAS[:2]):
        settings["smoothing"]["window_s"] = 20 + i
        v = store.save_settings(tid, settings, actor=users["rhea"], reason=reason, expected_version=v)
    rows = list(csv.reader(io.StringIO(store.audit_csv(tid))))
    assert tuple(rows[0]) == AUDIT_COLUMNS
    body = [dict(zip(AUDIT_COLUMNS, r)) for r in rows[1:]]
    # Import row: a JSON object cell (starts with "{", nothing to neutralise), the name verbatim inside.
    assert body[0]["action"] == "import" and json.loads(body[0]["new_value"])["file_name"] == "@file.csv"
    changes = [r for r in body if r["action"] == "settings_change"]
    assert [r["reason"] for r in changes] == ["'" + FORMULAS[0], "'" + FORMULAS[0], "'" + FORMULAS[1]]
    window = [r for r in changes if r["field"] == "smoothing.window_s"]
    assert [(r["old_value"], r["new_value"]) for r in window] == [("30", "20"), ("20", "21")]
    assert [r["new_value"] for r in changes if r["field"] == "exclusions"] == ["[[120, 135]]"]
    assert body[0]["time_utc"] == clock.now.strftime("%Y-%m-%d %H:%M:%S")


def test_every_formula_trigger_is_prefixed():
    from datetime import UTC, datetime

    from store.audit_export import audit_to_csv
    from store.records import AuditEntry

    entries = [
        AuditEntry(id=i, at=datetime(2026, 3, 14, tzinfo=UTC), actor=f, action="person_edit", test_id=None,
                   person_id=1, field="display_name", old_value=None, new_value=f, reason=f)
        for i, f in enumerate(FORMULAS)
    ]
    rows = list(csv.reader(io.StringIO(audit_to_csv(entries)), strict=True))[1:]
    for row, f in zip(rows, FORMULAS):
        record = dict(zip(AUDIT_COLUMNS, row))
        assert record["actor"] == record["new_value"] == record["reason"] == "'" + f
