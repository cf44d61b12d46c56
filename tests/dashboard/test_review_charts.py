"""Review charts are pure functions: traces, units on every axis, thresholds and selections.

The synthetic frames below are hand-made (no physiology is asserted here); the V-slope lines
are checked against the line equation they were given (common practice: y = a*x + b).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis.thresholds.results import ThresholdPick, VSlopeFit
from dashboard import palette
from dashboard.charts import equivalents_figure, time_course_figure, vslope_figure
from dashboard.charts._common import nice_step, phase_runs
from dashboard.charts.time_course import VO2_TRACE
from dashboard.charts.vslope import DATA_TRACE


@pytest.fixture()
def avg() -> pd.DataFrame:
    t = np.arange(0, 600, 10.0)
    vo2 = 400 + 4 * t
    return pd.DataFrame(
        {
            "t_s": t,
            "vo2_ml_min": vo2,
            "vco2_ml_min": np.where(vo2 < 1600, 0.95 * vo2, 1.4 * vo2 - 720),
            "ve_l_min": 10 + 0.03 * vo2,
            "hr_bpm": 70 + 0.2 * t,
            "work_w": np.clip((t - 120) * 0.5, 0, None),
            "peto2_mmhg": 100 + 0.01 * t,
            "petco2_mmhg": 38 + 0.005 * t,
            "ve_vo2": 25 + 0.01 * t,
            "ve_vco2": 28 + 0.005 * t,
            "phase": ["rest"] * 12 + ["exercise"] * 40 + ["recovery"] * 8,
        }
    )


def _axis_titles(fig) -> list[str]:
    layout = fig.to_plotly_json()["layout"]
    return [v["title"]["text"] for k, v in layout.items() if k.startswith(("xaxis", "yaxis")) and "title" in v]


def test_time_course_has_units_on_every_axis_and_marks_thresholds(avg):
    breaths = avg.assign(source_row=np.arange(2, len(avg) + 2))
    fig = time_course_figure(
        avg,
        breaths=breaths,
        excluded_rows=[5, 6],
        thresholds={"vt1": ThresholdPick("vt1", 300.0, 1600.0, "manual", source="manual"),
                    "vt2": ThresholdPick("vt2", 450.0, 2200.0, "consensus", source="auto")},
        averaging_label="10 s bins",
    )
    titles = _axis_titles(fig)
    assert "VO2, VCO2 (mL/min)" in titles and "VE (L/min)" in titles and "Time (m:ss)" in titles
    assert "Heart rate (beats/min)" in titles and "Work rate (W)" in titles
    shapes = fig.to_plotly_json()["layout"]["shapes"]
    vlines = [s for s in shapes if s.get("type") == "line"]
    assert sorted({s["x0"] for s in vlines}) == [300.0, 450.0]  # one line per threshold, through every panel
    texts = [a["text"] for a in fig.to_plotly_json()["layout"]["annotations"]]
    assert "VT1 (manual)" in texts and "VT2" in texts
    names = [t.name for t in fig.data]
    assert "Rest" in names and "Recovery" in names  # shaded phases are named in the legend
    assert not {"rest", "recovery", "warmup"} & set(texts)  # no phase codes written over the data
    load_axis = fig.to_plotly_json()["layout"]["yaxis4"]
    # work rate up to 240 W: round 50 W ticks from 0 (not the heart-rate grid's odd values)
    assert (load_axis["tickmode"], load_axis["tick0"], load_axis["dtick"]) == ("linear", 0, 50.0)
    excluded = next(t for t in fig.data if t.name == "Excluded breath")
    assert list(excluded.customdata) == [5, 6]
    vo2 = next(t for t in fig.data if t.name == VO2_TRACE)
    assert len(vo2.customdata) == len(avg) and len(vo2.customdata[0]) == 3
    assert vo2.customdata[7][0] == avg["t_s"].iloc[7] and vo2.customdata[7][2] == 7
    assert vo2.line.color == palette.SIGNAL["vo2_ml_min"]


def test_time_course_uses_speed_axis_on_a_treadmill(avg):
    fig = time_course_figure(avg.drop(columns="work_w").assign(speed_kmh=8.0))
    assert "Speed (km/h)" in _axis_titles(fig)


def test_vslope_lines_follow_the_fit_and_candidates_are_distinct(avg):
    fit = VSlopeFit(break_index=20, vo2_break_ml_min=1600.0, vco2_break_ml_min=1520.0, slope_below=0.95,
                    intercept_below=0.0, slope_above=1.4, intercept_above=-720.0, sse=0.0, valid=True)
    cands = {"V-slope": ThresholdPick("vt1", 300.0, 1600.0, "V-slope"),
             "PETO2 nadir": ThresholdPick("vt1", 312.5, 1650.0, "PETO2 nadir"), "excess CO2": None}
    fig = vslope_figure(avg, fit=fit, candidates=cands, vt1=ThresholdPick("vt1", 300.0, 1600.0, "consensus"))
    lower = next(t for t in fig.data if t.name.startswith("Lower slope"))
    upper = next(t for t in fig.data if t.name.startswith("Upper slope"))
    assert lower.x[1] == pytest.approx(1600.0) and lower.y[1] == pytest.approx(0.95 * 1600)
    assert upper.y[-1] == pytest.approx(1.4 * upper.x[-1] - 720)
    markers = [t for t in fig.data if t.name.startswith("VT1 by")]
    assert [t.name for t in markers] == ["VT1 by V-slope", "VT1 by PETO2 nadir"]
    assert markers[0].marker.symbol != markers[1].marker.symbol
    assert set(_axis_titles(fig)) == {"VO2 (mL/min)", "VCO2 (mL/min)"}
    data = next(t for t in fig.data if t.name == DATA_TRACE)
    assert data.customdata[3][1] == avg["vo2_ml_min"].iloc[3]


def test_vslope_without_a_fit_still_plots_the_data(avg):
    fig = vslope_figure(avg)
    assert [t.name for t in fig.data] == [DATA_TRACE]


def test_equivalents_panels_and_missing_end_tidal_note(avg):
    fig = equivalents_figure(avg, thresholds={"vt1": ThresholdPick("vt1", 300.0, 1600.0, "consensus")})
    assert {t.name for t in fig.data} == {"VE/VO2", "VE/VCO2", "PETO2", "PETCO2", "Rest", "Recovery"}
    assert "End-tidal pressure (mmHg)" in _axis_titles(fig)
    # short enough for a half-height panel of a half-width chart (a longer title was cut off)
    assert "VE/VO2, VE/VCO2 (no unit)" in _axis_titles(fig)
    assert all(len(t) <= 28 for t in _axis_titles(fig))
    bare = equivalents_figure(avg.drop(columns=["peto2_mmhg", "petco2_mmhg"]))
    notes = [a["text"] for a in bare.to_plotly_json()["layout"]["annotations"]]
    assert "No end-tidal pressures in this recording" in notes


@pytest.mark.parametrize(
    ("span", "max_ticks", "step"),
    [(107.0, 5, 25.0), (240.0, 5, 50.0), (14.0, 5, 5.0), (14.0, 7, 2.0), (3.2, 5, 1.0), (1000.0, 6, 200.0), (0.0, 5, 1.0)],
)
def test_nice_step_is_a_round_spacing(span, max_ticks, step):
    # 1-2-2.5-5 x 10^k spacings (common practice for chart axes)
    assert nice_step(span, max_ticks=max_ticks) == step
    if span > 0:
        assert span / step <= max_ticks


def test_phase_runs_splits_contiguous_labels():
    t = np.array([0.0, 10, 20, 30, 40])
    runs = phase_runs(t, np.array(["rest", "rest", "exercise", "exercise", "recovery"]))
    assert runs == [("rest", 0.0, 10.0), ("exercise", 20.0, 30.0), ("recovery", 40.0, 40.0)]


def test_palette_is_okabe_ito():
    # Okabe & Ito 2008 colour set (from memory): eight colours, black first, vermillion #D55E00.
    assert len(palette.OKABE_ITO) == 8 and palette.OKABE_ITO[0] == "#000000"
    assert palette.VERMILLION == "#D55E00" and palette.BLUE == "#0072B2"
    assert palette.THRESHOLD["vt1"]["dash"] != palette.THRESHOLD["vt2"]["dash"]


# --- linking: one time window, one highlighted span ------------------------------------------

from dashboard.charts.linking import (  # noqa: E402
    SPAN_FILL,
    SPAN_TRACE,
    clamp_window,
    in_span,
    is_area_selection,
    selected_time_span,
    span_text,
    window_around,
    window_bounds,
    window_range,
    y_range_in_window,
)


def _box_event(points, *, tool="box"):
    # The shape of what st.plotly_chart(on_select=...) returns for a box / lasso selection
    # (Streamlit's PlotlyState: points, point_indices, box, lasso).
    area = [{"xref": "x", "yref": "y", "x": [1000, 1500], "y": [900, 1400]}]
    return {"selection": {"points": points, "point_indices": [p.get("point_index", 0) for p in points],
                          "box": area if tool == "box" else [], "lasso": area if tool == "lasso" else []}}


def test_a_box_selection_becomes_the_span_of_the_selected_breaths():
    points = [
        {"curve_number": 0, "point_index": 4, "x": 1160.0, "y": 1102.0, "customdata": [190.0, 1160.0, 4]},
        {"curve_number": 0, "point_index": 9, "x": 1360.0, "y": 1292.0, "customdata": [240.0, 1360.0, 9]},
        {"curve_number": 0, "point_index": 6, "x": 1240.0, "y": 1178.0, "customdata": [210.0, 1240.0, 6]},
        # a method marker and an excluded-breath cross: no [t_s, ...] customdata, not part of the span
        {"curve_number": 3, "point_index": 0, "x": 1500.0, "y": 1425.0},
        {"curve_number": 5, "point_index": 0, "x": 900.0, "y": 870.0, "customdata": 17},
    ]
    assert selected_time_span(_box_event(points)) == (190.0, 240.0)
    assert selected_time_span(_box_event(points, tool="lasso")) == (190.0, 240.0)
    assert span_text((190.0, 240.4)) == "3:10–4:00"  # m:ss, the one formatter (dashboard.timefmt)


def test_a_click_or_an_empty_selection_is_not_a_span():
    click = {"selection": {"points": [{"x": 1.0, "y": 1.0, "customdata": [110.0, 1100.0, 1]}], "box": [], "lasso": []}}
    assert not is_area_selection(click)
    assert selected_time_span(click) is None  # a click still moves the threshold instead
    assert selected_time_span(_box_event([])) is None
    one = [{"x": 1.0, "y": 1.0, "customdata": [110.0, 1100.0, 1]}]
    assert selected_time_span(_box_event(one)) is None  # one breath is not a span
    assert selected_time_span(_box_event(one), min_points=1) == (110.0, 110.0)
    assert selected_time_span(None) is None and selected_time_span({"selection": None}) is None


def test_window_bounds_range_and_clamp():
    t = np.array([3.0, 250.0, 1234.5])
    assert window_bounds(t, step_s=10.0) == (0.0, 1240.0)
    assert window_bounds(np.array([]), step_s=10.0) == (0.0, 10.0)
    bounds = (0.0, 1240.0)
    assert window_range(bounds, bounds=bounds) is None  # whole recording: plotly's own autorange
    assert window_range((300.0, 600.0), bounds=bounds) == [300.0, 600.0]
    assert window_range(None) is None and window_range((600.0, 600.0)) is None
    assert clamp_window((300.0, 2000.0), bounds) == (300.0, 1240.0)
    assert clamp_window((1500.0, 2000.0), bounds) == bounds
    assert clamp_window(None, bounds) == bounds
    assert list(in_span(np.array([100.0, 190.0, 240.0, 250.0]), (190.0, 240.0))) == [False, True, True, False]


def test_both_time_charts_show_the_same_window_and_the_same_band(avg):
    window, span = (120.0, 400.0), (200.0, 260.0)
    t_fig = time_course_figure(avg, time_window=window, highlight=span)
    e_fig = equivalents_figure(avg, time_window=window, highlight=span)
    for fig in (t_fig, e_fig):
        layout = fig.to_plotly_json()["layout"]
        assert list(layout["xaxis"]["range"]) == [120.0, 400.0]
        bands = [s for s in layout["shapes"] if s.get("fillcolor") == SPAN_FILL]
        assert [(b["x0"], b["x1"], b["yref"]) for b in bands] == [(200.0, 260.0, "paper")]
        assert any(t.name == f"{SPAN_TRACE} 3:20–4:20" for t in fig.data)
    plain = time_course_figure(avg).to_plotly_json()["layout"]
    assert "range" not in plain["xaxis"] and not [s for s in plain["shapes"] if s.get("fillcolor") == SPAN_FILL]


def test_vslope_rings_the_breaths_of_the_highlighted_span(avg):
    fig = vslope_figure(avg, highlight=(200.0, 260.0))
    assert fig.data[0].name == DATA_TRACE  # still first: the browser and the click handler read trace 0
    ring = next(t for t in fig.data if t.name.startswith(SPAN_TRACE))
    inside = avg[(avg["t_s"] >= 200) & (avg["t_s"] <= 260)]
    assert list(ring.x) == list(inside["vo2_ml_min"]) and list(ring.y) == list(inside["vco2_ml_min"])
    assert len(ring.x) == 7  # 200, 210, ..., 260 s
    assert [t.name for t in vslope_figure(avg, highlight=(5000.0, 6000.0)).data] == [DATA_TRACE]


def test_window_around_a_span_has_a_step_of_margin_and_stays_inside_the_test():
    bounds = (0.0, 1240.0)
    assert window_around((575.3, 894.9), bounds, step_s=10.0) == (560.0, 910.0)
    assert window_around((3.0, 40.0), bounds, step_s=10.0) == (0.0, 50.0)
    assert window_around((1200.0, 1238.0), bounds, step_s=10.0) == (1190.0, 1240.0)


def test_y_axes_fit_the_data_inside_the_time_window(avg):
    # hand-solvable: vo2 = 400 + 4 t, so 120..400 s spans 880..2000 mL/min; vco2 = 0.95 vo2 below
    # 1600 and 1.4 vo2 - 720 above, i.e. 836..2080 mL/min; 6 % of the span as margin each side.
    fig = time_course_figure(avg, time_window=(120.0, 400.0)).to_plotly_json()["layout"]
    lo, hi = 836.0, 2080.0
    assert fig["yaxis"]["range"] == pytest.approx([lo - 0.06 * (hi - lo), hi + 0.06 * (hi - lo)])
    ve_lo, ve_hi = 10 + 0.03 * 880, 10 + 0.03 * 2000
    assert fig["yaxis2"]["range"] == pytest.approx([ve_lo - 0.06 * (ve_hi - ve_lo), ve_hi + 0.06 * (ve_hi - ve_lo)])
    assert "range" not in time_course_figure(avg).to_plotly_json()["layout"]["yaxis"]
    eq = equivalents_figure(avg, time_window=(120.0, 400.0)).to_plotly_json()["layout"]
    r_lo, r_hi = 25 + 0.01 * 120, 28 + 0.005 * 400  # VE/VO2 low end, VE/VCO2 high end
    assert eq["yaxis"]["range"] == pytest.approx([r_lo - 0.06 * (r_hi - r_lo), r_hi + 0.06 * (r_hi - r_lo)])
    flat = [{"x": np.array([0.0, 10.0]), "y": np.array([5.0, 5.0]), "yaxis": "y"}]
    assert y_range_in_window(flat, (0.0, 10.0), axis="y") == pytest.approx([4.0, 6.0])  # flat: 1 unit each side
    assert y_range_in_window(flat, (20.0, 30.0), axis="y") is None
    assert y_range_in_window(flat, None, axis="y") is None
