"""Time course of a test: gas exchange, ventilation, heart rate and load against time."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis import columns as C
from dashboard import palette
from dashboard.charts._common import (
    axis_title,
    build_figure,
    column,
    decorations,
    figure_title,
    has,
    nice_step,
    phase_legend,
    shown_thresholds,
    time_axis,
    time_labels,
    time_span,
)
from dashboard.charts.linking import TimeSpan, span_legend, span_shapes, window_range, y_range_in_window

if TYPE_CHECKING:
    from analysis.results import TestResults
    from analysis.session import Session


#: Decimals and unit of each line's value in its hover text (the time reads m:ss).
_DIGITS = {C.VE_L_MIN: 1, C.SPEED_KMH: 1}
_UNIT = {C.VO2_ML_MIN: "mL/min", C.VCO2_ML_MIN: "mL/min", C.VE_L_MIN: "L/min", C.HR_BPM: "beats/min",
         C.WORK_W: "W", C.SPEED_KMH: "km/h"}

#: The clickable trace (averaged VO2) is named so the page can find it in a selection.
VO2_TRACE = "VO2 (averaged)"


def time_course_figure(
    avg: pd.DataFrame,
    *,
    breaths: pd.DataFrame | None = None,
    excluded_rows: Iterable[int] = (),
    thresholds: Mapping[str, Any] | None = None,
    averaging_label: str = "",
    time_window: TimeSpan | None = None,
    highlight: TimeSpan | None = None,
) -> go.Figure:
    """Three stacked panels sharing the time axis.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (canonical columns, ``t_s`` at window centres, optional ``phase``).
    breaths : pandas.DataFrame, optional
        Raw breaths, drawn as faint dots behind the averaged lines.
    excluded_rows : iterable of int
        ``source_row`` values of breaths left out of the analysis; marked with crosses.
    thresholds : mapping, optional
        ``{"vt1": pick, "vt2": pick}`` (objects or dicts with ``t_s`` and ``source``); drawn as
        vertical lines labelled "(manual)" when set by a reviewer.
    averaging_label : str
        Shown in the title so the reader knows what the lines are.
    time_window : tuple of float, optional
        ``(start_s, end_s)`` shown on the time axis (the same window as the equivalents chart);
        the whole recording when ``None``.
    highlight : tuple of float, optional
        ``(start_s, end_s)`` of breaths selected on another chart, drawn as a grey band.

    Returns
    -------
    plotly.graph_objects.Figure
        Panel 1 VO2 and VCO2 (mL/min), panel 2 VE (L/min), panel 3 heart rate (beats/min) with
        work rate (W) or speed (km/h) on a second axis. Averaged VO2 points carry
        ``customdata = [t_s, vo2_ml_min, row]`` for selection.
    """
    load_col = C.WORK_W if has(avg, C.WORK_W) else (C.SPEED_KMH if has(avg, C.SPEED_KMH) else None)
    excluded = {int(r) for r in excluded_rows}
    traces: list[dict] = []
    axis_of_row = {1: "y", 2: "y2", 3: "y3"}

    def raw(col: str, row: int, name: str) -> None:
        if breaths is None or not has(breaths, col):
            return
        sub = breaths[~breaths["source_row"].isin(excluded)] if "source_row" in breaths.columns else breaths
        traces.append(
            {
                "type": "scattergl", "x": column(sub, C.T_S), "y": column(sub, col), "mode": "markers",
                "marker": {"size": 3, "color": palette.SIGNAL[col], "opacity": palette.BREATH_DOT_OPACITY},
                "name": f"{name} breaths", "legendgroup": col, "showlegend": False, "hoverinfo": "skip",
                "xaxis": "x", "yaxis": axis_of_row[row],
            }
        )

    labels = time_labels(avg[C.T_S]) if has(avg, C.T_S) else []

    def line(col: str, row: int, name: str, *, secondary: bool = False, clickable: bool = False) -> None:
        if not has(avg, col):
            return
        trace: dict[str, Any] = {
            "type": "scatter", "x": column(avg, C.T_S), "y": column(avg, col),
            "mode": "lines+markers" if clickable else "lines",
            "line": {"color": palette.SIGNAL[col], "width": 2}, "marker": {"size": 5, "color": palette.SIGNAL[col]},
            "name": name, "legendgroup": col, "xaxis": "x", "yaxis": "y4" if secondary else axis_of_row[row],
            "text": labels, "hovertemplate": f"{name} %{{y:.{_DIGITS.get(col, 0)}f}} {_UNIT.get(col, '')}"
                                             "<br>at %{text}<extra></extra>",
        }
        if clickable:
            # plain lists, t_s first: selection events carry them back (pick_from_chart_point)
            trace["customdata"] = np.column_stack([avg[C.T_S], avg[col], np.arange(len(avg))]).tolist()
            trace["hovertemplate"] = "at %{text}<br>VO2 %{y:.0f} mL/min<extra></extra>"
        traces.append(trace)

    raw(C.VO2_ML_MIN, 1, "VO2")
    raw(C.VCO2_ML_MIN, 1, "VCO2")
    line(C.VO2_ML_MIN, 1, VO2_TRACE, clickable=True)
    line(C.VCO2_ML_MIN, 1, "VCO2 (averaged)")
    raw(C.VE_L_MIN, 2, "VE")
    line(C.VE_L_MIN, 2, "VE (averaged)")
    line(C.HR_BPM, 3, "Heart rate")
    if load_col is not None:
        line(load_col, 3, "Work rate" if load_col == C.WORK_W else "Speed", secondary=True)

    if breaths is not None and excluded and "source_row" in breaths.columns and has(breaths, C.VO2_ML_MIN):
        out = breaths[breaths["source_row"].isin(excluded)]
        traces.append(
            {
                "type": "scatter", "x": column(out, C.T_S), "y": column(out, C.VO2_ML_MIN), "mode": "markers",
                "marker": {"symbol": palette.EXCLUDED_SYMBOL, "size": 10, "color": palette.EXCLUDED, "line": {"width": 2}},
                "name": "Excluded breath", "customdata": [int(r) for r in out["source_row"]],
                "text": time_labels(out[C.T_S]),
                "hovertemplate": "excluded breath (line %{customdata})<br>at %{text}, VO2 %{y:.0f} mL/min<extra></extra>",
                "xaxis": "x", "yaxis": "y",
            }
        )

    shapes, annotations = decorations(avg, thresholds)
    shapes = span_shapes(highlight) + shapes
    traces.extend(phase_legend(avg))
    traces.extend(span_legend(highlight))
    right = 0.93 if load_col is not None else 1.0
    layout: dict[str, Any] = {
        "title": figure_title("Time course" + (f" — {averaging_label}" if averaging_label else "")),
        "height": 720,
        "clickmode": "event+select",
        "xaxis": {"domain": [0, right], "anchor": "y3", **time_axis(*time_span(avg, window_range(time_window))),
                  **({"range": rng} if (rng := window_range(time_window)) else {})},
        "yaxis": {"domain": [0.57, 1.0], "anchor": "x", "title": axis_title("VO2, VCO2 (mL/min)")},
        "yaxis2": {"domain": [0.30, 0.53], "anchor": "x", "title": axis_title("VE (L/min)")},
        "yaxis3": {"domain": [0.0, 0.26], "anchor": "x", "title": axis_title("Heart rate (beats/min)")},
        "shapes": shapes,
        "annotations": annotations,
    }
    for name, axis in (("yaxis", "y"), ("yaxis2", "y2"), ("yaxis3", "y3")):
        if (y_rng := y_range_in_window(traces, layout["xaxis"].get("range"), axis=axis)) is not None:
            layout[name]["range"] = y_rng
    if load_col is not None:
        top = float(np.nanmax(avg[load_col].to_numpy(dtype=float)))
        # Round ticks from 0 (an overlaying axis would otherwise copy the heart-rate grid's spacing).
        layout["yaxis4"] = {
            "overlaying": "y3", "side": "right", "anchor": "x", "showgrid": False, "rangemode": "tozero",
            "tickmode": "linear", "tick0": 0, "dtick": nice_step(top, max_ticks=5),
            "title": axis_title("Work rate (W)" if load_col == C.WORK_W else "Speed (km/h)"),
        }
    return build_figure(traces, layout)


def time_course_from_results(results: TestResults, session: Session | None = None) -> go.Figure:
    """:func:`time_course_figure` for a :class:`analysis.results.TestResults` (and its session)."""
    rows = [e.source_row for e in results.excluded_breaths]
    return time_course_figure(
        results.averaged,
        breaths=session.breaths if session is not None else None,
        excluded_rows=rows,
        thresholds=shown_thresholds(results.thresholds),
        averaging_label=results.settings.averaging.label,
    )
