"""VT1/VT2 intervals drawn as bands: a faint rectangle from the pick's 90 % interval.

The picks here are hand-made (interval values chosen, nothing physiological asserted); the last
test reads a real analysis of a demo session and checks the bands sit where the result says.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from analysis.thresholds import ThresholdPick, ThresholdReport
from dashboard import palette
from dashboard.charts import equivalents_figure, time_course_figure, vslope_figure
from dashboard.charts._common import BAND_OPACITY, shown_thresholds, threshold_shapes


def _pick(kind: str, t: float, vo2: float, ci_t=None, ci_v=None, determinable: bool = True) -> ThresholdPick:
    return ThresholdPick(kind, t, vo2, "consensus", ci90_vo2_ml_min=ci_v, ci90_t_s=ci_t, determinable=determinable,
                         reason="" if determinable else "its 90 % interval runs wide")


def _rects(shapes: list[dict]) -> list[dict]:
    return [s for s in shapes if s["type"] == "rect" and s.get("opacity") == BAND_OPACITY]


def test_band_spans_the_interval_in_the_threshold_colour():
    vt1 = _pick("vt1", 400.0, 1500.0, ci_t=(380.0, 430.0), ci_v=(1420.0, 1610.0))
    shapes, labels = threshold_shapes({"vt1": vt1}, key="t_s")
    (band,) = _rects(shapes)
    assert (band["x0"], band["x1"]) == (380.0, 430.0)
    assert band["fillcolor"] == palette.THRESHOLD["vt1"]["color"] and band["layer"] == "below"
    assert [s["x0"] for s in shapes if s["type"] == "line"] == [400.0]
    shapes, _ = threshold_shapes({"vt1": vt1}, key="vo2_ml_min")
    (band,) = _rects(shapes)
    assert (band["x0"], band["x1"]) == (1420.0, 1610.0)


def test_no_band_without_an_interval():
    shapes, _ = threshold_shapes({"vt2": _pick("vt2", 500.0, 2500.0)}, key="t_s")
    assert _rects(shapes) == [] and len(shapes) == 1


def test_not_determinable_is_a_band_without_a_line():
    vt1 = _pick("vt1", 400.0, 1500.0, ci_t=(300.0, 520.0), ci_v=(1100.0, 2000.0), determinable=False)
    shapes, labels = threshold_shapes({"vt1": vt1}, key="t_s")
    assert [s["type"] for s in shapes] == ["rect"]
    assert labels[0]["text"] == "VT1 not determinable" and labels[0]["x"] == pytest.approx(410.0)


def test_shown_thresholds_falls_back_to_the_undetermined_pick():
    vt1 = _pick("vt1", 400.0, 1500.0, ci_t=(300.0, 520.0), ci_v=(1100.0, 2000.0), determinable=False)
    report = ThresholdReport(vt1=None, vt1_undetermined=vt1)
    assert shown_thresholds(report) == {"vt1": vt1, "vt2": None}


def test_every_review_chart_draws_the_bands():
    t = np.arange(0, 600, 10.0)
    vo2 = 400 + 4 * t
    avg = pd.DataFrame({"t_s": t, "vo2_ml_min": vo2, "vco2_ml_min": 0.95 * vo2, "ve_l_min": 10 + 0.03 * vo2,
                        "ve_vo2": 25 + 0.01 * t, "ve_vco2": 28 + 0.005 * t})
    vt1 = _pick("vt1", 300.0, 1600.0, ci_t=(280.0, 330.0), ci_v=(1520.0, 1720.0))
    vt2 = _pick("vt2", 480.0, 2320.0, ci_t=(460.0, 500.0), ci_v=(2240.0, 2400.0))
    for fig, lo in (
        (time_course_figure(avg, thresholds={"vt1": vt1, "vt2": vt2}), 280.0),
        (equivalents_figure(avg, thresholds={"vt1": vt1, "vt2": vt2}), 280.0),
        (vslope_figure(avg, vt1=vt1, vt2=vt2), 1520.0),
    ):
        rects = [s for s in fig.layout.shapes if s.type == "rect" and s.opacity == BAND_OPACITY]
        assert len(rects) == 2 and min(r.x0 for r in rects) == lo


def test_bands_from_a_real_analysis():
    from analysis.io import read_session
    from analysis.pipeline import analyze_session
    from dashboard.charts.vslope import vslope_from_results

    path = sorted(Path(__file__).resolve().parents[2].joinpath("demo_sessions").glob("*cycle-ramp*.csv"))[0]
    results = analyze_session(read_session(path))
    vt1 = results.thresholds.vt1
    assert vt1 is not None and vt1.ci90_vo2_ml_min is not None
    fig = vslope_from_results(results)
    rects = [s for s in fig.layout.shapes if s.type == "rect" and s.opacity == BAND_OPACITY]
    assert any((r.x0, r.x1) == pytest.approx(vt1.ci90_vo2_ml_min) for r in rects)


def test_report_charts_carry_the_band_of_a_real_analysis():
    # the printed report reads the typed result; its VT1 band is the pick's interval
    from analysis.io import read_session
    from analysis.pipeline import analyze_session
    from dashboard.report.report_charts import _threshold_lines

    path = sorted(Path(__file__).resolve().parents[2].joinpath("demo_sessions").glob("*cycle-ramp*.csv"))[0]
    results = analyze_session(read_session(path))
    lines = {vl.label: vl for vl in _threshold_lines(results, axis="t")}
    assert lines["VT1"].band == pytest.approx(results.thresholds.vt1.ci90_t_s)
