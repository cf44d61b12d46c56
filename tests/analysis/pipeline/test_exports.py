"""Formula-safe CSV cells (OWASP CSV-injection guidance, common practice) and summary rows."""

import pytest

from analysis.exports import SUMMARY_COLUMNS, error_row, safe_csv_cell, summary_row


@pytest.mark.parametrize(
    "value, expected",
    [
        ("=SUM(A1:A9)", "'=SUM(A1:A9)"),
        ("+1", "'+1"),
        ("-2+3", "'-2+3"),
        ("@cmd", "'@cmd"),
        ("\t=1", "'\t=1"),
        ("VO2peak", "VO2peak"),
        ("", ""),
        (None, ""),
        (-2.5, "-2.5"),
        (3, "3"),
        (float("nan"), ""),
        (True, "True"),
    ],
)
def test_safe_csv_cell(value, expected):
    assert safe_csv_cell(value) == expected


def test_summary_row_reads_results_json():
    rj = {
        "subject": {"subject_id": "SEL-1", "test_date": "2026-01-01", "mode": "cycle"},
        "vo2_peak_ml_min": 3000.0,
        "vt1": {"vo2_ml_min": 1800.0, "time_s": 400.0, "hr_bpm": 130.0, "method": "consensus"},
        "vt2": None,
        "maximality": {"label": "VO2peak"},
        "classes": {"weber": "A", "ventilatory": "I"},
        "excluded_breaths": [{}, {}],
        "warnings": ["a", "b"],
    }
    row = summary_row(rj, file="f.csv")
    assert list(row) == list(SUMMARY_COLUMNS)
    assert row["vt1_vo2_ml_min"] == 1800.0 and row["vt2_vo2_ml_min"] is None
    assert row["excluded_breaths"] == 2 and row["warnings"] == "a | b" and row["status"] == "ok"
    e = error_row(file="x.csv", error="bad")
    assert e["status"] == "error" and e["vo2_peak_ml_min"] is None
