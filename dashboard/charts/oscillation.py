"""The detected ventilatory oscillation drawn: smoothed VE, its slow trend and the counted cycles.

Reads ``interpretation.oscillation`` of the result record (the series kept by
:mod:`analysis.interpretation.oscillation`); computes nothing. Review draws it with Plotly, the
printed report with the static SVG writer (:mod:`dashboard.report.svg_chart`).
"""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from analysis.interpretation.oscillation import Oscillation
from analysis.results import TestResults
from dashboard import palette
from dashboard.charts._common import BASE_LAYOUT, BOTTOM_LEGEND
from dashboard.timefmt import clock_ticks

TITLE = "Ventilation oscillation"


def oscillation_of(results: TestResults) -> Oscillation | None:
    """The oscillation record when it holds a series to draw, else ``None``."""
    osc = results.interpretation.oscillation if results.interpretation is not None else None
    return osc if osc is not None and len(osc.series_t_s) >= 2 else None


def oscillation_caption(osc: Oscillation) -> str:
    """One line: present or not, cycles, period, amplitude and the share of exercise covered."""
    head = "Oscillation present" if osc.present else "Oscillation not present"
    if osc.cycles == 0:
        return f"{head}: no regular cycles counted."
    parts = [f"{osc.cycles} cycle{'s' if osc.cycles != 1 else ''} counted over {osc.fraction_of_exercise:.0%} of exercise"]
    if osc.period_s is not None:
        parts.append(f"period {osc.period_s:.0f} s")
    if osc.amplitude_pct is not None:
        amp = f"amplitude {osc.amplitude_pct:.0f} % of the trend"
        if osc.amplitude_l_min is not None:
            amp += f" ({osc.amplitude_l_min:.1f} L/min)"
        parts.append(amp)
    return f"{head}: " + ", ".join(parts) + "."


def oscillation_figure(osc: Oscillation) -> go.Figure:
    """Plotly figure: smoothed VE (line), its trend (dashed) and each counted cycle (shaded)."""
    t = np.asarray(osc.series_t_s, dtype=float)
    colour = palette.SIGNAL["ve_l_min"]
    fig = go.Figure()
    fig.add_trace(go.Scatter(x=t, y=list(osc.series_ve_l_min), mode="lines", name="VE (smoothed)",
                             line={"color": colour, "width": 2}))
    if len(osc.series_trend_l_min) == t.size:
        fig.add_trace(go.Scatter(x=t, y=list(osc.series_trend_l_min), mode="lines", name="trend",
                                 line={"color": palette.GREY, "dash": "dash"}))
    for a, b in osc.cycle_spans_s:
        fig.add_vrect(x0=a, x1=b, fillcolor=colour, opacity=0.12, line_width=0)
    if osc.cycle_spans_s:  # a legend entry for the shaded cycles
        fig.add_trace(go.Scatter(x=[None], y=[None], mode="markers", name="counted cycle",
                                 marker={"symbol": "square", "size": 12, "color": colour, "opacity": 0.3}))
    vals, text = clock_ticks(float(t.min()), float(t.max()))
    fig.update_layout(
        **{**BASE_LAYOUT, "legend": BOTTOM_LEGEND, "margin": {"l": 60, "r": 20, "t": 40, "b": 60}},
        title={"text": TITLE, "x": 0}, height=320,
        xaxis={"title": "time (m:ss)", "tickvals": vals, "ticktext": text}, yaxis={"title": "VE (L/min)"},
    )
    return fig


def oscillation_svg(osc: Oscillation, *, width: float = 680.0, height: float = 190.0) -> str:
    """The same chart as static SVG for the report."""
    from dashboard.report.svg_chart import Chart, Series, VLine, thin

    t = np.asarray(osc.series_t_s, dtype=float)
    lo, hi = float(t.min()), float(t.max())
    chart = Chart(width, height, TITLE, "time (m:ss)", "VE (L/min)", x_range=(lo, hi), x_ticks=clock_ticks(lo, hi))
    colour = palette.SIGNAL["ve_l_min"]
    chart.add(Series(*thin(t, np.asarray(osc.series_ve_l_min, dtype=float)), "VE (smoothed)", colour))
    if len(osc.series_trend_l_min) == t.size:
        chart.add(Series(*thin(t, np.asarray(osc.series_trend_l_min, dtype=float)), "trend", palette.GREY, dash="4 2", width=1.0))
    chart.vlines = [VLine(float(a), "", colour, band=(float(a), float(b))) for a, b in osc.cycle_spans_s]
    return chart.svg()
