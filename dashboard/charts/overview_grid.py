"""The review overview: the relationships a reviewer reads a test by, as one compact linked grid.

One plotly figure with a small panel per relationship used to interpret an exercise test
(ATS/ACCP 2003; Wasserman et al.): gas exchange against time and against work rate, heart rate
and O2 pulse, V-slope, ventilation against CO2 output, ventilatory equivalents, end-tidal
pressures, RER, tidal volume against ventilation and SpO2. The arrangement is our own: the
panels read left to right from what the muscles take up, through the heart, to the two
threshold views and then ventilation.

Linking: every time panel shares one time axis (``matches``), so a zoom in one moves them all;
the page's time window sets that axis; a box or lasso selection on any panel becomes one
highlighted span (:mod:`dashboard.charts.linking`) shaded on the time panels and ringed on the
relationship panels. VT1/VT2 are drawn on every panel with their 90 % interval as a band
(:func:`dashboard.charts._common.threshold_shapes`, remapped onto the panel's axes).

Panels without data are left out (no work rate on a treadmill, no SpO2 or end-tidal column),
never drawn empty. Nothing is computed here but display positions: every series comes from the
analysis' averaged frame.

References
----------
American Thoracic Society; American College of Chest Physicians. ATS/ACCP Statement on
cardiopulmonary exercise testing. Am J Respir Crit Care Med 2003;167:211-277.
Wasserman K, Hansen JE, Sue DY, Stringer WW, Whipp BJ. Principles of Exercise Testing and
Interpretation. 5th ed. Lippincott Williams & Wilkins; 2012.
Beaver WL, Wasserman K, Whipp BJ. A new method for detecting anaerobic threshold by gas
exchange. J Appl Physiol 1986;60:2020-2027.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from analysis import columns as C
from analysis.indices.threshold_values import ThresholdResult
from analysis.thresholds.results import VSlopeFit
from dashboard import palette
from dashboard.charts._common import (
    AxisMark,
    Threshold,
    build_figure,
    column,
    has,
    phase_shapes,
    threshold_shapes,
    time_axis,
    time_labels,
)
from dashboard.charts.linking import TimeSpan, span_ring_trace, span_shapes, window_range, y_range_in_window
from dashboard.charts.vslope import exercise_rows
from dashboard.timefmt import clock_text

if TYPE_CHECKING:
    from analysis.results import TestResults
    from analysis.session import Session


RER = "rer"
VE_VO2 = "ve_vo2"
VE_VCO2 = "ve_vco2"
O2_PULSE = "o2_pulse_ml_beat"

#: Expected rise of VO2 with work rate in a ramp test, drawn as a reference line on the
#: VO2-against-work-rate panel: about 10 mL/min per W (Wasserman et al.; ATS/ACCP 2003, from memory).
VO2_PER_WATT_ML_MIN_W = 10.0

#: Most breaths drawn as the faint cloud behind the averaged line (display only: the analysis
#: always uses every breath).
CLOUD_MAX_POINTS = 1200

#: Panel height and the gaps between panels (px / fraction of the figure).
PANEL_HEIGHT_PX = 175
ROW_GAP_PX = 52
TOP_PX = 26
BOTTOM_PX = 30
COL_GAP = 0.062


@dataclass(frozen=True)
class Panel:
    """One panel of the grid: its key, its title and whether its x axis is the test time."""

    key: str
    title: str
    over_time: bool


#: Every panel in reading order (our arrangement). :func:`grid_panels` keeps those with data.
def _c(text: str, colour: str) -> str:
    """A word of a panel title in its line's colour (the grid has no legend: titles name the lines)."""
    return f"<span style='color:{colour}'>{text}</span>"


_S = palette.SIGNAL
PANELS: tuple[Panel, ...] = (
    Panel("gas_time", f"{_c('VO2', _S['vo2_ml_min'])} · {_c('VCO2', _S['vco2_ml_min'])} (mL/min)", True),
    Panel("gas_work", f"{_c('VO2', _S['vo2_ml_min'])} · {_c('VCO2', _S['vco2_ml_min'])} vs work rate", False),
    Panel("hr_pulse", f"{_c('Heart rate', _S['hr_bpm'])} · O2 pulse ···", True),
    Panel("vslope", "V-slope: VCO2 vs VO2", False),
    Panel("equivalents", f"{_c('VE/VO2', _S['ve_vo2'])} · {_c('VE/VCO2 – –', _S['ve_vco2'])}", True),
    Panel("end_tidal", f"{_c('PETO2', _S['peto2_mmhg'])} · PETCO2 (mmHg)", True),
    Panel("rer", "RER", True),
    Panel("ve_vco2", "VE vs VCO2", False),
    Panel("vt_ve", "Tidal volume vs VE", False),
    Panel("spo2", "SpO2 (%)", True),
)
PANEL_BY_KEY: dict[str, Panel] = {p.key: p for p in PANELS}

#: Columns each panel needs (all of them, or ``any`` of the second group).
_NEEDS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "gas_time": ((C.T_S, C.VO2_ML_MIN, C.VCO2_ML_MIN), ()),
    "gas_work": ((C.WORK_W, C.VO2_ML_MIN), ()),
    "hr_pulse": ((C.T_S, C.HR_BPM), ()),
    "vslope": ((C.VO2_ML_MIN, C.VCO2_ML_MIN), ()),
    "equivalents": ((C.T_S,), (VE_VO2, VE_VCO2)),
    "end_tidal": ((C.T_S,), (C.PETO2_MMHG, C.PETCO2_MMHG)),
    "rer": ((C.T_S, RER), ()),
    "ve_vco2": ((C.VE_L_MIN, C.VCO2_ML_MIN), ()),
    "vt_ve": ((C.VT_L, C.VE_L_MIN), ()),
    "spo2": ((C.T_S, C.SPO2_PCT), ()),
}


def grid_panels(avg: pd.DataFrame | None) -> list[str]:
    """Keys of the panels that have data in ``avg``, in reading order.

    A panel needs all its columns with at least one value (``gas_work`` also a work rate above
    zero: a treadmill file's empty or all-zero work column draws nothing), or, for the
    equivalents and end-tidal panels, at least one of their two series.

    Examples
    --------
    >>> import pandas as pd
    >>> grid_panels(pd.DataFrame({"t_s": [0.0], "vo2_ml_min": [300.0], "vco2_ml_min": [250.0]}))
    ['gas_time', 'vslope']
    """
    if avg is None or not len(avg):
        return []
    keys = []
    for panel in PANELS:
        every, some = _NEEDS[panel.key]
        if not all(has(avg, c) for c in every):
            continue
        if some and not any(has(avg, c) for c in some):
            continue
        if panel.key == "gas_work" and not bool((avg[C.WORK_W].to_numpy(dtype=float) > 0).any()):
            continue
        keys.append(panel.key)
    return keys


def grid_columns(n_panels: int) -> int:
    """Panels per row: five for nine or ten panels, else four (fewer when there are fewer)."""
    return max(1, min(n_panels, 5 if n_panels > 8 else 4))


def grid_height_px(n_panels: int) -> int:
    """Height of the whole grid figure for ``n_panels`` panels."""
    rows = -(-max(n_panels, 1) // grid_columns(max(n_panels, 1)))
    return TOP_PX + BOTTOM_PX + rows * PANEL_HEIGHT_PX + (rows - 1) * ROW_GAP_PX


def axis_ids(index: int) -> tuple[str, str]:
    """Trace-side axis ids of the panel at ``index`` (0-based): ``("x", "y")``, ``("x2", "y2")``, ..."""
    suffix = "" if index == 0 else str(index + 1)
    return f"x{suffix}", f"y{suffix}"


def _layout_name(axis_id: str) -> str:
    """``"x3"`` -> ``"xaxis3"``; ``"y"`` -> ``"yaxis"``."""
    return f"{axis_id[0]}axis{axis_id[1:]}"


def _remap(items: Iterable[dict], xref: str, yref: str, *, transpose: bool = False) -> list[dict]:
    """Shapes/annotations built for one plot (``xref="x"``, ``yref="paper"``) moved onto a panel.

    With ``transpose`` a vertical line at ``x`` becomes a horizontal line at ``y`` (for a panel
    whose threshold quantity is on the y axis).
    """
    out = []
    for item in items:
        d = dict(item)
        if transpose:
            swapped = {}
            for k, v in d.items():
                if k in ("x", "x0", "x1", "xref", "xanchor"):
                    swapped["y" + k[1:]] = v
                elif k in ("y", "y0", "y1", "yref", "yanchor"):
                    swapped["x" + k[1:]] = v
                else:
                    swapped[k] = v
            d = swapped
            if "yanchor" in d:  # a label at the top of a vertical line -> at the right end of a horizontal one
                d["xanchor"], d["yanchor"] = "right", "bottom"
        for ref, axis in (("xref", xref), ("yref", yref)):
            if d.get(ref) == "paper":
                d[ref] = f"{axis} domain"
            elif d.get(ref) in ("x", "y"):
                d[ref] = axis
        out.append(d)
    return out


def _ve_band(avg: pd.DataFrame, pick: Threshold) -> tuple[float, float] | None:
    """Minute ventilation over the threshold's 90 % time interval (display of the interval on a
    VE axis): lowest and highest averaged VE inside it, the interval's ends interpolated."""
    band = pick.ci90_t_s
    if band is None or not has(avg, C.VE_L_MIN):
        return None
    lo, hi = (float(v) for v in band)
    if not (np.isfinite(lo) and np.isfinite(hi) and hi > lo):
        return None
    sub = avg[[C.T_S, C.VE_L_MIN]].dropna().sort_values(C.T_S)
    if len(sub) < 2:
        return None
    t, ve = sub[C.T_S].to_numpy(dtype=float), sub[C.VE_L_MIN].to_numpy(dtype=float)
    values = np.concatenate([np.interp([lo, hi], t, ve), ve[(t >= lo) & (t <= hi)]])
    return (float(values.min()), float(values.max())) if values.max() > values.min() else None


def _ve_picks(avg: pd.DataFrame, thresholds: Mapping[str, Threshold | None]) -> dict[str, AxisMark | None]:
    """The thresholds as seen on a VE axis: the VE read at each (the result's ``ve_l_min``; a
    method's pick carries none) and its band."""
    out: dict[str, AxisMark | None] = {}
    for kind, pick in thresholds.items():
        if pick is None:
            continue
        ve = pick.ve_l_min if isinstance(pick, ThresholdResult) else None
        out[kind] = AxisMark(ve, _ve_band(avg, pick), pick.source, pick.determinable)
    return out


def _thin(frame: pd.DataFrame, max_points: int) -> pd.DataFrame:
    """Every k-th row so at most ``max_points`` remain (a display cloud only)."""
    if len(frame) <= max_points:
        return frame
    step = int(np.ceil(len(frame) / max_points))
    return frame.iloc[::step]


def _display_only(values: np.ndarray) -> np.ndarray:
    """Positions of dots that are drawn and never read back (no hover, no selection) as 32-bit
    floats: plotly sends them as half the bytes, and 7 significant digits are far finer than a
    pixel. Never used for a value a reviewer reads or picks."""
    return np.asarray(values, dtype=np.float32)


def _point_ids(t: np.ndarray) -> list[list[float]]:
    """``[t_s, row]`` of each averaged point (row as a whole number), read back by clicks and
    selections."""
    return [[t_s, row] for row, t_s in enumerate(np.asarray(t, dtype=float).tolist())]


class _Builder:
    """Collects the traces, shapes and annotations of the grid, panel by panel."""

    def __init__(self, keys: Sequence[str]) -> None:
        self.keys = list(keys)
        self.traces: list[dict] = []
        self.shapes: list[dict] = []
        self.annotations: list[dict] = []
        self.layout: dict[str, Any] = {}
        self.cols = grid_columns(len(self.keys))
        self.rows = -(-len(self.keys) // self.cols) if self.keys else 0
        self.height = grid_height_px(len(self.keys))

    def domains(self, index: int) -> tuple[list[float], list[float]]:
        row, col = divmod(index, self.cols)
        width = (1.0 - COL_GAP * (self.cols - 1)) / self.cols
        x0 = col * (width + COL_GAP)
        top = 1.0 - (TOP_PX + row * (PANEL_HEIGHT_PX + ROW_GAP_PX)) / self.height
        bottom = top - PANEL_HEIGHT_PX / self.height
        return [x0, x0 + width], [max(bottom, 0.0), min(top, 1.0)]

    def line(self, index: int, x: np.ndarray, y: np.ndarray, t: np.ndarray, *, name: str, colour: str,
             unit: str, digits: int = 0, dash: str = "solid", yaxis: str | None = None, markers: bool = False) -> None:
        """An averaged series: its points carry ``[t_s, row]`` (click and selection read the time)."""
        xa, ya = axis_ids(index)
        self.traces.append({
            # small markers on the lines too: plotly's box and lasso select markers, not lines
            "type": "scatter", "x": x, "y": y, "mode": "lines+markers",
            "line": {"color": colour, "width": 1.6, "dash": dash}, "marker": {"size": 4 if markers else 2, "color": colour},
            "name": name, "xaxis": xa, "yaxis": yaxis or ya,
            # plain lists, t_s first: selection events carry them back (click and box/lasso read the time)
            "customdata": _point_ids(t), "text": time_labels(t),
            "hovertemplate": f"{name} %{{y:.{digits}f}} {unit}<br>at %{{text}}<extra></extra>".replace(" <br>", "<br>"),
        })


def overview_figure(
    avg: pd.DataFrame,
    *,
    thresholds: Mapping[str, Any] | None = None,
    fit: VSlopeFit | None = None,
    breaths: pd.DataFrame | None = None,
    excluded_rows: Iterable[int] = (),
    time_window: TimeSpan | None = None,
    highlight: TimeSpan | None = None,
    panels: Sequence[str] | None = None,
) -> go.Figure:
    """The overview grid of one test.

    Parameters
    ----------
    avg : pandas.DataFrame
        The analysis' averaged frame (``t_s``, gas exchange, ``rer``, ``ve_vo2``, ``ve_vco2``,
        ``o2_pulse_ml_beat``, optional ``phase``, ...). Relationship panels use its exercise rows.
    thresholds : mapping, optional
        ``{"vt1": result, "vt2": result}`` (objects or dicts with ``t_s``, ``vo2_ml_min``,
        ``ve_vl_min``, ``ci90_t_s``, ``ci90_vo2_ml_min``, ``source``, ``determinable``). Drawn on
        every panel: at ``t_s`` on time panels, at ``vo2_ml_min`` on the V-slope (x) and the
        work-rate panel (y, with a marker at ``work_w``), at ``ve_l_min`` on the VE panels.
    fit : VSlopeFit, optional
        The analysis' two-segment V-slope fit (its lines and the slope-1 reference through its
        break are drawn on the V-slope panel).
    breaths : pandas.DataFrame, optional
        Raw breaths: a faint cloud behind VO2 and VCO2 on the first panel (at most
        :data:`CLOUD_MAX_POINTS` each, display only) and crosses at excluded breaths.
    excluded_rows : iterable of int
        ``source_row`` of the breaths the analysis left out.
    time_window : tuple of float, optional
        ``(start_s, end_s)`` of every time panel (the whole test when ``None``).
    highlight : tuple of float, optional
        ``(start_s, end_s)`` of breaths selected on any panel: a band on the time panels, rings
        on the relationship panels.
    panels : sequence of str, optional
        Panel keys to draw (default: :func:`grid_panels` of ``avg``).

    Returns
    -------
    plotly.graph_objects.Figure
        ``layout.meta`` holds ``{"panels": [key, ...]}`` in drawing order; panel ``i`` uses the
        axes of :func:`axis_ids` (``i``).
    """
    keys = list(panels) if panels is not None else grid_panels(avg)
    b = _Builder(keys)
    thresholds = {k: v for k, v in (thresholds or {}).items() if v is not None}
    ex = exercise_rows(avg)
    t_all = column(avg, C.T_S) if has(avg, C.T_S) else np.zeros(0)
    finite_t = t_all[np.isfinite(t_all)]
    x_rng = window_range(time_window)
    t_lo, t_hi = (x_rng if x_rng else ([float(finite_t.min()), float(finite_t.max())] if finite_t.size else [0.0, 1.0]))
    first_time_axis: str | None = None
    excluded = {int(r) for r in excluded_rows}
    extra_axis = len(keys) + 1  # secondary y axes get ids after the panels'
    phases, _ = phase_shapes(avg)  # the same on every time panel
    ticks = time_axis(t_lo, t_hi, title="", max_ticks=4)

    for i, key in enumerate(keys):
        panel = PANEL_BY_KEY[key]
        xa, ya = axis_ids(i)
        x_dom, y_dom = b.domains(i)
        xaxis: dict[str, Any] = {"domain": x_dom, "anchor": ya}
        yaxis: dict[str, Any] = {"domain": y_dom, "anchor": xa}
        frame = avg if panel.over_time else ex
        t = column(frame, C.T_S)
        n_before = len(b.traces)

        if key == "gas_time":
            if breaths is not None and has(breaths, C.VO2_ML_MIN) and has(breaths, C.T_S):
                kept = breaths[~breaths["source_row"].isin(excluded)] if "source_row" in breaths.columns else breaths
                cloud = _thin(kept, CLOUD_MAX_POINTS)
                cloud_t = _display_only(column(cloud, C.T_S))
                for col in (C.VO2_ML_MIN, C.VCO2_ML_MIN):
                    if has(cloud, col):
                        b.traces.append({
                            "type": "scattergl", "x": cloud_t, "y": _display_only(column(cloud, col)), "mode": "markers",
                            "marker": {"size": 2.5, "color": palette.SIGNAL[col], "opacity": palette.BREATH_DOT_OPACITY},
                            "name": f"{C.COLUMNS[col].label} breaths", "hoverinfo": "skip", "xaxis": xa, "yaxis": ya,
                        })
                out = breaths[breaths["source_row"].isin(excluded)] if excluded and "source_row" in breaths.columns else None
                if out is not None and len(out):
                    b.traces.append({
                        "type": "scatter", "x": column(out, C.T_S), "y": column(out, C.VO2_ML_MIN), "mode": "markers",
                        "marker": {"symbol": palette.EXCLUDED_SYMBOL, "size": 7, "color": palette.EXCLUDED,
                                   "line": {"width": 1.5}},
                        "name": "Excluded breath", "text": [f"line {int(r)}, at {clock_text(s)}"
                                                             for r, s in zip(out["source_row"], out[C.T_S], strict=True)],
                        "hovertemplate": "excluded breath (%{text})<extra></extra>", "xaxis": xa, "yaxis": ya,
                    })
            for col, dash in ((C.VO2_ML_MIN, "solid"), (C.VCO2_ML_MIN, "solid")):
                b.line(i, t, column(frame, col), t, name=C.COLUMNS[col].label, colour=palette.SIGNAL[col],
                       unit="mL/min", dash=dash)
        elif key == "gas_work":
            w = column(frame, C.WORK_W)
            for col in (C.VO2_ML_MIN, C.VCO2_ML_MIN):
                if has(frame, col):
                    b.traces.append({
                        "type": "scatter", "x": w, "y": column(frame, col), "mode": "markers",
                        "marker": {"size": 4, "color": palette.SIGNAL[col]}, "name": C.COLUMNS[col].label,
                        "xaxis": xa, "yaxis": ya, "customdata": _point_ids(t),
                        "text": time_labels(t),
                        "hovertemplate": f"{C.COLUMNS[col].label} %{{y:.0f}} mL/min at %{{x:.0f}} W<br>at %{{text}}<extra></extra>",
                    })
            b.traces.extend(_reference_10_per_watt(frame, xa, ya))
            xaxis["title"] = {"text": "Work rate (W)"}
            yaxis["title"] = {"text": "mL/min"}
        elif key == "hr_pulse":
            b.line(i, t, column(frame, C.HR_BPM), t, name="Heart rate", colour=palette.SIGNAL[C.HR_BPM], unit="beats/min")
            yaxis["title"] = {"text": "beats/min"}
            if has(frame, O2_PULSE):
                y2 = f"y{extra_axis}"
                extra_axis += 1
                b.line(i, t, column(frame, O2_PULSE), t, name="O2 pulse", colour=palette.BLACK, unit="mL/beat",
                       digits=1, dash="dot", yaxis=y2)
                b.layout[_layout_name(y2)] = {"overlaying": ya, "side": "right", "anchor": xa, "showgrid": False,
                                             "tickmode": "auto", "nticks": 4, "tickformat": ".0f"}
        elif key == "vslope":
            _vslope_panel(b, i, frame, fit)
            xaxis["title"] = {"text": "VO2 (mL/min)"}
            yaxis["title"] = {"text": "VCO2 (mL/min)"}
            lo, hi = _square_range(frame)
            xaxis.update({"range": [lo, hi], "constrain": "domain", "nticks": 4})
            yaxis.update({"range": [lo, hi], "scaleanchor": xa, "scaleratio": 1, "constrain": "domain", "nticks": 4})
        elif key == "equivalents":
            for col, name, dash in ((VE_VO2, "VE/VO2", "solid"), (VE_VCO2, "VE/VCO2", "dash")):
                if has(frame, col):
                    b.line(i, t, column(frame, col), t, name=name, colour=palette.SIGNAL[col], unit="", digits=1, dash=dash)
        elif key == "end_tidal":
            for col, name, dash in ((C.PETO2_MMHG, "PETO2", "solid"), (C.PETCO2_MMHG, "PETCO2", "dashdot")):
                if has(frame, col):
                    b.line(i, t, column(frame, col), t, name=name, colour=palette.SIGNAL[col], unit="mmHg", digits=1,
                           dash=dash)
        elif key == "rer":
            b.line(i, t, column(frame, RER), t, name="RER", colour=palette.BLUISH_GREEN, unit="", digits=2)
            b.shapes.append({"type": "line", "xref": f"{xa} domain", "yref": ya, "x0": 0, "x1": 1, "y0": 1.0, "y1": 1.0,
                             "line": {"color": palette.GREY, "width": 1, "dash": "dot"}, "layer": "below"})
        elif key == "ve_vco2":
            b.line(i, column(frame, C.VCO2_ML_MIN), column(frame, C.VE_L_MIN), t, name="VE", colour=palette.SIGNAL[C.VE_L_MIN],
                   unit="L/min", markers=True)
            b.traces[-1]["mode"] = "markers"
            xaxis["title"] = {"text": "VCO2 (mL/min)"}
            yaxis["title"] = {"text": "VE (L/min)"}
        elif key == "vt_ve":
            b.line(i, column(frame, C.VE_L_MIN), column(frame, C.VT_L), t, name="Tidal volume", colour=palette.ORANGE,
                   unit="L", digits=2, markers=True)
            b.traces[-1]["mode"] = "markers"
            xaxis["title"] = {"text": "VE (L/min)"}
            yaxis["title"] = {"text": "Tidal volume (L)"}
        elif key == "spo2":
            b.line(i, t, column(frame, C.SPO2_PCT), t, name="SpO2", colour=palette.SIGNAL[C.SPO2_PCT], unit="%")

        # thresholds, phases and the highlighted span, on this panel's own axes
        if panel.over_time:
            b.shapes.extend(_remap(phases, xa, ya))
            b.shapes.extend(_remap(span_shapes(highlight), xa, ya))
            t_shapes, t_labels = threshold_shapes(thresholds, key="t_s")
            b.shapes.extend(_remap(t_shapes, xa, ya))
            if first_time_axis is None:
                b.annotations.extend(_remap(t_labels, xa, ya))
                first_time_axis = xa
            else:
                xaxis["matches"] = first_time_axis
            xaxis.update(ticks)
            if x_rng:
                xaxis["range"] = list(x_rng)
            y_rng = y_range_in_window(b.traces[n_before:], x_rng, axis=ya)
            if y_rng is not None:
                yaxis["range"] = y_rng
        else:
            tt = column(frame, C.T_S)
            for trace in list(b.traces[n_before:]):
                if trace.get("customdata") is not None and trace.get("yaxis") == ya:
                    b.traces.extend(
                        {**ring, "xaxis": xa, "yaxis": ya, "marker": {**ring["marker"], "size": 8}}
                        for ring in span_ring_trace(trace["x"], trace["y"], tt, highlight)
                    )
            if key == "vslope":
                t_shapes, _ = threshold_shapes(thresholds, key="vo2_ml_min")
                b.shapes.extend(_remap(t_shapes, xa, ya))
            elif key == "gas_work":
                t_shapes, _ = threshold_shapes(thresholds, key="vo2_ml_min")
                b.shapes.extend(_remap(t_shapes, xa, ya, transpose=True))
                b.traces.extend(_work_markers(thresholds, xa, ya))
            elif key == "ve_vco2":
                t_shapes, _ = threshold_shapes(_ve_picks(avg, thresholds), key="ve_l_min")
                b.shapes.extend(_remap(t_shapes, xa, ya, transpose=True))
            elif key == "vt_ve":
                t_shapes, _ = threshold_shapes(_ve_picks(avg, thresholds), key="ve_l_min")
                b.shapes.extend(_remap(t_shapes, xa, ya))
        b.annotations.append(_panel_title(panel, x_dom, y_dom))
        b.layout[_layout_name(xa)] = {**b.layout.get(_layout_name(xa), {}), **xaxis}
        b.layout[_layout_name(ya)] = {**b.layout.get(_layout_name(ya), {}), **yaxis}

    layout: dict[str, Any] = {
        "height": b.height,
        "margin": {"l": 48, "r": 44, "t": 6, "b": 6},
        "font": {"size": 11},
        "showlegend": False,
        "clickmode": "event+select",
        "hovermode": "closest",
        "meta": {"panels": keys},
        "shapes": b.shapes,
        "annotations": b.annotations,
        **b.layout,
    }
    for name, value in list(layout.items()):
        if name.startswith(("xaxis", "yaxis")) and isinstance(value, dict):
            value.setdefault("automargin", True)
            if isinstance(value.get("title"), dict):
                value["title"] = {**value["title"], "font": {"size": 10}, "standoff": 4}
    return build_figure(b.traces, layout)


def _panel_title(panel: Panel, x_dom: Sequence[float], y_dom: Sequence[float]) -> dict[str, Any]:
    return {"text": f"<b>{panel.title}</b>", "xref": "paper", "yref": "paper", "x": x_dom[0], "y": y_dom[1],
            "xanchor": "left", "yanchor": "bottom", "showarrow": False, "font": {"size": 11}}


def _square_range(frame: pd.DataFrame) -> tuple[float, float]:
    """One range for both V-slope axes (so equal steps are equal lengths and slope 1 is 45°)."""
    values = np.concatenate([column(frame, C.VO2_ML_MIN), column(frame, C.VCO2_ML_MIN)]) if len(frame) else np.zeros(0)
    values = values[np.isfinite(values)]
    if not values.size:
        return 0.0, 1.0
    lo, hi = float(values.min()), float(values.max())
    pad = 0.04 * (hi - lo if hi > lo else max(abs(hi), 1.0))
    return lo - pad, hi + pad


def _fit(fit: VSlopeFit | None, name: str) -> float | None:
    """A number of the V-slope fit by attribute name (``None`` without a fit or when not finite)."""
    if fit is None:
        return None
    v = float(getattr(fit, name))
    return v if np.isfinite(v) else None


def _vslope_panel(b: _Builder, i: int, frame: pd.DataFrame, fit: Any) -> None:
    """Averaged points, the analysis' two fitted lines, and a slope-1 reference line.

    The reference line has slope 1 (VCO2 rising as fast as VO2) and passes through the fit's
    break (or the first exercise point without a fit): the points bending above it show the
    extra CO2 of buffering (Beaver et al. 1986).
    """
    xa, ya = axis_ids(i)
    x, y, t = column(frame, C.VO2_ML_MIN), column(frame, C.VCO2_ML_MIN), column(frame, C.T_S)
    b.line(i, x, y, t, name="VCO2", colour=palette.SIGNAL[C.VCO2_ML_MIN], unit="mL/min", markers=True)
    b.traces[-1]["mode"] = "markers"
    b.traces[-1]["hovertemplate"] = "VO2 %{x:.0f}, VCO2 %{y:.0f} mL/min<br>at %{text}<extra></extra>"
    finite = np.isfinite(x) & np.isfinite(y)
    if not finite.any():
        return
    lo, hi = _square_range(frame)
    brk = _fit(fit, "vo2_break_ml_min")
    s1, i1 = _fit(fit, "slope_below"), _fit(fit, "intercept_below")
    s2, i2 = _fit(fit, "slope_above"), _fit(fit, "intercept_above")
    if brk is not None and s1 is not None and i1 is not None:
        anchor = (brk, s1 * brk + i1)
        x_min, x_max = float(x[finite].min()), float(x[finite].max())
        segments = [(x_min, brk, s1, i1, "solid")]
        if s2 is not None and i2 is not None:
            segments.append((brk, x_max, s2, i2, "dashdot"))
        for a, z, slope, icpt, dash in segments:
            b.traces.append({"type": "scatter", "x": [a, z], "y": [slope * a + icpt, slope * z + icpt], "mode": "lines",
                             "line": {"color": palette.BLACK, "width": 1.4, "dash": dash}, "hoverinfo": "skip",
                             "name": f"fitted slope {slope:.2f}", "xaxis": xa, "yaxis": ya})
    else:
        j = int(np.flatnonzero(finite)[0])
        anchor = (float(x[j]), float(y[j]))
    offset = anchor[1] - anchor[0]
    b.traces.append({"type": "scatter", "x": [lo, hi], "y": [lo + offset, hi + offset], "mode": "lines",
                     "line": {"color": palette.GREY, "width": 1, "dash": "dot"}, "hoverinfo": "skip",
                     "name": "slope 1", "xaxis": xa, "yaxis": ya})


def _reference_10_per_watt(frame: pd.DataFrame, xa: str, ya: str) -> list[dict]:
    """The 10 mL/min/W line from the VO2 at the lowest work rate of the exercise rows."""
    sub = frame[[C.WORK_W, C.VO2_ML_MIN]].dropna()
    sub = sub[sub[C.WORK_W] > 0]
    if len(sub) < 2:
        return []
    w = sub[C.WORK_W].to_numpy(dtype=float)
    w0, w1 = float(w.min()), float(w.max())
    v0 = float(sub[C.VO2_ML_MIN].to_numpy(dtype=float)[w == w0].mean())
    return [{"type": "scatter", "x": [w0, w1], "y": [v0, v0 + VO2_PER_WATT_ML_MIN_W * (w1 - w0)], "mode": "lines",
             "line": {"color": palette.GREY, "width": 1, "dash": "dot"}, "hoverinfo": "skip",
             "name": "10 mL/min per W", "xaxis": xa, "yaxis": ya}]


def _work_markers(thresholds: Mapping[str, Any], xa: str, ya: str) -> list[dict]:
    """VT1/VT2 as a marker at (work rate read at the threshold, VO2 of the threshold)."""
    out = []
    for kind, pick in thresholds.items():
        if not isinstance(pick, ThresholdResult) or not pick.determinable:  # a method's pick has no work rate
            continue
        w, v = pick.work_w, pick.vo2_ml_min
        if w is None or not np.isfinite(w) or not np.isfinite(v):
            continue
        style = palette.THRESHOLD.get(kind, palette.THRESHOLD["vt1"])
        out.append({"type": "scatter", "x": [float(w)], "y": [float(v)], "mode": "markers",
                    "marker": {"symbol": "diamond", "size": 9, "color": style["color"],
                               "line": {"width": 1, "color": palette.BLACK}},
                    "name": f"{kind.upper()} marker", "hovertemplate": f"{kind.upper()} %{{y:.0f}} mL/min at %{{x:.0f}} W<extra></extra>",
                    "xaxis": xa, "yaxis": ya})
    return out


def overview_from_results(results: TestResults, session: Session | None = None, **kwargs: Any) -> go.Figure:
    """:func:`overview_figure` for a :class:`analysis.results.TestResults` (and its session)."""
    from dashboard.charts._common import shown_thresholds

    report = results.thresholds
    shown = shown_thresholds(report)
    picks = {"vt1": results.vt1 if results.vt1 is not None else shown.get("vt1"),
             "vt2": results.vt2 if results.vt2 is not None else shown.get("vt2")}
    return overview_figure(
        results.averaged,
        thresholds=picks,
        fit=report.vslope,
        breaths=session.breaths if session is not None else None,
        excluded_rows=[e.source_row for e in results.excluded_breaths],
        **kwargs,
    )


__all__ = [
    "PANELS",
    "VO2_PER_WATT_ML_MIN_W",
    "axis_ids",
    "grid_columns",
    "grid_panels",
    "overview_figure",
    "overview_from_results",
    "time_axis",
    "time_labels",
]
