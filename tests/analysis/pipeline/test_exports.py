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


def test_summary_row_reads_the_result_record():
    import dataclasses

    from tests.support import demo_result

    r = dataclasses.replace(demo_result(), vt2=None, warnings=("a", "b"))
    row = summary_row(r, file="f.csv")
    assert list(row) == list(SUMMARY_COLUMNS)
    assert r.vt1 is not None
    assert row["vt1_vo2_ml_min"] == r.vt1.vo2_ml_min and row["vt1_time_s"] == r.vt1.t_s
    assert row["vt1_method"] == r.vt1.method and row["vt2_vo2_ml_min"] is None
    assert row["subject_id"] == "SEL-0107" and row["mode"] == r.subject.mode
    assert row["vo2_peak_ml_min"] == r.peak.vo2_ml_min and row["maximality"] == r.maximality.label
    assert row["excluded_breaths"] == len(r.excluded_breaths) and row["warnings"] == "a | b" and row["status"] == "ok"
    e = error_row(file="x.csv", error="bad")
    assert e["status"] == "error" and e["vo2_peak_ml_min"] is None
