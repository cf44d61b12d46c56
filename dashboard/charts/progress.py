"""Progress charts: one result across a person's tests, and two tests overlaid.

Pure functions from the frames of :mod:`analysis.progress` to plotly figures (no computation of
results here). Colours from :mod:`dashboard.palette`; every axis states its unit.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis.progress import METRICS, OVERLAYS
from dashboard import palette
from dashboard.charts._common import BASE_LAYOUT, time_axis, time_labels

#: Axis titles of the overlay kinds of :func:`analysis.progress.aligned_series`.
OVERLAY_AXES: dict[str, tuple[str, str]] = {
    "vo2_time": ("Time from start of exercise (m:ss)", "VO2 (mL/min)"),
    "vco2_vo2": ("VO2 (mL/min)", "VCO2 (mL/min)"),
}

_OVERLAY_COLOURS = (palette.BLUE, palette.ORANGE, palette.BLUISH_GREEN, palette.REDDISH_PURPLE)
_OVERLAY_DASH = ("solid", "dash", "dot", "dashdot")


def _unit_text(unit: str) -> str:
    return f" ({unit})" if unit else " (no unit)"


def progress_figure(table: pd.DataFrame, metric: str) -> go.Figure:
    """One result over the person's tests with the typical-error band around the baseline.

    Parameters
    ----------
    table : pandas.DataFrame
        Output of :func:`analysis.progress.progress_table`.
    metric : str
        Key of :data:`analysis.progress.METRICS` to draw.

    Returns
    -------
    plotly.graph_objects.Figure
        Values as a line with markers against test date; the band as a shaded area; the
        baseline test as a larger open marker; tests beyond the band as filled diamonds.
    """
    spec = METRICS[metric]
    rows = table[table["metric"] == metric]
    fig = go.Figure()
    dates = rows["test_date"].astype(str).tolist()
    if len(rows):
        low, high = rows["band_low"].iloc[0], rows["band_high"].iloc[0]
        if pd.notna(low) and pd.notna(high) and len(set(dates)) == 1:
            # one test date: an area would have no width, so the band is an error bar there
            fig.add_trace(
                go.Scatter(
                    x=[dates[0]],
                    y=[(low + high) / 2.0],
                    mode="markers",
                    marker={"size": 1, "color": "rgba(86, 180, 233, 0.0)"},
                    error_y={"type": "data", "symmetric": True, "array": [(high - low) / 2.0],
                             "color": "rgba(86, 180, 233, 0.6)", "thickness": 6, "width": 18},
                    hoverinfo="skip",
                    name="Typical-error band",
                )
            )
        elif pd.notna(low) and pd.notna(high) and dates:
            fig.add_trace(
                go.Scatter(
                    x=[dates[0], dates[-1], dates[-1], dates[0], dates[0]],
                    y=[low, low, high, high, low],
                    mode="lines",
                    fill="toself",
                    fillcolor="rgba(86, 180, 233, 0.18)",
                    line={"width": 0},
                    hoverinfo="skip",
                    name="Typical-error band",
                )
            )
        fig.add_trace(
            go.Scatter(
                x=dates,
                y=rows["value"],
                mode="lines+markers",
                line={"color": palette.BLUE, "width": 2},
                marker={"size": 9, "color": palette.BLUE},
                name=spec.label,
                customdata=rows[["change", "change_pct"]].to_numpy(),
                hovertemplate="%{x}<br>%{y:.1f}" + (f" {spec.unit}" if spec.unit else "")
                + "<br>change %{customdata[0]:+.1f} (%{customdata[1]:+.1f} %)<extra></extra>",
            )
        )
        base = rows[rows["is_baseline"]]
        fig.add_trace(
            go.Scatter(
                x=base["test_date"].astype(str),
                y=base["value"],
                mode="markers",
                marker={"size": 15, "symbol": "circle-open", "color": palette.BLACK, "line": {"width": 2}},
                name="Baseline",
            )
        )
        beyond = rows[rows["beyond_typical_error"]]
        if len(beyond):
            fig.add_trace(
                go.Scatter(
                    x=beyond["test_date"].astype(str),
                    y=beyond["value"],
                    mode="markers",
                    marker={"size": 13, "symbol": "diamond", "color": palette.VERMILLION},
                    name="Beyond typical error",
                )
            )
    fig.update_layout(**BASE_LAYOUT, title={"text": spec.label, "x": 0})
    fig.update_xaxes(title_text="Test date (YYYY-MM-DD)", type="category")
    fig.update_yaxes(title_text=spec.label + _unit_text(spec.unit))
    return fig


def overlay_figure(aligned: pd.DataFrame, *, overlay: str = "vo2_time") -> go.Figure:
    """Two (or more) tests overlaid, from :func:`analysis.progress.aligned_series`.

    Parameters
    ----------
    aligned : pandas.DataFrame
        Columns ``test``, ``x``, ``y``.
    overlay : {"vo2_time", "vco2_vo2"}
        Which plane the series are in (sets the axis titles).
    """
    if overlay not in OVERLAYS:
        raise KeyError(overlay)
    x_title, y_title = OVERLAY_AXES[overlay]
    fig = go.Figure()
    for i, (label, part) in enumerate(aligned.groupby("test", sort=False)):
        colour = _OVERLAY_COLOURS[i % len(_OVERLAY_COLOURS)]
        fig.add_trace(
            go.Scatter(
                x=part["x"],
                y=part["y"],
                mode="lines+markers" if overlay == "vo2_time" else "markers",
                text=time_labels(part["x"]) if overlay == "vo2_time" else None,
                hovertemplate=("%{fullData.name}<br>at %{text}, VO2 %{y:.0f} mL/min<extra></extra>"
                               if overlay == "vo2_time" else None),
                line={"color": colour, "width": 2, "dash": _OVERLAY_DASH[i % len(_OVERLAY_DASH)]},
                marker={"size": 5, "color": colour, "symbol": ("circle", "square", "triangle-up", "diamond")[i % 4]},
                name=str(label),
            )
        )
    fig.update_layout(**BASE_LAYOUT)
    fig.update_xaxes(title_text=x_title)
    if overlay == "vo2_time" and len(aligned):
        x = pd.to_numeric(aligned["x"], errors="coerce").to_numpy(dtype=float)
        x = x[np.isfinite(x)]
        if x.size:
            axis = time_axis(float(x.min()), float(x.max()), title=x_title)
            fig.update_xaxes(tickmode="array", tickvals=axis["tickvals"], ticktext=axis["ticktext"])
    fig.update_yaxes(title_text=y_title)
    return fig
