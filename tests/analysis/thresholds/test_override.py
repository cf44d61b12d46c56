"""Manual thresholds: override by time or VO2, clear, and chart points."""

from __future__ import annotations

import json

import numpy as np
import pytest

from analysis.errors import InvalidParameter
from analysis.records import to_json
from analysis.thresholds import ThresholdReport, clear_override, override_threshold, pick_from_chart_point


def test_override_by_time_uses_nearest_row(avg, report):
    new = override_threshold(report, avg, kind="vt1", t_s=503.0, reason="VE/VO2 clearly rises here")
    i = int(np.argmin(np.abs(avg["t_s"].to_numpy() - 503.0)))
    assert new.vt1.source == "manual" and new.vt1.method == "manual"
    assert new.vt1.index == i
    assert new.vt1.t_s == avg["t_s"].iloc[i]
    assert new.vt1.vo2_ml_min == avg["vo2_ml_min"].iloc[i]
    assert "VE/VO2 clearly rises here" in new.vt1.note
    assert new.vt2 == report.vt2
    assert report.vt1 is None or report.vt1.source == "auto"  # the input is not changed
    assert new.vt1_auto == report.vt1_auto


def test_override_by_vo2_prefers_exercise_rows(avg, report):
    new = override_threshold(report, avg, kind="vt2", vo2_ml_min=2500.0)
    row = avg.iloc[new.vt2.index]
    assert row["phase"] == "exercise"
    ex = avg[avg["phase"] == "exercise"]
    assert abs(row["vo2_ml_min"] - 2500.0) == pytest.approx(np.min(np.abs(ex["vo2_ml_min"] - 2500.0)))


def test_clear_override_restores_automatic(avg, report):
    manual = override_threshold(report, avg, kind="vt1", t_s=450.0)
    back = clear_override(manual, kind="vt1")
    assert back.vt1 == report.vt1_auto
    assert back.vt2 == manual.vt2


def test_vt1_above_vt2_is_noted(avg, report):
    assert report.vt2 is not None
    new = override_threshold(report, avg, kind="vt1", vo2_ml_min=float(report.vt2.vo2_ml_min) + 200.0)
    assert "at or above VT2" in new.vt1.note


def test_report_is_json_ready(avg, report):
    new = override_threshold(report, avg, kind="vt1", t_s=450.0)
    text = json.dumps(to_json(new))
    assert '"manual"' in text


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"kind": "vt3", "t_s": 400.0}, "kind"),
        ({"kind": "vt1"}, "exactly one"),
        ({"kind": "vt1", "t_s": 400.0, "vo2_ml_min": 1500.0}, "exactly one"),
        ({"kind": "vt1", "t_s": -50.0}, "within the test"),
        ({"kind": "vt1", "t_s": 1e6}, "within the test"),
        ({"kind": "vt1", "vo2_ml_min": 50_000.0}, "within this test"),
        ({"kind": "vt1", "t_s": "soon"}, "t_s"),
        ({"kind": "vt1", "t_s": float("nan")}, "t_s"),
    ],
)
def test_invalid_overrides(avg, report, kwargs, match):
    with pytest.raises(InvalidParameter, match=match):
        override_threshold(report, avg, **kwargs)


def test_override_needs_a_report(avg):
    with pytest.raises(InvalidParameter, match="report"):
        override_threshold({}, avg, kind="vt1", t_s=400.0)  # type: ignore[arg-type]


def test_clear_override_kind_checked(report):
    with pytest.raises(InvalidParameter, match="kind"):
        clear_override(report, kind="vt9")  # type: ignore[arg-type]


class TestChartPoint:
    def test_time_chart_x_is_time(self, avg):
        out = pick_from_chart_point({"x": 601.0, "y": 2000.0, "point_index": 3}, chart="time", avg=avg)
        i = int(np.argmin(np.abs(avg["t_s"].to_numpy() - 601.0)))
        assert out == {"t_s": float(avg["t_s"].iloc[i]), "vo2_ml_min": float(avg["vo2_ml_min"].iloc[i]), "index": i}

    def test_vslope_chart_x_is_vo2(self, avg):
        out = pick_from_chart_point({"x": 1800.0, "y": 1700.0}, chart="vslope", avg=avg)
        assert abs(out["vo2_ml_min"] - 1800.0) < 150.0
        assert avg["phase"].iloc[out["index"]] == "exercise"

    def test_customdata_time_trusted_first(self, avg):
        t = float(avg["t_s"].iloc[40])
        out = pick_from_chart_point({"x": 99999.0, "y": 1.0, "customdata": [t, "extra"]}, chart="vslope", avg=avg)
        assert out["index"] == 40 and out["t_s"] == t

    def test_scalar_customdata(self, avg):
        t = float(avg["t_s"].iloc[12])
        assert pick_from_chart_point({"customdata": t}, chart="time", avg=avg)["index"] == 12

    def test_round_trip_into_override(self, avg, report):
        p = pick_from_chart_point({"x": 520.0, "y": 0.0}, chart="time", avg=avg)
        new = override_threshold(report, avg, kind="vt1", t_s=p["t_s"])
        assert new.vt1.index == p["index"]

    @pytest.mark.parametrize(
        "point, chart, match",
        [
            ({"y": 3.0}, "time", "point"),
            ({"x": "abc"}, "time", "x"),
            ({"x": 500.0}, "bar", "chart"),
            ({"x": -1000.0}, "time", "within the test"),
            ([500.0], "time", "point"),
        ],
    )
    def test_invalid_points(self, avg, point, chart, match):
        with pytest.raises(InvalidParameter, match=match):
            pick_from_chart_point(point, chart=chart, avg=avg)


def test_empty_report_can_be_overridden(avg):
    new = override_threshold(ThresholdReport(), avg, kind="vt2", t_s=700.0)
    assert new.vt2 is not None and new.vt2.source == "manual" and new.vt2_auto is None
