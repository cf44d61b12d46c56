"""Tests of analysis.progress: change from baseline, typical-error band, aligned series."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest

from analysis.errors import InvalidParameter
from analysis.progress import (
    BAND_Z,
    METRICS,
    TYPICAL_ERRORS,
    TestRecord,
    aligned_series,
    change_band,
    exercise_start_s,
    metric_value,
    progress_table,
)
from tests.support import result_with


def _results(vo2: float, vt1: float | None, slope: float | None, o2p: float | None):
    return result_with(vo2_peak_ml_min=vo2, vt1_vo2_ml_min=vt1, ve_vco2_slope_whole_exercise=slope, o2_pulse_peak_ml_beat=o2p)


TESTS = [
    TestRecord(2, "2026-03-01", _results(3300.0, 2100.0, 26.0, 18.0)),
    TestRecord(1, "2026-01-10", _results(3000.0, 1900.0, 28.0, 17.0)),
    TestRecord(3, "2026-05-20", _results(3050.0, None, 27.5, 17.2)),
]


class TestChangeBand:
    def test_hand_value(self):
        # Hopkins 2000 (from memory): change SD = sqrt(2) x TE; 95 % -> 1.96 SD.
        low, high = change_band(3000.0, typical_error_pct=4.0)
        half = 1.96 * math.sqrt(2) * 0.04 * 3000.0  # = 332.62 mL/min by hand
        assert high - 3000.0 == pytest.approx(half)
        assert 3000.0 - low == pytest.approx(half)
        assert half == pytest.approx(332.62, abs=0.01)

    def test_negative_baseline_band_is_ordered(self):
        low, high = change_band(-10.0, typical_error_pct=5.0)
        assert low < -10.0 < high

    @pytest.mark.parametrize("te", [0.0, -1.0])
    def test_invalid_typical_error(self, te):
        with pytest.raises(InvalidParameter, match="typical_error_pct"):
            change_band(100.0, typical_error_pct=te)

    def test_invalid_baseline(self):
        with pytest.raises(InvalidParameter, match="baseline"):
            change_band(float("nan"), typical_error_pct=4.0)


class TestMetricValue:
    def test_attributes_and_missing(self):
        r = _results(3000.0, None, 28.0, 17.0)
        assert metric_value(r, "vo2_peak_ml_min") == 3000.0
        assert metric_value(r, "vo2_peak_ml_kg_min") == pytest.approx(3000.0 / 70.0)
        assert metric_value(r, "vt1_vo2_ml_min") is None
        assert metric_value(_results(3000.0, 1500.0, 28.0, 17.0), "vt1_vo2_ml_min") == 1500.0

    def test_one_fixed_location(self):
        # the slope followed is always the whole-exercise one, never the headline (whose span varies)
        r = _results(3000.0, None, 28.0, 15.5)
        assert metric_value(r, "o2_pulse_peak_ml_beat") == 15.5
        r = dataclasses.replace(r, indices=dataclasses.replace(r.indices, ve_vco2_slope=25.0))
        assert r.ve_vco2_slope == 25.0 and metric_value(r, "ve_vco2_slope_whole_exercise") == 28.0

    def test_missing_values_are_none(self):
        assert metric_value(_results(3000.0, None, None, 17.0), "ve_vco2_slope_whole_exercise") is None
        assert metric_value(_results(3000.0, None, float("nan"), 17.0), "ve_vco2_slope_whole_exercise") is None

    def test_unknown_metric(self):
        with pytest.raises(InvalidParameter, match="metric"):
            metric_value(_results(3000.0, None, 28.0, 17.0), "lactate")


class TestProgressTable:
    def test_default_baseline_is_earliest(self):
        t = progress_table(TESTS, metrics=["vo2_peak_ml_min"])
        assert list(t["test_id"]) == [1, 2, 3]  # sorted by date
        assert list(t["is_baseline"]) == [True, False, False]
        assert list(t["change"]) == pytest.approx([0.0, 300.0, 50.0])
        assert list(t["change_pct"]) == pytest.approx([0.0, 10.0, 100 * 50 / 3000])

    def test_band_and_beyond(self):
        t = progress_table(TESTS, metrics=["vo2_peak_ml_min"]).set_index("test_id")
        low, high = change_band(3000.0, typical_error_pct=TYPICAL_ERRORS["vo2_peak_ml_min"].pct)
        assert t.loc[2, "band_low"] == pytest.approx(low)
        assert t.loc[2, "band_high"] == pytest.approx(high)
        # +300 mL/min (10 %) exceeds the ±333 band? No: 3300 < 3332.6 -> within typical error.
        assert not t.loc[2, "beyond_typical_error"]
        assert not t.loc[3, "beyond_typical_error"]

    def test_beyond_when_large_change(self):
        tests = [TestRecord(1, "2026-01-01", result_with(vo2_peak_ml_min=3000.0)),
                 TestRecord(2, "2026-02-01", result_with(vo2_peak_ml_min=3500.0))]
        t = progress_table(tests, metrics=["vo2_peak_ml_min"]).set_index("test_id")
        assert t.loc[2, "beyond_typical_error"]
        assert t.loc[2, "change_pct"] == pytest.approx(100 * 500 / 3000)

    def test_choosing_another_baseline_changes_changes(self):
        a = progress_table(TESTS, metrics=["ve_vco2_slope_whole_exercise"]).set_index("test_id")
        b = progress_table(TESTS, baseline_test_id=2, metrics=["ve_vco2_slope_whole_exercise"]).set_index("test_id")
        assert a.loc[3, "change"] == pytest.approx(27.5 - 28.0)
        assert b.loc[3, "change"] == pytest.approx(27.5 - 26.0)
        assert b.loc[2, "is_baseline"] and not a.loc[2, "is_baseline"]

    def test_missing_value_gives_nan_change(self):
        t = progress_table(TESTS, metrics=["vt1_vo2_ml_min"]).set_index("test_id")
        assert math.isnan(t.loc[3, "value"]) and math.isnan(t.loc[3, "change"])
        assert not t.loc[3, "beyond_typical_error"]
        assert t.loc[2, "change"] == pytest.approx(200.0)

    def test_all_metrics_have_typical_error_with_provenance(self):
        t = progress_table(TESTS)
        assert set(t["metric"]) == set(METRICS)
        for key in METRICS:
            assert TYPICAL_ERRORS[key].pct > 0
            assert "from memory" in TYPICAL_ERRORS[key].provenance or "(" in TYPICAL_ERRORS[key].provenance
        assert BAND_Z == 1.96

    def test_invalid_inputs(self):
        with pytest.raises(InvalidParameter, match="baseline_test_id"):
            progress_table(TESTS, baseline_test_id=99)
        with pytest.raises(InvalidParameter, match="tests"):
            progress_table([])
        with pytest.raises(InvalidParameter, match="metrics"):
            progress_table(TESTS, metrics=["lactate"])


class TestAlignedSeries:
    def _frame(self, rest_s: float) -> pd.DataFrame:
        t = np.arange(0.0, rest_s + 300.0, 10.0)
        phase = np.where(t < rest_s, "rest", "exercise")
        vo2 = np.where(t < rest_s, 400.0, 400.0 + 10.0 * (t - rest_s))
        return pd.DataFrame({"t_s": t, "vo2_ml_min": vo2, "vco2_ml_min": vo2 * 0.9, "phase": phase})

    def test_time_aligned_at_exercise_start(self):
        out = aligned_series({"A": self._frame(120.0), "B": self._frame(180.0)}, overlay="vo2_time")
        for label in ("A", "B"):
            part = out[out["test"] == label]
            at_zero = part.loc[part["x"] == 0.0, "y"]
            assert list(at_zero) == [400.0]  # both start exercise at x = 0
            assert part.loc[part["x"] == 100.0, "y"].iloc[0] == pytest.approx(1400.0)

    def test_vslope_plane_not_shifted(self):
        f = self._frame(120.0)
        out = aligned_series({"A": f}, overlay="vco2_vo2")
        assert np.allclose(out["x"], f["vo2_ml_min"]) and np.allclose(out["y"], f["vco2_ml_min"])

    def test_missing_rows_dropped_and_no_phase(self):
        f = pd.DataFrame({"t_s": [0.0, 10.0, 20.0], "vo2_ml_min": [1.0, np.nan, 3.0]})
        out = aligned_series({"A": f})
        assert list(out["x"]) == [0.0, 20.0]
        assert exercise_start_s(f) == 0.0

    def test_invalid(self):
        with pytest.raises(InvalidParameter, match="overlay"):
            aligned_series({}, overlay="hr_time")
        with pytest.raises(InvalidParameter, match="frames"):
            aligned_series({"A": pd.DataFrame({"t_s": [1.0]})})


# --- properties (hypothesis) -----------------------------------------------------------------

from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_values = st.floats(min_value=100.0, max_value=8000.0, allow_nan=False, allow_infinity=False)


@settings(max_examples=60, deadline=None)
@given(base=_values, others=st.lists(_values, min_size=1, max_size=5))
def test_property_change_and_band_agree(base, others):
    tests = [TestRecord(0, "2026-01-01", result_with(vo2_peak_ml_min=base))] + [
        TestRecord(i + 1, f"2026-02-{i + 1:02d}", result_with(vo2_peak_ml_min=v)) for i, v in enumerate(others)
    ]
    t = progress_table(tests, metrics=["vo2_peak_ml_min"])
    half = BAND_Z * math.sqrt(2) * TYPICAL_ERRORS["vo2_peak_ml_min"].pct / 100.0 * base
    for _, row in t.iterrows():
        assert row["change"] == pytest.approx(row["value"] - base)
        assert row["change_pct"] == pytest.approx(100.0 * (row["value"] - base) / base)
        assert row["band_high"] - base == pytest.approx(half) and base - row["band_low"] == pytest.approx(half)
        if abs(row["change"]) > half * (1 + 1e-9):
            assert row["beyond_typical_error"]
        elif abs(row["change"]) < half * (1 - 1e-9):
            assert not row["beyond_typical_error"]
