"""Values read at VT1 and VT2: the step that turns a threshold pick into its result record."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import require
from analysis.records import described
from analysis.thresholds.results import ThresholdPick


@dataclass(frozen=True)
class ThresholdResult:
    """VT1 or VT2 as reported: how it was placed, and the values read at it.

    Time, VO2 and the method fields (``method`` ... ``reason``) are the threshold pick's own
    (:class:`analysis.thresholds.ThresholdPick`: the consensus of the agreeing methods, or the
    reviewer's placement), carried unchanged; heart rate, load, VE and RER are read at that
    time from 30-s means of the averaged data (:func:`threshold_values`).
    """

    kind: Literal["vt1", "vt2"] = described(description="`vt1` (gas-exchange threshold) or `vt2` (respiratory compensation point)")
    t_s: float = described(unit="s", key="time_s", description="time of the threshold (the method's estimate)")
    vo2_ml_min: float = described(
        unit="mL/min", description="O2 uptake at the threshold: the method's estimate (consensus or the reviewer's)"
    )
    vo2_ml_kg_min: float | None = described(unit="mL/kg/min", description="`vo2_ml_min` per kg body mass (null without body mass)")
    pct_vo2_peak: float | None = described(unit="%", description="`vo2_ml_min` as % of `vo2_peak_ml_min`")
    hr_bpm: float | None = described(unit="beats/min", description="heart rate: 30-s mean at the threshold's time")
    work_w: float | None = described(unit="W", description="work rate: 30-s mean at the threshold's time (cycle)")
    speed_kmh: float | None = described(unit="km/h", description="treadmill speed: 30-s mean at the threshold's time")
    grade_pct: float | None = described(unit="%", description="treadmill grade: 30-s mean at the threshold's time")
    rer: float | None = described(description="respiratory exchange ratio: ratio of the 30-s means of VCO2 and VO2 at the threshold's time")
    ve_l_min: float | None = described(unit="L/min", description="minute ventilation: 30-s mean at the threshold's time")
    method: str = described(description="`consensus`, a single method's name, or `manual`")
    source: Literal["auto", "manual"] = described(description="`auto` (detected) or `manual` (placed by the reviewer)")
    confidence: Literal["high", "moderate", "low"] = described(
        description="`high` (3 or more agreeing methods, or the reviewer's pick), `moderate` (2, or one "
        "method's own pick), `low` (1)"
    )
    note: str = described(description="which methods agreed, or the reviewer's placement and reason")
    index: int = described(description="row of the averaged data nearest the threshold")
    ci90_vo2_ml_min: tuple[float, float] | None = described(
        default=None, unit="mL/min", description="90 % interval of the threshold's VO2 (null when not estimated)"
    )
    ci90_t_s: tuple[float, float] | None = described(
        default=None, unit="s", description="90 % interval of the threshold's time (null when not estimated)"
    )
    determinable: bool = described(
        default=True, description="false when the interval is too wide for the threshold to be read"
    )
    reason: str = described(default="", description="why the threshold is not determinable (empty otherwise)")
    notes: tuple[str, ...] = described(
        default=(), description="notes on how the values were read (e.g. a typed time moved to a data point)"
    )


#: Width of the centred window over which HR, work rate, speed, grade, VE and RER are read at a
#: threshold's time (common practice: values read from 30-s means, not a single averaged row).
READ_WINDOW_S = 30.0

def _window_weights(t: np.ndarray, centre_s: float, window_s: float) -> np.ndarray:
    """Seconds of each averaged row inside the window ``centre_s ± window_s / 2``.

    Each row stands for the time from halfway after the row before it to halfway before the
    row after it (the first and last rows reach out by half the neighbouring spacing), so the
    weights of a window wholly inside the data add up to ``window_s``.
    """
    if t.size == 1:
        return np.ones(1)
    mid = (t[1:] + t[:-1]) / 2.0
    lo = np.concatenate(([t[0] - (t[1] - t[0]) / 2.0], mid))
    hi = np.concatenate((mid, [t[-1] + (t[-1] - t[-2]) / 2.0]))
    return np.clip(np.minimum(hi, centre_s + window_s / 2.0) - np.maximum(lo, centre_s - window_s / 2.0), 0.0, None)


def _window_mean(avg: pd.DataFrame, column: str, weights: np.ndarray) -> float | None:
    if column not in avg.columns:
        return None
    values = avg[column].to_numpy(dtype=float)
    ok = np.isfinite(values) & (weights > 0)
    return float(np.average(values[ok], weights=weights[ok])) if ok.any() else None


def _snap_note(pick: ThresholdPick, *, typed_t_s: float | None, typed_vo2_ml_min: float | None) -> tuple[str, ...]:
    if pick.source != "manual":
        return ()
    if typed_t_s is not None and abs(typed_t_s - pick.t_s) >= 0.5:
        return (
            f"The typed time {typed_t_s:.0f} s was placed at the nearest averaged point, {pick.t_s:.0f} s "
            f"(VO2 {pick.vo2_ml_min:.0f} mL/min).",
        )
    if typed_vo2_ml_min is not None and abs(typed_vo2_ml_min - pick.vo2_ml_min) >= 0.5:
        return (
            f"The typed VO2 {typed_vo2_ml_min:.0f} mL/min was placed at the nearest averaged point: "
            f"{pick.vo2_ml_min:.0f} mL/min at {pick.t_s:.0f} s.",
        )
    return ()


def threshold_values(
    avg: pd.DataFrame,
    pick: ThresholdPick | None,
    *,
    vo2_peak_ml_min: float | None,
    body_mass_kg: float | None,
    typed_t_s: float | None = None,
    typed_vo2_ml_min: float | None = None,
    window_s: float = READ_WINDOW_S,
) -> ThresholdResult | None:
    """The result record of one threshold: the method's estimate with the values read at its time.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (canonical columns, sorted by time).
    pick : ThresholdPick or None
        The threshold in use (consensus or the reviewer's); ``None`` gives ``None``.
    vo2_peak_ml_min, body_mass_kg : float or None, keyword-only
        For ``pct_vo2_peak`` and ``vo2_ml_kg_min``.
    typed_t_s, typed_vo2_ml_min : float or None, keyword-only
        What the reviewer typed for a manual threshold; when the pick was moved to the nearest
        averaged point, the record's ``notes`` say so.
    window_s : float, keyword-only
        Width of the centred window the other values are read from (default 30 s).

    Returns
    -------
    ThresholdResult or None
        ``t_s`` and ``vo2_ml_min`` are the pick's own (the consensus of the agreeing methods, or
        the reviewer's placement), so every place that shows the threshold shows one value. HR,
        work rate, speed, grade and VE are their ``window_s`` means centred on that time (each
        averaged row weighted by the seconds it covers inside the window), and RER the ratio of
        the window means of VCO2 and VO2.

    Raises
    ------
    InvalidParameter
        ``window_s`` outside 10-120 s.

    Notes
    -----
    Reading the other values from a single averaged row would carry that row's noise; a 30-s
    window is the usual smoothing for values reported at a point of a ramp (common practice).
    """
    require(math.isfinite(window_s) and 10.0 <= window_s <= 120.0, "window_s", "a window of 10-120 s", window_s)
    if pick is None:
        return None
    mask = _window_weights(avg[C.T_S].to_numpy(dtype=float), float(pick.t_s), window_s)
    vo2_w, vco2_w = _window_mean(avg, C.VO2_ML_MIN, mask), _window_mean(avg, C.VCO2_ML_MIN, mask)
    vo2 = float(pick.vo2_ml_min)
    return ThresholdResult(
        kind=pick.kind,
        t_s=float(pick.t_s),
        vo2_ml_min=vo2,
        method=pick.method,
        source=pick.source,
        confidence=pick.confidence,
        note=pick.note,
        index=int(pick.index),
        ci90_vo2_ml_min=pick.ci90_vo2_ml_min,
        ci90_t_s=pick.ci90_t_s,
        determinable=pick.determinable,
        reason=pick.reason,
        hr_bpm=_window_mean(avg, C.HR_BPM, mask),
        work_w=_window_mean(avg, C.WORK_W, mask),
        speed_kmh=_window_mean(avg, C.SPEED_KMH, mask),
        grade_pct=_window_mean(avg, C.GRADE_PCT, mask),
        ve_l_min=_window_mean(avg, C.VE_L_MIN, mask),
        vo2_ml_kg_min=vo2 / body_mass_kg if body_mass_kg else None,
        pct_vo2_peak=100.0 * vo2 / vo2_peak_ml_min if vo2_peak_ml_min else None,
        rer=vco2_w / vo2_w if vo2_w is not None and vco2_w is not None and vo2_w > 0 else None,
        notes=_snap_note(pick, typed_t_s=typed_t_s, typed_vo2_ml_min=typed_vo2_ml_min),
    )
