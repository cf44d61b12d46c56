"""The review overview grid as plain functions: which panels appear, m:ss times, reference lines.

Frames here are hand-made (values chosen, nothing physiological asserted) except where a demo
session is analysed; the threshold values drawn are compared with the result record's.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis.thresholds.results import VSlopeFit
from dashboard import palette
from dashboard.charts.overview_grid import (
    PANEL_BY_KEY,
    VO2_PER_WATT_ML_MIN_W,
    axis_ids,
    grid_columns,
    grid_panels,
    overview_figure,
    time_axis,
    time_labels,
)
from dashboard.timefmt import clock_text, clock_ticks
from tests.support import ROOT

ALL = ["gas_time", "gas_work", "hr_pulse", "vslope", "equivalents", "end_tidal", "rer", "ve_vco2", "vt_ve", "spo2"]


def _avg(*, work: bool = True, speed: bool = False, spo2: bool = True, end_tidal: bool = True, hr: bool = True) -> pd.DataFrame:
    t = np.arange(0.0, 900.0, 10.0)
    vo2 = 400.0 + 3.0 * t
    frame = {"t_s": t, "vo2_ml_min": vo2, "vco2_ml_min": 0.9 * vo2, "ve_l_min": 10.0 + 0.03 * vo2,
             "vt_l": 0.8 + 0.001 * t, "rer": np.full_like(t, 0.9), "ve_vo2": np.full_like(t, 25.0),
             "ve_vco2": np.full_like(t, 28.0), "phase": ["rest"] * 12 + ["exercise"] * 66 + ["recovery"] * 12}
    if hr:
        frame["hr_bpm"] = 70.0 + 0.12 * t
        frame["o2_pulse_ml_beat"] = vo2 / frame["hr_bpm"]
    if work:
        frame["work_w"] = np.clip(t - 120.0, 0.0, None) / 3.0
    if speed:
        frame["speed_kmh"] = 6.0 + t / 100.0
    if spo2:
        frame["spo2_pct"] = np.full_like(t, 97.0)
    if end_tidal:
        frame["peto2_mmhg"] = np.full_like(t, 105.0)
        frame["petco2_mmhg"] = np.full_like(t, 40.0)
    return pd.DataFrame(frame)


# --- which panels appear ----------------------------------------------------------------------


def test_cycle_session_with_every_column_has_all_ten_panels_in_five_columns():
    assert grid_panels(_avg()) == ALL
    assert grid_columns(10) == 5


def test_treadmill_session_has_no_work_rate_panel():
    assert grid_panels(_avg(work=False, speed=True)) == [k for k in ALL if k != "gas_work"]
    # an all-zero work column (a treadmill export that writes 0 W) draws nothing either
    zero = _avg(work=False, speed=True).assign(work_w=0.0)
    assert "gas_work" not in grid_panels(zero)


def test_no_spo2_and_no_end_tidal_columns_leave_their_panels_out():
    assert grid_panels(_avg(spo2=False)) == [k for k in ALL if k != "spo2"]
    assert grid_panels(_avg(end_tidal=False)) == [k for k in ALL if k != "end_tidal"]
    # a column present but empty is "not recorded"
    assert "spo2" not in grid_panels(_avg().assign(spo2_pct=np.nan))
    # one end-tidal pressure is enough for the panel
    assert "end_tidal" in grid_panels(_avg().drop(columns=["peto2_mmhg"]))
    minimal = _avg(work=False, spo2=False, end_tidal=False, hr=False)
    assert grid_panels(minimal) == ["gas_time", "vslope", "equivalents", "rer", "ve_vco2", "vt_ve"]
    assert grid_columns(6) == 4 and grid_columns(3) == 3


def test_figure_draws_exactly_the_selected_panels_with_no_empty_half():
    fig = overview_figure(_avg(end_tidal=False, spo2=False))
    keys = fig.layout.meta["panels"]
    assert "end_tidal" not in keys and "spo2" not in keys
    used = {t.yaxis for t in fig.data} | {t.xaxis for t in fig.data}
    for i in range(len(keys)):  # every panel drawn has data on its own axes
        xa, ya = axis_ids(i)
        assert xa in used and ya in used, keys[i]
    assert not any("No end-tidal" in (a.text or "") for a in fig.layout.annotations)


def test_no_panels_for_an_empty_frame():
    assert grid_panels(pd.DataFrame()) == [] and grid_panels(None) == []


# --- times as m:ss ----------------------------------------------------------------------------


@pytest.mark.parametrize(("seconds", "text"), [(0, "0:00"), (59.4, "0:59"), (59.6, "1:00"), (754.4, "12:34"),
                                               (3725, "1:02:05"), (-5, "-0:05"), (None, "–"), (float("nan"), "–")])
def test_clock_text(seconds, text):
    assert clock_text(seconds) == text


def test_time_axis_ticks_are_seconds_labelled_in_mss():
    axis = time_axis(0.0, 1250.0, max_ticks=6)
    assert axis["tickvals"] == [0.0, 300.0, 600.0, 900.0, 1200.0]
    assert axis["ticktext"] == ["0:00", "5:00", "10:00", "15:00", "20:00"]
    assert clock_ticks(95.0, 200.0) == ([105.0, 120.0, 135.0, 150.0, 165.0, 180.0, 195.0],
                                        ["1:45", "2:00", "2:15", "2:30", "2:45", "3:00", "3:15"])
    assert time_labels(np.array([5.0, 65.0, 3600.0])) == ["0:05", "1:05", "1:00:00"]


def test_time_panels_share_one_axis_labelled_in_mss_and_hover_in_mss():
    fig = overview_figure(_avg())
    layout = fig.to_plotly_json()["layout"]
    keys = layout["meta"]["panels"]
    time_axes = [f"xaxis{axis_ids(i)[0][1:]}" for i, k in enumerate(keys) if PANEL_BY_KEY[k].over_time]
    assert time_axes[0] == "xaxis" and all(layout[a]["matches"] == "x" for a in time_axes[1:])
    assert all(layout[a]["ticktext"][1] == "5:00" for a in time_axes)
    vo2 = next(t for t in fig.data if t.name == "VO2" and t.xaxis == "x")
    assert vo2.text[1] == "0:10" and "%{text}" in vo2.hovertemplate
    assert [list(c) for c in vo2.customdata[:2]] == [[0.0, 0.0], [10.0, 1.0]]  # t_s first (click, selection)


# --- reference lines --------------------------------------------------------------------------


def test_vslope_panel_is_square_with_a_slope_one_line():
    fig = overview_figure(_avg())
    i = fig.layout.meta["panels"].index("vslope")
    xa, ya = axis_ids(i)
    layout = fig.to_plotly_json()["layout"]
    x_axis, y_axis = layout[f"xaxis{xa[1:]}"], layout[f"yaxis{ya[1:]}"]
    assert list(x_axis["range"]) == list(y_axis["range"]) and y_axis["scaleanchor"] == xa and y_axis["scaleratio"] == 1
    (ref,) = [t for t in fig.data if t.name == "slope 1" and t.xaxis == xa]
    assert (ref.y[1] - ref.y[0]) / (ref.x[1] - ref.x[0]) == pytest.approx(1.0)


def test_vslope_panel_draws_the_analysis_fit_and_the_slope_one_line_through_its_break():
    fit = VSlopeFit(break_index=10, vo2_break_ml_min=1500.0, vco2_break_ml_min=1370.0, slope_below=0.9,
                    intercept_below=20.0, slope_above=1.3, intercept_above=-580.0, sse=0.0, valid=True)
    fig = overview_figure(_avg(), fit=fit)
    xa = axis_ids(fig.layout.meta["panels"].index("vslope"))[0]
    fitted = [t for t in fig.data if t.name and t.name.startswith("fitted slope") and t.xaxis == xa]
    assert [t.name for t in fitted] == ["fitted slope 0.90", "fitted slope 1.30"]
    (ref,) = [t for t in fig.data if t.name == "slope 1" and t.xaxis == xa]
    assert np.interp(1500.0, ref.x, ref.y) == pytest.approx(0.9 * 1500.0 + 20.0)


def test_work_rate_panel_has_the_10_ml_per_watt_line():
    fig = overview_figure(_avg())
    xa = axis_ids(fig.layout.meta["panels"].index("gas_work"))[0]
    (ref,) = [t for t in fig.data if t.name == "10 mL/min per W" and t.xaxis == xa]
    assert (ref.y[1] - ref.y[0]) / (ref.x[1] - ref.x[0]) == pytest.approx(VO2_PER_WATT_ML_MIN_W)
    assert VO2_PER_WATT_ML_MIN_W == 10.0  # Wasserman et al.; ATS/ACCP 2003 (from memory)


def test_highlighted_span_rings_points_on_relationship_panels_and_shades_time_panels():
    fig = overview_figure(_avg(), highlight=(300.0, 360.0))
    keys = fig.layout.meta["panels"]
    from dashboard.charts.linking import SPAN_FILL, SPAN_TRACE

    bands = [s for s in fig.layout.shapes if s.fillcolor == SPAN_FILL]
    assert len(bands) == sum(PANEL_BY_KEY[k].over_time for k in keys)
    rings = [t for t in fig.data if t.name and t.name.startswith(SPAN_TRACE)]
    xy_axes = {axis_ids(i)[0] for i, k in enumerate(keys) if not PANEL_BY_KEY[k].over_time}
    assert {r.xaxis for r in rings} == xy_axes
    assert all(len(r.x) == 7 for r in rings if r.xaxis == axis_ids(keys.index("vslope"))[0])  # 300..360 s


# --- thresholds on every panel: the result's values ---------------------------------------------


def test_every_panel_draws_the_result_thresholds_of_a_demo_analysis():
    from analysis.io import read_session
    from analysis.pipeline import analyze_session
    from dashboard.charts.overview_grid import overview_from_results

    session = read_session(ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv")
    result = analyze_session(session)
    fig = overview_from_results(result, session)
    keys = fig.layout.meta["panels"]
    assert keys == ALL
    for kind in ("vt1", "vt2"):
        pick = getattr(result, kind)
        colour = palette.THRESHOLD[kind]["color"]
        for i, key in enumerate(keys):
            xa, ya = axis_ids(i)
            lines = [s for s in fig.layout.shapes if s.type == "line" and s.line.color == colour
                     and (s.xref == xa or s.yref == ya)]
            assert len(lines) == 1, (kind, key)
            line = lines[0]
            expected = {"vslope": pick.vo2_ml_min, "gas_work": pick.vo2_ml_min, "ve_vco2": pick.ve_l_min,
                        "vt_ve": pick.ve_l_min}.get(key, pick.t_s)
            value = line.y0 if line.xref.endswith("domain") else line.x0
            assert value == expected, (kind, key)


# --- m:ss on the other dashboard charts (one formatter) ------------------------------------------


def test_time_course_and_equivalents_axes_and_hover_read_mss():
    from dashboard.charts import equivalents_figure, time_course_figure, vslope_figure

    avg = _avg()
    for fig in (time_course_figure(avg), equivalents_figure(avg)):
        layout = fig.to_plotly_json()["layout"]
        assert layout["xaxis"]["title"]["text"] == "Time (m:ss)"
        assert layout["xaxis"]["ticktext"][:3] == ["0:00", "3:00", "6:00"]
        assert layout["xaxis"]["tickvals"][:3] == [0.0, 180.0, 360.0]  # values stay seconds
        timed = [t for t in fig.data if t.hovertemplate and "%{text}" in t.hovertemplate]
        assert timed and all(t.text[1] == "0:10" for t in timed)
        assert not any(" s<" in (t.hovertemplate or "") for t in fig.data)  # no seconds left in hover
    windowed = time_course_figure(avg, time_window=(300.0, 420.0)).to_plotly_json()["layout"]["xaxis"]
    assert windowed["ticktext"][0] == "5:00" and windowed["range"] == [300.0, 420.0]
    vs = vslope_figure(avg)
    assert vs.data[0].text[2] == "0:20" and "at %{text}" in vs.data[0].hovertemplate
