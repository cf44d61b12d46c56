"""Small helpers shared by the review charts (no computation of results)."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from dashboard import palette

#: Layout shared by the review charts: readable on a laptop and a tablet.
BASE_LAYOUT: dict[str, Any] = {
    "template": "plotly_white",
    "font": {"size": 13},
    "margin": {"l": 60, "r": 20, "t": 40, "b": 50},
    "legend": {"orientation": "h", "yanchor": "bottom", "y": 1.02, "xanchor": "left", "x": 0},
    "hovermode": "closest",
}

THRESHOLD_LABEL = {"vt1": "VT1", "vt2": "VT2"}


def pick_value(pick: Any, name: str) -> Any:
    """Read ``name`` from a threshold pick given as an object or a dict (``None`` if absent)."""
    if pick is None:
        return None
    if isinstance(pick, Mapping):
        if name == "t_s" and "t_s" not in pick:
            return pick.get("time_s")
        return pick.get(name)
    return getattr(pick, name, None)


def pick_label(kind: str, pick: Any) -> str:
    """``'VT1 (manual)'`` / ``'VT2'`` — the marker text of a threshold line."""
    label = THRESHOLD_LABEL.get(kind, kind.upper())
    return f"{label} (manual)" if pick_value(pick, "source") == "manual" else label


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


def shade_phases(fig: go.Figure, frame: pd.DataFrame) -> None:
    """Shade rest, warm-up and recovery behind all panels of ``fig``."""
    if "phase" not in frame.columns or "t_s" not in frame.columns:
        return
    sub = frame[["t_s", "phase"]].dropna()
    for phase, start, end in phase_runs(sub["t_s"].to_numpy(), sub["phase"].astype(str).to_numpy()):
        fill = palette.PHASE_FILL.get(phase)
        if not fill or fill.endswith("0.0)") or end <= start:
            continue
        fig.add_vrect(
            x0=start,
            x1=end,
            fillcolor=fill,
            line_width=0,
            layer="below",
            annotation_text=phase,
            annotation_position="top left",
            annotation_font_size=11,
            annotation_font_color=palette.GREY,
        )


def has(frame: pd.DataFrame | None, column: str) -> bool:
    return frame is not None and column in frame.columns and bool(frame[column].notna().any())


def mark_thresholds(fig: go.Figure, thresholds: Mapping[str, Any] | None) -> None:
    """Vertical VT1/VT2 lines through every panel, labelled once at the top panel."""
    for kind, pick in (thresholds or {}).items():
        t = pick_value(pick, "t_s")
        if t is None:
            continue
        style = palette.THRESHOLD.get(kind, palette.THRESHOLD["vt1"])
        fig.add_vline(x=float(t), line={"color": style["color"], "dash": style["dash"], "width": 2})
        fig.add_annotation(
            x=float(t),
            y=1,
            xref="x",
            yref="y domain",
            text=pick_label(kind, pick),
            showarrow=False,
            xanchor="left",
            yanchor="top",
            font={"color": style["color"]},
        )
