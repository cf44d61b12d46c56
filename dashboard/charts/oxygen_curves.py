"""Oxygen dissociation curves with the arterial and venous points of each exercise state.

The curves are drawn with :func:`analysis.oxygen.saturation` (the same model and conditions the
comparison used); the points come from the comparison table of
:func:`analysis.oxygen.oxygen_comparison`. No result is computed here.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis.oxygen import MODEL_CONDITIONS, saturation
from analysis.oxygen.comparison import StateOxygen
from dashboard import palette
from dashboard.charts._common import BASE_LAYOUT

#: Colour and dash of each state's curve and points (rest first, as in the comparison).
STATE_STYLE: dict[str, dict[str, str]] = {
    "rest": {"color": palette.BLACK, "dash": "solid", "symbol": "circle"},
    "vt1": {"color": palette.ORANGE, "dash": "dash", "symbol": "square"},
    "vt2": {"color": palette.REDDISH_PURPLE, "dash": "dot", "symbol": "diamond"},
    "peak": {"color": palette.VERMILLION, "dash": "dashdot", "symbol": "triangle-up"},
}
STATE_LABEL: dict[str, str] = {"rest": "Rest", "vt1": "VT1", "vt2": "VT2", "peak": "Peak"}

#: PO2 grid of the drawn curves (mmHg).
PO2_GRID_MMHG = np.linspace(1.0, 120.0, 240)


def curve_conditions(conditions: Any, *, model: str) -> dict[str, float]:
    """The conditions ``model`` applies (:meth:`StateConditions.curve_kwargs`, or a plain mapping)."""
    if hasattr(conditions, "curve_kwargs"):
        return conditions.curve_kwargs(model)
    return {k: float(v) for k, v in conditions.items() if k in MODEL_CONDITIONS.get(model, ())}


#: How each curve condition reads in the legend (name, value and unit).
CONDITION_TEXT: dict[str, str] = {
    "ph": "pH {:g}",
    "temperature_c": "{:g} °C",
    "pco2_mmhg": "PCO2 {:g} mmHg",
    "dpg_mmol_l": "2,3-BPG {:g} mmol/L",
    "base_excess_mmol_l": "BE {:g} mmol/L",
}


def condition_text(conditions: Mapping[str, float]) -> str:
    """``"pH 7.37, 37 °C, 2,3-BPG 5 mmol/L, BE 0 mmol/L"`` for a curve's legend entry."""
    return ", ".join(
        CONDITION_TEXT.get(k, k + " {:g}").format(round(float(v), 2 if k == "ph" else 1)) for k, v in conditions.items()
    )


def dissociation_figure(
    curves: Mapping[str, Any],
    *,
    model: str,
    points: pd.DataFrame | None = None,
    p50_mmhg: float | None = None,
    hill_n: float | None = None,
) -> go.Figure:
    """Saturation (%) against PO2 (mmHg) for each state's conditions, with blood points.

    Parameters
    ----------
    curves : mapping label -> StateConditions
        Conditions of each curve (:class:`analysis.oxygen.StateConditions` or a mapping with
        ``temperature_c``, ``ph``, ``pco2_mmhg``, ``dpg_mmol_l``, ``base_excess_mmol_l``);
        only those the model applies shape the curve.
    model : str
        Dissociation model (as passed to :func:`analysis.oxygen.saturation`).
    points : pandas.DataFrame, optional
        Columns ``state``, ``site`` ("arterial" or "venous"), ``po2_mmhg``, ``saturation``
        (fraction 0-1). Venous points are open markers, arterial filled.
    p50_mmhg, hill_n : float, optional
        For ``model="hill"``.
    """
    fig = go.Figure()
    hill = model == "hill"
    for state, conds in curves.items():
        style = STATE_STYLE.get(state, {"color": palette.GREY, "dash": "solid", "symbol": "circle"})
        s = saturation(PO2_GRID_MMHG, model=model, **curve_conditions(conds, model=model),
                       p50_mmhg=p50_mmhg if hill else None, hill_n=hill_n if hill else None)
        cond_text = condition_text(curve_conditions(conds, model=model))
        fig.add_trace(
            go.Scatter(
                x=PO2_GRID_MMHG,
                y=100.0 * np.asarray(s),
                mode="lines",
                line={"color": style["color"], "dash": style["dash"], "width": 2},
                name=f"{STATE_LABEL.get(state, state)} curve" + (f" ({cond_text})" if cond_text else ""),
                hovertemplate="PO2 %{x:.0f} mmHg<br>S %{y:.1f} %<extra></extra>",
            )
        )
    if points is not None and len(points):
        for key, part in points.groupby(["state", "site"], sort=False):
            state, site = (str(k) for k in key)
            style = STATE_STYLE.get(state, {"color": palette.GREY, "symbol": "circle"})
            venous = site == "venous"
            fig.add_trace(
                go.Scatter(
                    x=part["po2_mmhg"],
                    y=100.0 * part["saturation"].astype(float),
                    mode="markers",
                    marker={
                        "size": 13,
                        "color": style["color"],
                        "symbol": style["symbol"] + ("-open" if venous else ""),
                        "line": {"color": style["color"], "width": 2.5},
                    },
                    name=f"{STATE_LABEL.get(state, state)} {site} (estimate)",
                    hovertemplate=f"{STATE_LABEL.get(state, state)} {site}<br>PO2 %{{x:.0f}} mmHg<br>S %{{y:.1f}} %<extra></extra>",
                )
            )
    fig.update_layout(**{**BASE_LAYOUT, "legend": {"orientation": "v", "x": 1.02, "y": 1}})
    fig.update_xaxes(title_text="PO2 (mmHg)", range=[0, 120])
    fig.update_yaxes(title_text="Haemoglobin O2 saturation (%)", range=[0, 100])
    return fig


#: Parts of the unloading breakdown: (key in ``unloading_ml_dl``, label, colour).
UNLOADING_PARTS: tuple[tuple[str, str, str], ...] = (
    ("po2_fall", "Fall in PO2 (resting curve)", palette.BLUE),
    ("temperature", "Temperature shift", palette.VERMILLION),
    ("acid_base", "pH / CO2 shift", palette.ORANGE),
    ("dpg", "2,3-BPG shift", palette.BLUISH_GREEN),
)


def unloading_figure(states: Sequence[StateOxygen]) -> go.Figure:
    """Stacked bars: O2 unloaded per state (mL/dL) split by cause.

    Parameters
    ----------
    states : sequence of StateOxygen
        ``results.oxygen.states``; each state's ``unloading`` parts (``total``, ``po2_fall``,
        ``temperature``, ``acid_base``, ``dpg``) are drawn.
    """
    fig = go.Figure()
    shown = [(s.name, s.unloading) for s in states if s.unloading is not None]
    names = [STATE_LABEL.get(name, name) for name, _ in shown]
    for key, label, colour in UNLOADING_PARTS:
        fig.add_trace(
            go.Bar(
                x=names,
                y=[getattr(parts, key) for _, parts in shown],
                name=label,
                marker_color=colour,
                hovertemplate="%{x}: %{y:.2f} mL/dL<extra>" + label + "</extra>",
            )
        )
    fig.update_layout(**BASE_LAYOUT, barmode="relative")
    fig.update_xaxes(title_text="State")
    fig.update_yaxes(title_text="O2 unloaded (mL O2/dL blood), estimate")
    return fig
