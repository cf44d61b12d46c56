"""The printed report's charts as static SVG (our own writer, :mod:`dashboard.report.svg_chart`).

Four small charts in a 2 × 2 grid: gas exchange over time (VO2, VCO2, work rate), V-slope
(square, with the slope-1 reference line and the two fitted lines), ventilatory equivalents
(with end-tidal pressures on a right axis when the test has them) and heart rate with O2 pulse.
VT1 and VT2 are drawn on each (a shaded band when the threshold carries an interval). Times are
m:ss. Values come from the analysis' averaged frame and results; nothing is computed here but
plotting ratios of columns (VE/VO2 = VE ÷ VO2, the definition).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from analysis.indices.threshold_values import ThresholdResult
from analysis.results import TestResults
from dashboard import palette
from dashboard.report.svg_chart import Chart, Series, VLine, thin
from dashboard.timefmt import clock_text, clock_ticks

#: Size of one chart in the grid (px at 96 px/inch: 88 mm × 49 mm).
CHART_W = 333.0
CHART_H = 184.0


def _col(frame: pd.DataFrame, name: str) -> np.ndarray | None:
    if name not in frame.columns:
        return None
    values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
    return values if np.isfinite(values).any() else None


def _threshold_lines(results: TestResults, *, axis: str) -> list[VLine]:
    """VT1/VT2 as vertical lines at their time (``axis="t"``) or VO2 (``axis="vo2"``)."""
    out = []
    picks: tuple[tuple[str, str, ThresholdResult | None], ...] = (("vt1", "VT1", results.vt1), ("vt2", "VT2", results.vt2))
    for kind, label, t in picks:
        if t is None:
            continue
        value = t.t_s if axis == "t" else t.vo2_ml_min
        if not np.isfinite(value):
            continue
        band = t.ci90_t_s if axis == "t" else t.ci90_vo2_ml_min
        band_t = (float(band[0]), float(band[1])) if band is not None else None
        style = palette.THRESHOLD[kind]
        out.append(VLine(float(value), label, style["color"], dash="4 2" if kind == "vt1" else "1.5 1.5", band=band_t))
    return out


def _time_axis(t: np.ndarray) -> tuple[tuple[float, float], tuple[list[float], list[str]]]:
    lo, hi = float(np.nanmin(t)), float(np.nanmax(t))
    return (lo, hi), clock_ticks(lo, hi)


def gas_exchange_chart(avg: pd.DataFrame, results: TestResults) -> Chart | None:
    t = _col(avg, "t_s")
    vo2, vco2 = _col(avg, "vo2_ml_min"), _col(avg, "vco2_ml_min")
    if t is None or vo2 is None:
        return None
    xr, ticks = _time_axis(t)
    work = _col(avg, "work_w")
    chart = Chart(CHART_W, CHART_H, "Gas exchange over time", "time (m:ss)", "VO2, VCO2 (mL/min)",
                  y2_label="work rate (W)" if work is not None else None, x_range=xr, x_ticks=ticks)
    chart.add(Series(*thin(t, vo2), "VO2", palette.SIGNAL["vo2_ml_min"]))
    if vco2 is not None:
        chart.add(Series(*thin(t, vco2), "VCO2", palette.SIGNAL["vco2_ml_min"]))
    if work is not None:
        chart.add(Series(*thin(t, work), "work rate", palette.GREY, axis="right", dash="3 2", width=1.0))
    chart.vlines = _threshold_lines(results, axis="t")
    return chart


def vslope_chart(avg: pd.DataFrame, results: TestResults) -> Chart | None:
    vo2, vco2 = _col(avg, "vo2_ml_min"), _col(avg, "vco2_ml_min")
    if vo2 is None or vco2 is None:
        return None
    phase = avg["phase"].astype(str).str.lower().to_numpy() if "phase" in avg.columns else None
    if phase is not None and (phase == "exercise").any():
        keep = phase == "exercise"
        vo2, vco2 = vo2[keep], vco2[keep]
    lo = float(np.nanmin(np.concatenate([vo2, vco2])))
    hi = float(np.nanmax(np.concatenate([vo2, vco2])))
    pad = 0.03 * (hi - lo)
    rng = (max(0.0, lo - pad), hi + pad)
    chart = Chart(CHART_W, CHART_H, "V-slope: VCO2 against VO2", "VO2 (mL/min)", "VCO2 (mL/min)",
                  x_range=rng, y_range=rng, square=True)
    chart.add(Series(vo2, vco2, "averaged points", palette.SIGNAL["vco2_ml_min"], kind="dots"))
    fit = results.thresholds.vslope
    if fit is not None and fit.valid:
        b = float(fit.vo2_break_ml_min)
        x_lo = float(fit.vo2_min_ml_min) if np.isfinite(fit.vo2_min_ml_min) and fit.vo2_min_ml_min else rng[0]
        x_hi = float(fit.vo2_max_ml_min) if np.isfinite(fit.vo2_max_ml_min) and fit.vo2_max_ml_min else rng[1]
        below = np.array([x_lo, b])
        above = np.array([b, x_hi])
        chart.add(Series(below, fit.slope_below * below + fit.intercept_below, "fit below", palette.BLACK, width=1.1))
        chart.add(Series(above, fit.slope_above * above + fit.intercept_above, "fit above", palette.BLACK,
                         dash="3 2", width=1.1))
    # slope-1 reference through the lower end (Beaver 1986: the lower segment runs close to slope 1)
    chart.refs.append((rng[0], rng[0], rng[1], rng[1], "slope 1", palette.GREY))
    chart.vlines = _threshold_lines(results, axis="vo2")
    return chart


def equivalents_chart(avg: pd.DataFrame, results: TestResults) -> Chart | None:
    # the ventilatory equivalents are series of the analysis (analysis.breaths.derived)
    t, ve_vo2, ve_vco2 = _col(avg, "t_s"), _col(avg, "ve_vo2"), _col(avg, "ve_vco2")
    if t is None or ve_vo2 is None or ve_vco2 is None:
        return None
    xr, ticks = _time_axis(t)
    peto2, petco2 = _col(avg, "peto2_mmhg"), _col(avg, "petco2_mmhg")
    end_tidal = peto2 is not None or petco2 is not None
    chart = Chart(CHART_W, CHART_H, "Ventilatory equivalents" + (" and end-tidal pressures" if end_tidal else ""),
                  "time (m:ss)", "VE/VO2, VE/VCO2", y2_label="PETO2, PETCO2 (mmHg)" if end_tidal else None,
                  x_range=xr, x_ticks=ticks)
    chart.add(Series(*thin(t, ve_vo2), "VE/VO2", palette.SIGNAL["ve_vo2"]))
    chart.add(Series(*thin(t, ve_vco2), "VE/VCO2", palette.SIGNAL["ve_vco2"]))
    if peto2 is not None:
        chart.add(Series(*thin(t, peto2), "PETO2", palette.SIGNAL["peto2_mmhg"], axis="right", dash="3 2", width=1.0))
    if petco2 is not None:
        chart.add(Series(*thin(t, petco2), "PETCO2", palette.SIGNAL["petco2_mmhg"], axis="right", dash="3 2", width=1.0))
    chart.vlines = _threshold_lines(results, axis="t")
    return chart


def heart_rate_chart(avg: pd.DataFrame, results: TestResults) -> Chart | None:
    t, hr = _col(avg, "t_s"), _col(avg, "hr_bpm")
    if t is None or hr is None:
        return None
    xr, ticks = _time_axis(t)
    pulse = _col(avg, "o2_pulse_ml_beat")  # computed by the analysis (analysis.breaths.derived)
    chart = Chart(CHART_W, CHART_H, "Heart rate and O2 pulse", "time (m:ss)", "heart rate (beats/min)",
                  y2_label="O2 pulse (mL/beat)" if pulse is not None else None, x_range=xr, x_ticks=ticks)
    chart.add(Series(*thin(t, hr), "heart rate", palette.SIGNAL["hr_bpm"]))
    if pulse is not None:
        chart.add(Series(*thin(t, pulse), "O2 pulse", palette.BLUISH_GREEN, axis="right", dash="3 2", width=1.0))
    chart.vlines = _threshold_lines(results, axis="t")
    return chart


def report_charts(results: TestResults) -> list[tuple[str, str]]:
    """``(title, svg)`` of every chart this test's data allow, in grid order (from ``results.averaged``)."""
    avg = results.averaged
    if not len(avg):
        return []
    out = []
    for make in (gas_exchange_chart, vslope_chart, equivalents_chart, heart_rate_chart):
        chart = make(avg, results)
        if chart is not None and chart.series:
            out.append((chart.title, chart.svg()))
    return out


__all__ = ["report_charts", "clock_text"]
