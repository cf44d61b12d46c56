"""V-slope chart: VCO2 against VO2 with the two fitted lines and each method's VT1."""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis import columns as C
from analysis.thresholds.results import ThresholdPick, VSlopeFit
from dashboard import palette
from dashboard.charts._common import (
    BOTTOM_LEGEND,
    Threshold,
    axis_title,
    build_figure,
    column,
    decorations,
    figure_title,
    time_labels,
)
from dashboard.charts.linking import TimeSpan, span_ring_trace

if TYPE_CHECKING:
    from analysis.results import TestResults
    from analysis.session import Session


#: Name of the clickable data trace.
DATA_TRACE = "Averaged breaths"


def _fit_value(fit: VSlopeFit | None, name: str) -> float | None:
    """A number of the V-slope fit by attribute name (``None`` without a fit)."""
    return None if fit is None else float(getattr(fit, name))


def vslope_figure(
    avg: pd.DataFrame,
    *,
    fit: VSlopeFit | None = None,
    candidates: Mapping[str, ThresholdPick | None] | None = None,
    vt1: Threshold | None = None,
    vt2: Threshold | None = None,
    highlight: TimeSpan | None = None,
) -> go.Figure:
    """VCO2 (mL/min) against VO2 (mL/min) for the V-slope method (Beaver et al. 1986).

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths to plot (normally the exercise part).
    fit : VSlopeFit, optional
        Two-segment fit: ``vo2_break_ml_min``, ``slope_below``, ``intercept_below``,
        ``slope_above``, ``intercept_above``, ``valid``. Its lines are drawn over the plotted VO2
        range on each side of the break (the upper one up to VT2 when given).
    candidates : mapping, optional
        Method name -> VT1 pick (or ``None``) of each method, drawn as distinct markers.
    vt1, vt2 : pick, optional
        The VT1 in use (consensus or manual) as a vertical line; VT2 as a second line.
    highlight : tuple of float, optional
        ``(start_s, end_s)``: breaths at those times are ringed (the span highlighted on the
        time charts).

    Returns
    -------
    plotly.graph_objects.Figure
        Data points carry ``customdata = [t_s, vo2_ml_min, row]`` for selection.

    References
    ----------
    Beaver WL, Wasserman K, Whipp BJ. A new method for detecting anaerobic threshold by gas
    exchange. J Appl Physiol 1986;60:2020-2027.
    """
    x = avg[C.VO2_ML_MIN].to_numpy(dtype=float)
    y = avg[C.VCO2_ML_MIN].to_numpy(dtype=float)
    t = avg[C.T_S].to_numpy(dtype=float)
    traces: list[dict] = [
        {
            "type": "scatter", "x": column(avg, C.VO2_ML_MIN), "y": column(avg, C.VCO2_ML_MIN), "mode": "markers",
            "marker": {"size": 7, "color": palette.SIGNAL[C.VCO2_ML_MIN], "opacity": 0.75},
            "name": DATA_TRACE,
            # plain lists, t_s first: selection events carry them back (pick_from_chart_point)
            "customdata": np.column_stack([t, x, np.arange(len(avg))]).tolist(),
            "text": time_labels(t),
            "hovertemplate": "VO2 %{x:.0f} mL/min<br>VCO2 %{y:.0f} mL/min<br>at %{text}<extra></extra>",
        }
    ]
    traces.extend(span_ring_trace(x, y, t, highlight))
    brk = _fit_value(fit, "vo2_break_ml_min")
    if brk is not None and np.isfinite(brk) and len(x):
        top = None if vt2 is None else vt2.vo2_ml_min
        hi = float(top) if top is not None and float(top) > brk else float(np.nanmax(x))
        for name, lo_x, hi_x, slope_key, icpt_key in (
            ("Lower slope", float(np.nanmin(x)), float(brk), "slope_below", "intercept_below"),
            ("Upper slope", float(brk), hi, "slope_above", "intercept_above"),
        ):
            slope, icpt = _fit_value(fit, slope_key), _fit_value(fit, icpt_key)
            if slope is None or icpt is None:
                continue
            traces.append(
                {
                    "type": "scatter", "x": [lo_x, hi_x], "y": [slope * lo_x + icpt, slope * hi_x + icpt], "mode": "lines",
                    "line": {"color": palette.BLACK, "width": 2, "dash": "solid" if name == "Lower slope" else "dashdot"},
                    "name": f"{name} {slope:.2f}", "hoverinfo": "skip",
                }
            )
    for i, (method, pick) in enumerate((candidates or {}).items()):
        vo2 = None if pick is None else pick.vo2_ml_min
        if vo2 is None or not len(x):
            continue
        j = int(np.nanargmin(np.abs(x - float(vo2))))
        traces.append(
            {
                "type": "scatter", "x": [float(vo2)], "y": [float(y[j])], "mode": "markers",
                "marker": {
                    "symbol": palette.CANDIDATE_SYMBOLS[i % len(palette.CANDIDATE_SYMBOLS)],
                    "size": 14,
                    "color": palette.CANDIDATE_COLOURS[i % len(palette.CANDIDATE_COLOURS)],
                    "line": {"width": 1, "color": palette.BLACK},
                },
                "name": f"VT1 by {method}",
                "hovertemplate": f"{method}: VO2 %{{x:.0f}} mL/min<extra></extra>",
            }
        )
    shapes, annotations = decorations(None, {"vt1": vt1, "vt2": vt2}, key="vo2_ml_min")
    return build_figure(
        traces,
        {
            "title": figure_title("V-slope: VCO2 against VO2"),
            "height": 600,
            "legend": BOTTOM_LEGEND,
            "margin": {"l": 60, "r": 20, "t": 50, "b": 170},
            "xaxis": {"title": axis_title("VO2 (mL/min)")},
            "yaxis": {"title": axis_title("VCO2 (mL/min)")},
            "shapes": shapes,
            "annotations": annotations,
        },
    )


def exercise_rows(avg: pd.DataFrame) -> pd.DataFrame:
    """The exercise part of the averaged frame (all of it when there is no ``phase`` column)."""
    if "phase" in avg.columns and (avg["phase"] == "exercise").any():
        return avg[avg["phase"] == "exercise"]
    return avg


def vslope_from_results(results: TestResults, session: Session | None = None) -> go.Figure:
    """:func:`vslope_figure` for a :class:`analysis.results.TestResults` (exercise rows only)."""
    report = results.thresholds
    return vslope_figure(
        exercise_rows(results.averaged),
        fit=report.vslope,
        candidates=report.vt1_candidates,
        vt1=report.vt1 if report.vt1 is not None else getattr(report, "vt1_undetermined", None),
        vt2=report.vt2 if report.vt2 is not None else getattr(report, "vt2_undetermined", None),
    )
