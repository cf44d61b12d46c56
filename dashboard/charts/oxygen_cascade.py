"""The O2 cascade chart: the convective (Fick) line and the diffusive line against venous PO2,
and where they meet (Wagner 1996), for the person's own cascade and a what-if scenario.

The lines come from :func:`analysis.oxygen.pathway.explore` / :func:`analysis.oxygen.cascade.cascade_lines`;
nothing is computed here. Every value is a model estimate.
"""

from __future__ import annotations

from typing import Any

import plotly.graph_objects as go

from dashboard import palette
from dashboard.charts._common import BASE_LAYOUT

#: Chart title words, shown also in the report's static version.
TITLE = "O2 cascade at peak: convective and diffusive lines (model estimate)"
X_TITLE = "Venous PO2, mixed venous (mmHg)"
Y_TITLE = "VO2 (mL/min)"


def _add_lines(fig: go.Figure, lines: Any, *, label: str, colour: str, faint: bool) -> None:
    width = 1.5 if faint else 3.0
    for vo2_ml_min, dash, line_name, kind in (
        (lines.convective_vo2_ml_min, "solid", "convective (Fick) line", "convective"),
        (lines.diffusive_vo2_ml_min, "dash", "diffusive line (DmO2, Bohr integration)", "diffusive"),
    ):
        fig.add_trace(
            go.Scatter(
                x=list(lines.pvo2_mmhg), y=list(vo2_ml_min), mode="lines",
                line={"color": colour, "width": width, "dash": dash},
                name=f"{label}: {line_name}",
                hovertemplate=f"venous PO2 %{{x:.1f}} mmHg<br>VO2 %{{y:.0f}} mL/min<extra>{kind}</extra>",
            )
        )
    fig.add_trace(
        go.Scatter(
            x=[lines.meeting_pvo2_mmhg], y=[lines.meeting_vo2_ml_min], mode="markers",
            marker={"size": 14 if not faint else 10, "color": colour, "symbol": "circle" if not faint else "circle-open",
                    "line": {"color": colour, "width": 2}},
            name=f"{label}: meeting point, VO2 {lines.meeting_vo2_ml_min:.0f} mL/min",
            hovertemplate="meeting point<br>venous PO2 %{x:.1f} mmHg<br>VO2 %{y:.0f} mL/min<extra></extra>",
        )
    )


def cascade_figure(baseline: Any, scenario: Any | None = None) -> go.Figure:
    """Convective and diffusive lines of the person's cascade, and of a scenario when given.

    Parameters
    ----------
    baseline : CascadeLines
        The person's own lines (meeting at the measured VO2peak).
    scenario : CascadeLines, optional
        A what-if scenario's lines (drawn bold; the baseline then faint).
    """
    fig = go.Figure()
    _add_lines(fig, baseline, label="Measured", colour=palette.GREY if scenario is not None else palette.BLUE,
               faint=scenario is not None)
    if scenario is not None:
        _add_lines(fig, scenario, label="What if", colour=palette.VERMILLION, faint=False)
    top = max(
        [baseline.meeting_vo2_ml_min] + ([scenario.meeting_vo2_ml_min] if scenario is not None else [])
    )
    fig.update_layout(**{**BASE_LAYOUT, "legend": {"orientation": "h", "x": 0, "y": -0.25}})
    fig.update_xaxes(title_text=X_TITLE, rangemode="tozero")
    fig.update_yaxes(title_text=Y_TITLE, range=[0, 1.6 * top])
    return fig
