"""CSV/JSON exports of an analysed test: formula injection neutralised, values kept."""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np
import pandas as pd
import pytest

from analysis.io.result_exports import (
    EXCLUDED,
    EXCLUDED_REASON,
    processed_breaths,
    results_json_text,
    safe_frame_csv,
)

# OWASP "CSV Injection" guidance (common practice): cells starting with = + - @ run as formulas.
DANGEROUS = ["=1+1", "+SUM(A1:A2)", "-2+3", "@cmd", '=HYPERLINK("http://x","y")']


def _breaths() -> pd.DataFrame:
    return pd.DataFrame(
        {
            "t_s": [0.0, 3.1, 6.0, 9.2, 12.0],
            "vo2_ml_min": [400.0, 410.0, 1900.0, 430.0, 440.0],
            "vco2_ml_min": [350.0, 360.0, 1700.0, 380.0, 390.0],
            "ve_l_min": [10.0, 11.0, 40.0, 11.5, 12.0],
            "grade_pct": [-2.0, -2.0, 0.0, 1.5, 1.5],
            "marker": DANGEROUS,
            "phase": ["rest", "rest", "exercise", "exercise", "exercise"],
            "source_row": [5, 6, 7, 8, 9],
        }
    )


def _read(text: str) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(text)))


class TestSafeFrameCsv:
    def test_text_cells_neutralised(self):
        rows = _read(safe_frame_csv(_breaths()))
        markers = [r["marker"] for r in rows]
        for original, written in zip(DANGEROUS, markers):
            assert written == "'" + original  # leading apostrophe: shown as text, never run
        assert all(not m.startswith(("=", "+", "-", "@")) for m in markers)

    def test_numbers_stay_numbers(self):
        rows = _read(safe_frame_csv(_breaths()))
        assert [float(r["grade_pct"]) for r in rows] == [-2.0, -2.0, 0.0, 1.5, 1.5]
        assert float(rows[2]["vo2_ml_min"]) == 1900.0
        assert rows[0]["phase"] == "rest"

    def test_missing_text_is_empty(self):
        frame = pd.DataFrame({"note": ["ok", None, float("nan")], "x": [1.0, np.nan, 3.0]})
        rows = _read(safe_frame_csv(frame))
        assert [r["note"] for r in rows] == ["ok", "", ""]
        assert rows[1]["x"] == ""

    def test_header_neutralised(self):
        frame = pd.DataFrame({"=evil": ["a"], "ok": [1]})
        text = safe_frame_csv(frame)
        assert text.splitlines()[0] == "'=evil,ok"


class TestProcessedBreaths:
    def test_excluded_flag_and_reason(self):
        excluded = pd.DataFrame({"source_row": [7, 7], "reason": ["VO2 > local mean + 4 SD", "manual"]})
        out = processed_breaths(_breaths(), excluded)
        assert list(out[EXCLUDED]) == [False, False, True, False, False]
        assert out.loc[out["source_row"] == 7, EXCLUDED_REASON].iloc[0] == "VO2 > local mean + 4 SD; manual"
        assert list(out.columns[:4]) == ["t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min"]

    def test_no_exclusions(self):
        out = processed_breaths(_breaths(), None)
        assert not out[EXCLUDED].any()
        assert set(out[EXCLUDED_REASON]) == {""}

    def test_reason_text_is_neutralised_in_csv(self):
        excluded = pd.DataFrame({"source_row": [5], "reason": ["-cough, reviewer"]})
        rows = _read(safe_frame_csv(processed_breaths(_breaths(), excluded)))
        assert rows[0][EXCLUDED_REASON] == "'-cough, reviewer"
        assert rows[0][EXCLUDED] == "True"


class TestResultsJson:
    def test_strict_json_nan_to_null(self):
        text = results_json_text(
            {"vo2_peak_ml_min": np.float64(3210.5), "oues": float("nan"), "n": np.int64(3), "ok": np.bool_(True), "vt2": None}
        )
        data = json.loads(text)
        assert data == {"vo2_peak_ml_min": 3210.5, "oues": None, "n": 3, "ok": True, "vt2": None}
        assert "NaN" not in text

    def test_nested(self):
        data = json.loads(results_json_text({"vt1": {"vo2_ml_min": 1900.0, "x": [float("inf"), 1.0]}}))
        assert data["vt1"]["x"] == [None, 1.0]
        assert not math.isnan(data["vt1"]["vo2_ml_min"])


@pytest.mark.parametrize("bad", DANGEROUS)
def test_every_trigger_in_any_text_column(bad):
    frame = pd.DataFrame({"notes": [bad], "value": [1.0]})
    rows = _read(safe_frame_csv(frame))
    assert rows[0]["notes"].startswith("'")
    assert rows[0]["notes"][1:] == bad
