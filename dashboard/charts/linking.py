"""What links the review charts: one time window for the time charts, one highlighted span.

Streamlit draws each plotly figure on its own, so zooming one chart in the browser cannot move
another. The review charts are linked through the page instead:

* a **time window** (``(start_s, end_s)``) chosen once on the page sets ``xaxis.range`` of the
  time course and of the equivalents chart (:func:`window_range`);
* a box or lasso **selection** of breaths on the V-slope chart (or on the time course) becomes a
  **highlighted span** (:func:`selected_time_span`): a band over those times on both time charts
  (:func:`span_shapes`) and a ring around the same breaths on the V-slope chart.

Plain functions, no Streamlit: the page calls them with the event ``st.plotly_chart`` returns.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from dashboard import palette
from dashboard.timefmt import clock_text

#: A time span in seconds from the start of the recording: ``(start_s, end_s)``.
TimeSpan = tuple[float, float]

#: Name of the V-slope trace ringing the breaths of the highlighted span.
SPAN_TRACE = "Selected span"
#: Fill and edge of the highlighted span on the time charts: neutral grey with a dotted black
#: edge, apart from the coloured phase shading, the orange VT1 and the purple VT2 lines.
SPAN_FILL = "rgba(127, 127, 127, 0.20)"
SPAN_EDGE = palette.BLACK


def _get(obj: Any, name: str) -> Any:
    if obj is None:
        return None
    if isinstance(obj, Mapping):
        return obj.get(name)
    return getattr(obj, name, None)


def is_area_selection(event: Any) -> bool:
    """True when a ``st.plotly_chart`` event comes from the box or lasso tool (not a click)."""
    selection = _get(event, "selection")
    return bool(_get(selection, "box") or _get(selection, "lasso"))


def selected_time_span(event: Any, *, min_points: int = 2) -> TimeSpan | None:
    """The time span covered by the breaths selected with the box or lasso tool.

    Parameters
    ----------
    event : mapping or object
        What ``st.plotly_chart(..., on_select=...)`` returns: ``{"selection": {"points": [...],
        "box": [...], "lasso": [...]}}``.
    min_points : int
        Fewest selected breaths that make a span (one breath is a click, not a span).

    Returns
    -------
    tuple of float or None
        ``(start_s, end_s)`` from the first ``customdata`` value (``t_s``) of the selected points
        of the clickable traces (those carry ``[t_s, vo2_ml_min, row]``); ``None`` for a click,
        an empty selection or fewer than ``min_points`` timed points.
    """
    if not is_area_selection(event):
        return None
    times: list[float] = []
    for point in _get(_get(event, "selection"), "points") or []:
        custom = _get(point, "customdata")
        if not isinstance(custom, Sequence) or isinstance(custom, str) or len(custom) < 2:
            continue  # fitted lines, method markers, excluded-breath crosses carry no [t_s, ...]
        try:
            t = float(custom[0])
        except (TypeError, ValueError):
            continue
        if math.isfinite(t):
            times.append(t)
    if len(times) < min_points:
        return None
    return (min(times), max(times))


def window_bounds(t_s: np.ndarray, *, step_s: float = 10.0) -> TimeSpan:
    """The whole recording as a window, widened outwards to whole ``step_s`` (slider limits)."""
    t = np.asarray(t_s, dtype=float)
    t = t[np.isfinite(t)]
    if not len(t):
        return (0.0, step_s)
    lo = math.floor(float(t.min()) / step_s) * step_s
    hi = math.ceil(float(t.max()) / step_s) * step_s
    return (float(lo), float(hi if hi > lo else lo + step_s))


def window_range(window: TimeSpan | None, *, bounds: TimeSpan | None = None) -> list[float] | None:
    """``xaxis.range`` for a chosen window; ``None`` (autorange) when it is the whole recording."""
    if window is None:
        return None
    lo, hi = float(window[0]), float(window[1])
    if bounds is not None and lo <= bounds[0] and hi >= bounds[1]:
        return None
    if not hi > lo:
        return None
    return [lo, hi]


def span_shapes(span: TimeSpan | None) -> list[dict[str, Any]]:
    """A band over the highlighted span through every panel of a time chart (empty when none)."""
    if span is None:
        return []
    lo, hi = float(span[0]), float(span[1])
    return [
        {"type": "rect", "xref": "x", "yref": "paper", "x0": lo, "x1": hi, "y0": 0, "y1": 1,
         "fillcolor": SPAN_FILL, "line": {"width": 1, "color": SPAN_EDGE, "dash": "dot"}, "layer": "below"}
    ]


def span_legend(span: TimeSpan | None) -> list[dict[str, Any]]:
    """A legend-only entry naming the band: ``"Selected span 7:00–10:10"``."""
    if span is None:
        return []
    return [
        {"type": "scatter", "x": [None], "y": [None], "mode": "markers", "name": f"{SPAN_TRACE} {span_text(span)}",
         "marker": {"symbol": "square", "size": 14, "color": "rgba(127, 127, 127, 0.45)",
                    "line": {"width": 1, "color": SPAN_EDGE}},
         "hoverinfo": "skip", "xaxis": "x", "yaxis": "y"}
    ]


def span_text(span: TimeSpan) -> str:
    """``(420.0, 610.4)`` -> ``"7:00–10:10"`` (m:ss, :func:`dashboard.timefmt.clock_text`)."""
    return f"{clock_text(span[0])}–{clock_text(span[1])}"


def in_span(t_s: np.ndarray, span: TimeSpan | None) -> np.ndarray:
    """Boolean mask of the times inside the span (inclusive); all False when there is none."""
    t = np.asarray(t_s, dtype=float)
    if span is None:
        return np.zeros(t.shape, dtype=bool)
    return (t >= float(span[0])) & (t <= float(span[1]))


def span_ring_trace(x: np.ndarray, y: np.ndarray, t_s: np.ndarray, span: TimeSpan | None) -> list[dict[str, Any]]:
    """Open rings around the V-slope points whose time lies in the span (none when empty)."""
    mask = in_span(t_s, span)
    if span is None or not mask.any():
        return []
    return [
        {"type": "scatter", "x": np.ascontiguousarray(np.asarray(x, dtype=float)[mask]),
         "y": np.ascontiguousarray(np.asarray(y, dtype=float)[mask]), "mode": "markers",
         "marker": {"symbol": "circle-open", "size": 12, "color": SPAN_EDGE, "line": {"width": 2}},
         "name": f"{SPAN_TRACE} {span_text(span)}", "hoverinfo": "skip"}
    ]


def clamp_window(window: Any, bounds: TimeSpan) -> TimeSpan:
    """A remembered window kept inside ``bounds`` (the whole recording when it no longer fits).

    The bounds move when the averaging changes (window centres shift); a slider must never be
    handed a value outside its limits.
    """
    try:
        lo, hi = float(window[0]), float(window[1])
    except (TypeError, ValueError, IndexError):
        return bounds
    lo, hi = max(lo, bounds[0]), min(hi, bounds[1])
    return (lo, hi) if hi > lo else bounds


def window_around(span: TimeSpan, bounds: TimeSpan, *, step_s: float = 10.0) -> TimeSpan:
    """A slider window showing ``span`` with one ``step_s`` of margin each side, on the slider's
    steps and inside ``bounds`` ("Zoom the time charts to the highlight")."""
    lo = math.floor(float(span[0]) / step_s) * step_s - step_s
    hi = math.ceil(float(span[1]) / step_s) * step_s + step_s
    return clamp_window((lo, hi), bounds)


def y_range_in_window(traces: Sequence[Mapping[str, Any]], window: Sequence[float] | None, *, axis: str,
                      pad: float = 0.06) -> list[float] | None:
    """A y range fitting the points of the traces on ``axis`` (``"y"``, ``"y2"``, ...) inside the
    time window, with ``pad`` of the span as margin; ``None`` (autorange) without a window or data.

    Plotly's autorange fits the whole recording even when the time axis shows a part of it,
    which leaves a narrow window's lines flat at the bottom of the panel.
    """
    if window is None:
        return None
    lo_t, hi_t = float(window[0]), float(window[1])
    lows: list[float] = []
    highs: list[float] = []
    for trace in traces:
        if trace.get("yaxis", "y") != axis or trace.get("x") is None or trace.get("y") is None:
            continue
        x = np.asarray(trace["x"], dtype=float)
        y = np.asarray(trace["y"], dtype=float)
        if x.shape != y.shape:
            continue
        inside = y[(x >= lo_t) & (x <= hi_t) & np.isfinite(y)]
        if inside.size:
            lows.append(float(inside.min()))
            highs.append(float(inside.max()))
    if not lows:
        return None
    lo, hi = min(lows), max(highs)
    margin = (hi - lo) * pad if hi > lo else max(abs(hi) * pad, 1.0)
    return [lo - margin, hi + margin]
