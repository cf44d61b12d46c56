"""Ventilatory equivalents and end-tidal pressures against time, with VT1/VT2 marked."""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import pandas as pd
import plotly.graph_objects as go

from analysis import columns as C
from dashboard import palette
from dashboard.charts._common import (
    BOTTOM_LEGEND,
    axis_title,
    build_figure,
    column,
    decorations,
    figure_title,
    has,
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


#: Columns of the equivalents frame (computed in analysis, not here).
VE_VO2 = "ve_vo2"
VE_VCO2 = "ve_vco2"


def _ratios(avg: pd.DataFrame) -> pd.DataFrame:
    """VE/VO2 and VE/VCO2 columns: the analysis' own series (``TestResults.averaged`` carries
    them); a frame without them gets them from :func:`analysis.breaths.derived.with_derived_series`."""
    if has(avg, VE_VO2) and has(avg, VE_VCO2):
        return avg
    from analysis.breaths.derived import with_derived_series

    return with_derived_series(avg)


def equivalents_figure(
    avg: pd.DataFrame,
    *,
    equivalents: pd.DataFrame | None = None,
    thresholds: Mapping[str, Any] | None = None,
    time_window: TimeSpan | None = None,
    highlight: TimeSpan | None = None,
) -> go.Figure:
    """Two panels sharing the time axis.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths with ``t_s`` and, when measured, ``peto2_mmhg`` / ``petco2_mmhg``.
    equivalents : pandas.DataFrame, optional
        ``t_s``, ``ve_vo2``, ``ve_vco2`` (dimensionless ratios of VE in L/min to VO2 / VCO2 in
        L/min) as computed by the analysis; the ``avg`` columns of the same names are used when
        this is not given.
    thresholds : mapping, optional
        ``{"vt1": pick, "vt2": pick}`` drawn as vertical lines.
    time_window : tuple of float, optional
        ``(start_s, end_s)`` shown on the time axis (the same window as the time course).
    highlight : tuple of float, optional
        ``(start_s, end_s)`` of breaths selected on another chart, drawn as a grey band.

    Returns
    -------
    plotly.graph_objects.Figure
        Panel 1 VE/VO2 and VE/VCO2; panel 2 PETO2 and PETCO2 (mmHg). Panels without data show
        a note instead of lines.
    """
    eq = equivalents if equivalents is not None else _ratios(avg)
    traces: list[dict] = []
    for col, name in ((VE_VO2, "VE/VO2"), (VE_VCO2, "VE/VCO2")):
        if has(eq, col):
            traces.append(
                {
                    "type": "scatter", "x": column(eq, C.T_S), "y": column(eq, col), "mode": "lines", "name": name,
                    "text": time_labels(eq[C.T_S]), "hovertemplate": f"{name} %{{y:.1f}}<br>at %{{text}}<extra></extra>",
                    "line": {"color": palette.SIGNAL[col], "width": 2, "dash": "solid" if col == VE_VO2 else "dash"},
                    "xaxis": "x", "yaxis": "y",
                }
            )
    for col, name in ((C.PETO2_MMHG, "PETO2"), (C.PETCO2_MMHG, "PETCO2")):
        if has(avg, col):
            traces.append(
                {
                    "type": "scatter", "x": column(avg, C.T_S), "y": column(avg, col), "mode": "lines", "name": name,
                    "text": time_labels(avg[C.T_S]),
                    "hovertemplate": f"{name} %{{y:.1f}} mmHg<br>at %{{text}}<extra></extra>",
                    "line": {"color": palette.SIGNAL[col], "width": 2, "dash": "solid" if col == C.PETO2_MMHG else "dashdot"},
                    "xaxis": "x", "yaxis": "y2",
                }
            )
    shapes, annotations = decorations(avg, thresholds)
    shapes = span_shapes(highlight) + shapes
    traces.extend(phase_legend(avg))
    traces.extend(span_legend(highlight))
    if not (has(avg, C.PETO2_MMHG) or has(avg, C.PETCO2_MMHG)):
        annotations.append(
            {"text": "No end-tidal pressures in this recording", "xref": "paper", "yref": "paper",
             "x": 0.5, "y": 0.22, "showarrow": False, "font": {"color": palette.GREY}}
        )
    x_rng = window_range(time_window)
    y_rngs = {axis: y_range_in_window(traces, x_rng, axis=axis) for axis in ("y", "y2")}
    return build_figure(
        traces,
        {
            "title": figure_title("Ventilatory equivalents and end-tidal pressures"),
            "height": 600,
            "legend": BOTTOM_LEGEND,
            "margin": {"l": 60, "r": 20, "t": 50, "b": 110},
            "xaxis": {"anchor": "y2", **time_axis(*time_span(eq, x_rng)), **({"range": x_rng} if x_rng else {})},
            # titles at 12 pt: each must fit the height of its half of the chart
            "yaxis": {"domain": [0.5, 1.0], "anchor": "x",
                      "title": {**axis_title("VE/VO2, VE/VCO2 (no unit)"), "font": {"size": 12}},
                      **({"range": y_rngs["y"]} if y_rngs["y"] else {})},
            "yaxis2": {"domain": [0.0, 0.43], "anchor": "x",
                       "title": {**axis_title("End-tidal pressure (mmHg)"), "font": {"size": 12}},
                       **({"range": y_rngs["y2"]} if y_rngs["y2"] else {})},
            "shapes": shapes,
            "annotations": annotations,
        },
    )


def equivalents_from_results(results: TestResults, session: Session | None = None) -> go.Figure:
    """:func:`equivalents_figure` for a :class:`analysis.results.TestResults`."""
    report = results.thresholds
    return equivalents_figure(results.averaged, thresholds=shown_thresholds(report))
