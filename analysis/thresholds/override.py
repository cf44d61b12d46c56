"""A reviewer's own VT1 / VT2: set by time or VO2, cleared to go back to the automatic value."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import replace
from typing import Any, Literal

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter, require
from analysis.thresholds.results import ThresholdPick, ThresholdReport

_KINDS = ("vt1", "vt2")


def _number(name: str, value: Any) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InvalidParameter(name, "a number", value) from None
    require(math.isfinite(x), name, "a finite number", value)
    return x


def _nearest_row(avg: pd.DataFrame, *, t_s: float | None, vo2_ml_min: float | None) -> int:
    """Row of ``avg`` nearest the given time, or (first in time) nearest the given VO2."""
    for c in (C.T_S, C.VO2_ML_MIN):
        if c not in avg.columns:
            raise InvalidParameter("avg", f"an averaged frame with a '{c}' column", list(avg.columns))
    t = avg[C.T_S].to_numpy(dtype=float)
    vo2 = avg[C.VO2_ML_MIN].to_numpy(dtype=float)
    if t.size == 0 or not np.isfinite(t).any():
        raise InvalidParameter("avg", "an averaged frame with at least one row", "an empty frame")
    if t_s is not None:
        lo, hi = float(np.nanmin(t)), float(np.nanmax(t))
        require(lo <= t_s <= hi, "t_s", f"a time within the test ({lo:.0f}-{hi:.0f} s)", t_s)
        return int(np.nanargmin(np.abs(t - t_s)))
    assert vo2_ml_min is not None
    if not np.isfinite(vo2).any():
        raise InvalidParameter("avg", "averaged VO2 values", "no VO2 values")
    lo, hi = float(np.nanmin(vo2)), float(np.nanmax(vo2))
    require(lo <= vo2_ml_min <= hi, "vo2_ml_min", f"a VO2 within this test ({lo:.0f}-{hi:.0f} mL/min)", vo2_ml_min)
    if C.PHASE in avg.columns:  # prefer exercise rows: recovery passes through the same VO2
        ex = avg[C.PHASE].astype(str).to_numpy() == "exercise"
        if ex.any() and lo <= vo2_ml_min <= float(np.nanmax(np.where(ex, vo2, np.nan))):
            d = np.where(ex, np.abs(vo2 - vo2_ml_min), np.inf)
            return int(np.nanargmin(d))
    return int(np.nanargmin(np.abs(vo2 - vo2_ml_min)))


def override_threshold(
    report: ThresholdReport,
    avg: pd.DataFrame,
    *,
    kind: Literal["vt1", "vt2"],
    t_s: float | None = None,
    vo2_ml_min: float | None = None,
    reason: str = "",
) -> ThresholdReport:
    """Set VT1 or VT2 by hand, at a time or at a VO2 (the nearest averaged row is used).

    Parameters
    ----------
    report : ThresholdReport
        From :func:`detect_thresholds` (not changed).
    avg : pandas.DataFrame
        The averaged frame the report was made from.
    kind : {"vt1", "vt2"}
    t_s : float, optional
        Time of the threshold, s; must lie within the test.
    vo2_ml_min : float, optional
        VO2 at the threshold, mL/min; must lie within the test's range. Give exactly one of
        ``t_s`` and ``vo2_ml_min``.
    reason : str
        The reviewer's reason, kept in the note.

    Returns
    -------
    ThresholdReport
        A new report whose ``vt1`` / ``vt2`` is the manual pick (``source="manual"``,
        ``method="manual"``); the automatic value stays in ``vt1_auto`` / ``vt2_auto``.
    """
    require(isinstance(report, ThresholdReport), "report", "a ThresholdReport", type(report).__name__)
    require(kind in _KINDS, "kind", "'vt1' or 'vt2'", kind)
    require((t_s is None) != (vo2_ml_min is None), "t_s / vo2_ml_min", "exactly one of the two", (t_s, vo2_ml_min))
    t_val = _number("t_s", t_s) if t_s is not None else None
    v_val = _number("vo2_ml_min", vo2_ml_min) if vo2_ml_min is not None else None
    i = _nearest_row(avg, t_s=t_val, vo2_ml_min=v_val)
    row = avg.iloc[i]
    t_row = float(row[C.T_S])
    vo2_row = float(row[C.VO2_ML_MIN])
    how = f"at {t_val:.0f} s" if t_val is not None else f"at VO2 {v_val:.0f} mL/min"
    note = f"set by the reviewer {how} (nearest averaged point: {t_row:.0f} s, VO2 {vo2_row:.0f} mL/min)"
    if reason.strip():
        note += f": {reason.strip()}"
    other = report.vt2 if kind == "vt1" else report.vt1
    if other is not None and ((kind == "vt1" and vo2_row >= other.vo2_ml_min) or (kind == "vt2" and vo2_row <= other.vo2_ml_min)):
        note += f" — check: this is {'at or above VT2' if kind == 'vt1' else 'at or below VT1'}"
    pick = ThresholdPick(kind, t_row, vo2_row, "manual", "manual", "high", note, i)
    return _with_pick(report, kind, pick)


def clear_override(report: ThresholdReport, *, kind: Literal["vt1", "vt2"]) -> ThresholdReport:
    """Go back to the automatic VT1 / VT2 (a new report; the input is not changed)."""
    require(isinstance(report, ThresholdReport), "report", "a ThresholdReport", type(report).__name__)
    require(kind in _KINDS, "kind", "'vt1' or 'vt2'", kind)
    auto = report.vt1_auto if kind == "vt1" else report.vt2_auto
    return _with_pick(report, kind, auto)


def _with_pick(report: ThresholdReport, kind: Literal["vt1", "vt2"], pick: ThresholdPick | None) -> ThresholdReport:
    """A copy of ``report`` with ``pick`` as its VT1 or VT2 (containers copied, not shared)."""
    agreement, reasons = dict(report.agreement), list(report.reasons)
    if kind == "vt1":
        return replace(report, vt1=pick, agreement=agreement, reasons=reasons)
    return replace(report, vt2=pick, agreement=agreement, reasons=reasons)


def pick_from_chart_point(
    point: Mapping[str, Any],
    *,
    chart: Literal["vslope", "time"],
    avg: pd.DataFrame,
) -> dict[str, Any]:
    """Turn a clicked or selected chart point into the time and VO2 for :func:`override_threshold`.

    Parameters
    ----------
    point : mapping
        One plotly point as the dashboard receives it: keys ``"x"``, ``"y"``, optionally
        ``"point_index"`` and ``"customdata"``. Charts should put the row's ``t_s`` first in
        ``customdata``; that is trusted first. Otherwise ``x`` is the time (``chart="time"``)
        or the VO2 (``chart="vslope"``, where x is VO2 and y is VCO2).
    chart : {"vslope", "time"}
    avg : pandas.DataFrame
        The averaged frame behind the chart.

    Returns
    -------
    dict
        ``{"t_s": float, "vo2_ml_min": float, "index": int}`` of the nearest averaged row.
    """
    require(chart in ("vslope", "time"), "chart", "'vslope' or 'time'", chart)
    require(isinstance(point, Mapping), "point", "a chart point (mapping with 'x' and 'y')", point)
    custom = point.get("customdata")
    t_val: float | None = None
    v_val: float | None = None
    if custom is not None:
        first = custom[0] if isinstance(custom, (list, tuple, np.ndarray)) and len(custom) else custom
        if not isinstance(custom, (list, tuple, np.ndarray)) or len(custom):
            t_val = _number("customdata", first)
    if t_val is None:
        if "x" not in point:
            raise InvalidParameter("point", "a chart point with an 'x' value or customdata", dict(point))
        x = _number("x", point["x"])
        if chart == "time":
            t_val = x
        else:
            v_val = x
    i = _nearest_row(avg, t_s=t_val, vo2_ml_min=v_val)
    return {"t_s": float(avg[C.T_S].iloc[i]), "vo2_ml_min": float(avg[C.VO2_ML_MIN].iloc[i]), "index": i}
