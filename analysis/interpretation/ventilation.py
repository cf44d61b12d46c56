"""Ventilatory limitation: breathing reserve, breathing frequency at peak, tidal volume against VE."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.indices.breathing_reserve import BreathingReserve
from analysis.interpretation.flags import Flag, flag
from analysis.records import described

#: A breathing reserve below this share of MVV is low (ATS/ACCP 2003, from memory).
RESERVE_LOW_PCT = 15.0
#: A breathing reserve below this is low, L/min (ATS/ACCP 2003, from memory).
RESERVE_LOW_L_MIN = 11.0
#: Window of the end-of-exercise means, s.
END_WINDOW_S = 30.0
#: Tidal volume counts as levelled off once it reaches this share of its highest 30-s mean.
VT_PLATEAU_SHARE = 0.95

VENTILATION_METHOD = (
    f"breathing reserve MVV - peak VE (MVV measured or FEV1 × 40), low when < {RESERVE_LOW_PCT:g} % of MVV or < "
    f"{RESERVE_LOW_L_MIN:g} L/min (ATS/ACCP 2003, from memory); breathing frequency and tidal volume as 30-s means at "
    f"the end of exercise; VE where the tidal volume first reached {VT_PLATEAU_SHARE:.0%} of its highest 30-s mean"
)


@dataclass(frozen=True)
class Ventilation:
    """What limits ventilation: reserve, breathing pattern at peak, tidal volume against VE."""

    reserve_l_min: float | None = described(unit="L/min", description="MVV - peak VE (null without MVV or FEV1)")
    reserve_pct: float | None = described(unit="%", description="breathing reserve as % of MVV")
    mvv_l_min: float | None = described(unit="L/min", description="MVV used")
    mvv_source: str | None = described(description="`measured` or `fev1_x40`")
    rf_peak_bpm: float | None = described(unit="breaths/min", description="breathing frequency, last 30 s of exercise")
    vt_peak_l: float | None = described(unit="L", description="tidal volume, last 30 s of exercise")
    vt_max_l: float | None = described(unit="L", description="highest 30-s mean tidal volume during exercise")
    ve_at_vt_plateau_l_min: float | None = described(
        unit="L/min", description=f"VE where the tidal volume first reached {VT_PLATEAU_SHARE:.0%} of `vt_max_l`"
    )


def _end_mean(t_s: np.ndarray, values: np.ndarray | None) -> float | None:
    """Mean of the finite ``values`` of the last :data:`END_WINDOW_S` of ``t_s``."""
    if values is None or not t_s.size:
        return None
    v = values[t_s >= t_s.max() - END_WINDOW_S]
    v = v[np.isfinite(v)]
    return float(v.mean()) if v.size else None


def ventilation(avg: pd.DataFrame, *, phases_avg: np.ndarray, reserve: BreathingReserve | None) -> Ventilation:
    """Breathing reserve, end-exercise breathing pattern and the VE at which VT levels off.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data (canonical columns).
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    reserve : BreathingReserve or None, keyword-only
        From :func:`analysis.indices.breathing_reserve.breathing_reserve`.

    Returns
    -------
    Ventilation

    References
    ----------
    ATS/ACCP Statement on cardiopulmonary exercise testing. Am J Respir Crit Care Med
    2003;167:211-277 (from memory).
    """
    ex = phases_avg == "exercise"
    t = avg[C.T_S].to_numpy(dtype=float)[ex]
    rf = avg[C.RF_BPM].to_numpy(dtype=float)[ex] if C.RF_BPM in avg else None
    vt = avg[C.VT_L].to_numpy(dtype=float)[ex] if C.VT_L in avg else None
    vt_max = ve_at = None
    if vt is not None and t.size:
        ve = avg[C.VE_L_MIN].to_numpy(dtype=float)[ex]
        smooth = pd.Series(vt, index=pd.to_datetime(t, unit="s")).rolling(f"{END_WINDOW_S:g}s", center=True, min_periods=1).mean()
        s = smooth.to_numpy(dtype=float)
        if np.isfinite(s).any():
            vt_max = float(np.nanmax(s))
            first = int(np.flatnonzero(s >= VT_PLATEAU_SHARE * vt_max)[0])
            ve_at = float(ve[first]) if np.isfinite(ve[first]) else None
    return Ventilation(
        reserve_l_min=reserve.reserve_l_min if reserve else None,
        reserve_pct=reserve.reserve_pct if reserve else None,
        mvv_l_min=reserve.mvv_l_min if reserve else None,
        mvv_source=reserve.mvv_source if reserve else None,
        rf_peak_bpm=_end_mean(t, rf),
        vt_peak_l=_end_mean(t, vt),
        vt_max_l=vt_max,
        ve_at_vt_plateau_l_min=ve_at,
    )


def breathing_reserve_flag(vent: Ventilation) -> Flag | None:
    """``breathing_reserve_low`` when the reserve is < 15 % of MVV or < 11 L/min."""
    if vent.reserve_pct is None or vent.reserve_l_min is None:
        return None
    if vent.reserve_pct >= RESERVE_LOW_PCT and vent.reserve_l_min >= RESERVE_LOW_L_MIN:
        return None
    mvv = "measured MVV" if vent.mvv_source == "measured" else "MVV estimated as FEV1 × 40"
    return flag(
        "breathing_reserve_low", severity="abnormal",
        text=f"Breathing reserve {vent.reserve_l_min:.0f} L/min ({vent.reserve_pct:.0f} % of the {mvv}, {vent.mvv_l_min:.0f} L/min).",
        value=vent.reserve_pct, unit="% of MVV",
        limit=f"< {RESERVE_LOW_PCT:g} % of MVV or < {RESERVE_LOW_L_MIN:g} L/min", source="ATS/ACCP 2003 (from memory)",
    )
