"""Small helpers shared by the review charts (no computation of results)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis.errors import InvalidParameter
from analysis.indices.threshold_values import ThresholdResult
from analysis.thresholds.results import ThresholdPick
from dashboard import palette
from dashboard.timefmt import clock_text, clock_ticks

_GRID = "#E5E8EE"
#: A small white template (plain dict): light grid, Okabe & Ito colours by default. Kept small
#: because every rerun copies the figure, template included.
TEMPLATE: dict[str, Any] = {
    "layout": {
        "paper_bgcolor": "white",
        "plot_bgcolor": "white",
        "font": {"color": "#2A3F5F"},
        "colorway": [*palette.OKABE_ITO[1:], palette.BLACK],
        "xaxis": {"gridcolor": _GRID, "linecolor": _GRID, "zerolinecolor": _GRID, "ticks": "", "automargin": True},
        "yaxis": {"gridcolor": _GRID, "linecolor": _GRID, "zerolinecolor": _GRID, "ticks": "", "automargin": True},
        "hoverlabel": {"align": "left"},
    }
}

#: Layout shared by the review charts: readable on a laptop and a tablet.
BASE_LAYOUT: dict[str, Any] = {
    "template": TEMPLATE,
    "font": {"size": 13},
    "margin": {"l": 60, "r": 20, "t": 90, "b": 50},
    "legend": {"orientation": "h", "yanchor": "bottom", "y": 1.01, "xanchor": "left", "x": 0},
    "hovermode": "closest",
}

#: Legend under the plot, for charts in a half-width column (keeps the plot area tall).
BOTTOM_LEGEND: dict[str, Any] = {"orientation": "h", "yanchor": "top", "y": -0.14, "xanchor": "left", "x": 0}

THRESHOLD_LABEL = {"vt1": "VT1", "vt2": "VT2"}


#: A threshold as the charts get it: a method's pick (``analysis.thresholds``) or the result's
#: threshold record (``TestResults.vt1``); both carry the same time, VO2, interval and source.
Threshold = ThresholdPick | ThresholdResult


@dataclass(frozen=True)
class AxisMark:
    """A threshold on one chart axis: where it sits, its 90 % interval there, how it was set."""

    x: float | None
    band: tuple[float, float] | None = None
    source: str = "auto"
    determinable: bool = True


def axis_mark(pick: Threshold, *, key: str = "t_s") -> AxisMark:
    """The threshold on the time axis (``key="t_s"``) or the VO2 axis (``key="vo2_ml_min"``)."""
    if key == "t_s":
        return AxisMark(pick.t_s, pick.ci90_t_s, pick.source, pick.determinable)
    if key == "vo2_ml_min":
        return AxisMark(pick.vo2_ml_min, pick.ci90_vo2_ml_min, pick.source, pick.determinable)
    raise InvalidParameter("key", "t_s or vo2_ml_min", key)


def pick_label(kind: str, source: str) -> str:
    """``'VT1 (manual)'`` / ``'VT2'`` — the marker text of a threshold line."""
    label = THRESHOLD_LABEL.get(kind, kind.upper())
    return f"{label} (manual)" if source == "manual" else label


def phase_runs(t_s: np.ndarray, phases: np.ndarray) -> list[tuple[str, float, float]]:
    """Contiguous ``(phase, start_s, end_s)`` runs of a phase column (for shading)."""
    if len(t_s) == 0:
        return []
    runs: list[tuple[str, float, float]] = []
    start = 0
    for i in range(1, len(phases) + 1):
        if i == len(phases) or phases[i] != phases[start]:
            runs.append((str(phases[start]), float(t_s[start]), float(t_s[i - 1])))
            start = i
    return runs


#: Names of the test phases as the reader sees them (codes from ``analysis.columns.PHASES``).
PHASE_NAMES: dict[str, str] = {"rest": "Rest", "warmup": "Warm-up", "exercise": "Exercise", "recovery": "Recovery"}


def _shaded_runs(frame: pd.DataFrame) -> list[tuple[str, float, float]]:
    if "phase" not in frame.columns or "t_s" not in frame.columns:
        return []
    sub = frame[["t_s", "phase"]].dropna()
    runs = phase_runs(sub["t_s"].to_numpy(), sub["phase"].astype(str).to_numpy())
    return [(p, a, b) for p, a, b in runs if palette.PHASE_FILL.get(p) and not palette.PHASE_FILL[p].endswith("0.0)") and b > a]


def phase_shapes(frame: pd.DataFrame) -> tuple[list[dict], list[dict]]:
    """Shapes shading rest, warm-up and recovery through every panel (no text on the plot).

    Built as plain layout dicts spanning the whole plot height (``yref="paper"``): one shape per
    phase run instead of one per panel, which keeps figure building fast. The phases are named
    in the legend (:func:`phase_legend`), where no label can sit on top of a data line.
    """
    shapes = [
        {"type": "rect", "xref": "x", "yref": "paper", "x0": start, "x1": end, "y0": 0, "y1": 1,
         "fillcolor": palette.PHASE_FILL[phase], "line": {"width": 0}, "layer": "below"}
        for phase, start, end in _shaded_runs(frame)
    ]
    return shapes, []


def phase_legend(frame: pd.DataFrame | None) -> list[dict]:
    """Legend-only entries naming each shaded phase ("Rest", "Warm-up", "Recovery") in its colour."""
    if frame is None:
        return []
    seen: list[str] = []
    for phase, _, _ in _shaded_runs(frame):
        if phase not in seen:
            seen.append(phase)
    return [
        {"type": "scatter", "x": [None], "y": [None], "mode": "markers", "name": PHASE_NAMES.get(p, p.capitalize()),
         "marker": {"symbol": "square", "size": 14, "color": palette.PHASE_LEGEND[p], "line": {"width": 0}},
         "hoverinfo": "skip", "xaxis": "x", "yaxis": "y"}
        for p in seen
    ]


#: The 90 % interval of a threshold, by the axis the threshold is drawn on.
#: Opacity of a threshold's interval band (its line colour, faint enough for data to show).
BAND_OPACITY = 0.13


def shown_thresholds(report: Any) -> dict[str, Any]:
    """``{"vt1": pick, "vt2": pick}`` to draw: the threshold in use, else the one not determinable."""
    out = {}
    for kind in ("vt1", "vt2"):
        pick = getattr(report, kind, None)
        out[kind] = pick if pick is not None else getattr(report, f"{kind}_undetermined", None)
    return out


def threshold_band(mark: AxisMark) -> tuple[float, float] | None:
    """The mark's 90 % interval (``None`` when it has none or it is empty)."""
    if mark.band is None:
        return None
    lo, hi = (float(v) for v in mark.band)
    return (lo, hi) if np.isfinite(lo) and np.isfinite(hi) and hi > lo else None


def threshold_shapes(
    thresholds: Mapping[str, Threshold | AxisMark | None] | None, *, key: str = "t_s"
) -> tuple[list[dict], list[dict]]:
    """VT1/VT2 through every panel (``key`` = ``"t_s"`` or ``"vo2_ml_min"``; an :class:`AxisMark`
    is already on its axis), labelled at the top.

    Each threshold is a vertical line with its 90 % interval as a faint band of the same colour;
    a threshold marked not determinable (``determinable`` false) is drawn as its band alone,
    labelled "VT1 not determinable".
    """
    shapes: list[dict] = []
    labels: list[dict] = []
    for kind, pick in (thresholds or {}).items():
        if pick is None:
            continue
        style = palette.THRESHOLD.get(kind, palette.THRESHOLD["vt1"])
        mark = pick if isinstance(pick, AxisMark) else axis_mark(pick, key=key)
        band = threshold_band(mark)
        if band is not None:
            shapes.append(
                {"type": "rect", "xref": "x", "yref": "paper", "x0": band[0], "x1": band[1], "y0": 0, "y1": 1,
                 "fillcolor": style["color"], "opacity": BAND_OPACITY, "line": {"width": 0}, "layer": "below"}
            )
        if not mark.determinable:
            if band is not None:
                labels.append(
                    {"x": 0.5 * (band[0] + band[1]), "y": 1, "xref": "x", "yref": "paper",
                     "text": f"{THRESHOLD_LABEL.get(kind, kind.upper())} not determinable", "showarrow": False,
                     "xanchor": "center", "yanchor": "top", "font": {"color": style["color"]}}
                )
            continue
        x = mark.x
        if x is None or not np.isfinite(x):
            continue
        shapes.append(
            {"type": "line", "xref": "x", "yref": "paper", "x0": float(x), "x1": float(x), "y0": 0, "y1": 1,
             "line": {"color": style["color"], "dash": style["dash"], "width": 2}}
        )
        labels.append(
            {"x": float(x), "y": 1, "xref": "x", "yref": "paper", "text": pick_label(kind, mark.source), "showarrow": False,
             "xanchor": "left", "yanchor": "top", "font": {"color": style["color"]}}
        )
    return shapes, labels


def decorations(
    frame: pd.DataFrame | None, thresholds: Mapping[str, Threshold | None] | None, *, key: str = "t_s"
) -> tuple[list[dict], list[dict]]:
    """Phase shading (when ``frame`` is given) and threshold lines: ``(shapes, annotations)``."""
    shapes, labels = phase_shapes(frame) if frame is not None else ([], [])
    t_shapes, t_labels = threshold_shapes(thresholds, key=key)
    return shapes + t_shapes, labels + t_labels


def column(frame: pd.DataFrame, name: str) -> np.ndarray:
    """A column as a float array (NaN stays NaN: a gap in the line).

    Arrays, not lists: plotly and Streamlit copy and encode a float array in one step (base64),
    where a list of 2,000 Python floats is copied one object at a time on every rerun.
    """
    return np.ascontiguousarray(frame[name].to_numpy(dtype=float))


def build_figure(traces: list[dict], layout: dict[str, Any]) -> go.Figure:
    """A figure from plain trace and layout dicts, skipping plotly's per-property validation.

    The dicts are written by hand in this package with known-good property names, and the
    validation pass costs ten times more than everything else on a 2,000-breath test.
    """
    full = dict(BASE_LAYOUT)
    full.update(layout)
    return go.Figure(data=traces, layout=full, _validate=False)


def nice_step(span: float, *, max_ticks: int = 6) -> float:
    """A round tick spacing (1, 2, 2.5 or 5 times a power of ten) giving at most ``max_ticks`` intervals.

    Used where plotly would otherwise place a second axis's ticks to line up with the first
    axis's grid (odd values such as 16.8 / 58.4 / 100.1 W).
    """
    span = float(span)
    if not np.isfinite(span) or span <= 0:
        return 1.0
    power = 10.0 ** np.floor(np.log10(span / max_ticks))
    for factor in (1.0, 2.0, 2.5, 5.0, 10.0):
        step = factor * power
        if span / step <= max_ticks:
            return float(step)
    return float(10.0 * power)


def axis_title(text: str) -> dict[str, Any]:
    return {"text": text}


def figure_title(text: str) -> dict[str, Any]:
    return {"text": text, "font": {"size": 15}, "x": 0.01, "y": 0.985, "yanchor": "top"}


def has(frame: pd.DataFrame | None, column: str) -> bool:
    return frame is not None and column in frame.columns and bool(frame[column].notna().any())


# --- times as m:ss on every chart (values stay seconds; exports keep seconds) ----------------


def time_labels(t_s: Any) -> list[str]:
    """``m:ss`` labels of times (s) for hover text: the one formatter, :func:`dashboard.timefmt.clock_text`."""
    return [clock_text(t) for t in np.asarray(t_s, dtype=float).ravel()]


def time_axis(lo_s: float, hi_s: float, *, title: str = "Time (m:ss)", max_ticks: int = 6) -> dict[str, Any]:
    """Layout of a time axis over ``lo_s``..``hi_s``: ticks at round seconds labelled ``m:ss``."""
    values, labels = clock_ticks(lo_s, hi_s, max_ticks=max_ticks)
    return {"tickmode": "array", "tickvals": values, "ticktext": labels, "tickangle": 0, "title": {"text": title}}


def time_span(frame: pd.DataFrame | None, window: Any = None) -> tuple[float, float]:
    """The span a time axis shows: the window when one is chosen, else the frame's ``t_s`` range."""
    if window is not None:
        return float(window[0]), float(window[1])
    if frame is not None and has(frame, "t_s"):
        t = frame["t_s"].to_numpy(dtype=float)
        t = t[np.isfinite(t)]
        if t.size:
            return float(t.min()), float(t.max())
    return 0.0, 1.0
