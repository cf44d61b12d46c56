"""Time course of a test: gas exchange, ventilation, heart rate and load against time."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from analysis import columns as C
from dashboard import palette
from dashboard.charts._common import BASE_LAYOUT, has, mark_thresholds, shade_phases

#: The clickable trace (averaged VO2) is named so the page can find it in a selection.
VO2_TRACE = "VO2 (averaged)"


def time_course_figure(
    avg: pd.DataFrame,
    *,
    breaths: pd.DataFrame | None = None,
    excluded_rows: Iterable[int] = (),
    thresholds: Mapping[str, Any] | None = None,
    averaging_label: str = "",
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

    Returns
    -------
    plotly.graph_objects.Figure
        Panel 1 VO2 and VCO2 (mL/min), panel 2 VE (L/min), panel 3 heart rate (beats/min) with
        work rate (W) or speed (km/h) on a second axis. Averaged VO2 points carry
        ``customdata = [t_s, vo2_ml_min, row]`` for selection.
    """
    load_col = C.WORK_W if has(avg, C.WORK_W) else (C.SPEED_KMH if has(avg, C.SPEED_KMH) else None)
    fig = make_subplots(
        rows=3,
        cols=1,
        shared_xaxes=True,
        vertical_spacing=0.05,
        row_heights=[0.45, 0.27, 0.28],
        specs=[[{}], [{}], [{"secondary_y": load_col is not None}]],
    )
    excluded = set(int(r) for r in excluded_rows)

    def raw(col: str, row: int, name: str) -> None:
        if breaths is None or not has(breaths, col):
            return
        keep = ~breaths["source_row"].isin(excluded) if "source_row" in breaths.columns else slice(None)
        sub = breaths.loc[keep]
        fig.add_trace(
            go.Scattergl(
                x=sub[C.T_S],
                y=sub[col],
                mode="markers",
                marker={"size": 3, "color": palette.SIGNAL[col], "opacity": palette.BREATH_DOT_OPACITY},
                name=f"{name} breaths",
                legendgroup=col,
                showlegend=False,
                hoverinfo="skip",
            ),
            row=row,
            col=1,
        )

    def line(col: str, row: int, name: str, *, secondary: bool = False, clickable: bool = False) -> None:
        if not has(avg, col):
            return
        trace = go.Scatter(
            x=avg[C.T_S],
            y=avg[col],
            mode="lines+markers" if clickable else "lines",
            line={"color": palette.SIGNAL[col], "width": 2},
            marker={"size": 5, "color": palette.SIGNAL[col]},
            name=name,
            legendgroup=col,
        )
        if clickable:
            trace.customdata = np.column_stack([avg[C.T_S], avg[col], np.arange(len(avg))]).tolist()  # plain lists: selection events carry them back
            trace.hovertemplate = "t %{x:.0f} s<br>VO2 %{y:.0f} mL/min<extra></extra>"
        if secondary:
            fig.add_trace(trace, row=row, col=1, secondary_y=True)
        else:
            fig.add_trace(trace, row=row, col=1)

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
        fig.add_trace(
            go.Scatter(
                x=out[C.T_S],
                y=out[C.VO2_ML_MIN],
                mode="markers",
                marker={"symbol": palette.EXCLUDED_SYMBOL, "size": 10, "color": palette.EXCLUDED, "line": {"width": 2}},
                name="Excluded breath",
                customdata=out["source_row"],
                hovertemplate="excluded breath (line %{customdata})<br>t %{x:.0f} s, VO2 %{y:.0f} mL/min<extra></extra>",
            ),
            row=1,
            col=1,
        )

    shade_phases(fig, avg)
    mark_thresholds(fig, thresholds)
    fig.update_yaxes(title_text="VO2, VCO2 (mL/min)", row=1, col=1)
    fig.update_yaxes(title_text="VE (L/min)", row=2, col=1)
    fig.update_yaxes(title_text="Heart rate (beats/min)", row=3, col=1, secondary_y=False)
    if load_col is not None:
        fig.update_yaxes(
            title_text="Work rate (W)" if load_col == C.WORK_W else "Speed (km/h)", row=3, col=1, secondary_y=True
        )
    fig.update_xaxes(title_text="Time (s)", row=3, col=1)
    title = "Time course" + (f" — {averaging_label}" if averaging_label else "")
    fig.update_layout(**BASE_LAYOUT, title={"text": title, "font": {"size": 15}}, height=720, clickmode="event+select")
    return fig


def time_course_from_results(results: Any, session: Any | None = None) -> go.Figure:
    """:func:`time_course_figure` for a :class:`analysis.results.TestResults` (and its session)."""
    excluded = results.excluded_breaths
    rows = excluded["source_row"].tolist() if excluded is not None and "source_row" in excluded.columns else []
    return time_course_figure(
        results.averaged,
        breaths=session.breaths if session is not None else None,
        excluded_rows=rows,
        thresholds={"vt1": results.thresholds.vt1, "vt2": results.thresholds.vt2},
        averaging_label=results.settings.averaging.label,
    )
