"""Work rate and speed at the thresholds corrected for the lag of VO2 behind a ramp."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.records import described

#: Shortest and longest mean response time accepted from a fit, s; outside it the fit is not
#: trusted (healthy adults about 30–45 s, patients longer; common practice).
MRT_RANGE_S: tuple[float, float] = (5.0, 150.0)
#: Share of successive averaged rows whose load must rise for the protocol to count as a ramp.
RAMP_RISING_SHARE = 0.8

LAG_METHOD = (
    "steady-state equivalent on a ramp = load - ramp rate × mean response time (Whipp et al. 1981); the mean "
    "response time is where the line of VO2 on time (from 1 min into the ramp to VT1) meets the VO2 of the minute "
    "before the ramp"
)


@dataclass(frozen=True)
class LagCorrection:
    """The ramp, its VO2 mean response time and the lag-corrected loads at the thresholds."""

    load: str = described(description="`work_w` (cycle) or `speed_kmh` (treadmill)")
    ramp_rate_per_min: float = described(description="rise of the load per minute (W/min or km/h per min)")
    mean_response_time_s: float = described(unit="s", description="time by which VO2 lags the ramp", method="Whipp et al. 1981")
    vt1_raw: float | None = described(description="load at VT1 as recorded (W or km/h)")
    vt1_corrected: float | None = described(description="steady-state equivalent load at VT1")
    vt2_raw: float | None = described(description="load at VT2 as recorded")
    vt2_corrected: float | None = described(description="steady-state equivalent load at VT2")


def lag_corrected_load(load: float, *, ramp_rate_per_min: float, mean_response_time_s: float) -> float:
    """``load - ramp_rate × MRT``: the constant load whose steady VO2 equals the ramp's VO2.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. A test to determine parameters of aerobic function
    during exercise. J Appl Physiol 1981;50:217-221 (from memory).

    Examples
    --------
    >>> lag_corrected_load(200.0, ramp_rate_per_min=25.0, mean_response_time_s=40.0)
    183.33333333333334
    """
    return float(load - ramp_rate_per_min * mean_response_time_s / 60.0)


def lag_correction(
    avg: pd.DataFrame, *, phases_avg: np.ndarray, vt1_t_s: float | None, vt1_load: float | None, vt2_load: float | None,
    mode: str | None,
) -> tuple[LagCorrection | None, tuple[str, ...]]:
    """Mean response time of VO2 on a ramp and the lag-corrected loads at VT1 and VT2.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data.
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    vt1_t_s : float or None, keyword-only
        Time of VT1 (the VO2 line is fitted up to it; else up to two thirds of exercise).
    vt1_load, vt2_load : float or None, keyword-only
        Work rate (cycle) or speed (treadmill) at VT1 and VT2 as recorded.
    mode : {'cycle', 'treadmill'} or None, keyword-only

    Returns
    -------
    (LagCorrection or None, notes)
        ``None`` with a note when the protocol is not a ramp or the response time is implausible.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. J Appl Physiol 1981;50:217-221 (from memory).
    """
    col = C.WORK_W if mode == "cycle" else C.SPEED_KMH if mode == "treadmill" else None
    if col is None or col not in avg:
        return None, ()
    ex_mask = phases_avg == "exercise"
    ex = avg.loc[ex_mask]
    t = ex[C.T_S].to_numpy(dtype=float)
    load = ex[col].to_numpy(dtype=float)
    ok = np.isfinite(t) & np.isfinite(load)
    if ok.sum() < 8:
        return None, ()
    t, load = t[ok], load[ok]
    rising = np.diff(load) > 0
    if rising.mean() < RAMP_RISING_SHARE:
        return None, ("Loads at the thresholds are not lag-corrected: the protocol is not a ramp (the load rises in steps).",)
    rate = float(np.polyfit(t / 60.0, load, 1)[0])
    t0 = float(t.min())
    before = avg.loc[(~ex_mask) & (avg[C.T_S] < t0) & (avg[C.T_S] >= t0 - 60.0), C.VO2_ML_MIN].to_numpy(dtype=float)
    before = before[np.isfinite(before)]
    t_end = vt1_t_s if vt1_t_s is not None and vt1_t_s > t0 + 120.0 else t0 + 2.0 / 3.0 * (t.max() - t0)
    vo2 = ex[C.VO2_ML_MIN].to_numpy(dtype=float)[ok]
    fit = (t >= t0 + 60.0) & (t <= t_end) & np.isfinite(vo2)
    if before.size == 0 or fit.sum() < 4 or rate <= 0:
        return None, ("Loads at the thresholds are not lag-corrected: no VO2 before the ramp or too short a ramp to fit.",)
    slope, intercept = np.polyfit(t[fit], vo2[fit], 1)
    if slope <= 0:
        return None, ("Loads at the thresholds are not lag-corrected: VO2 did not rise with the ramp.",)
    mrt = float((before.mean() - intercept) / slope - t0)
    if not MRT_RANGE_S[0] <= mrt <= MRT_RANGE_S[1]:
        return None, (
            f"Loads at the thresholds are not lag-corrected: the VO2 response time fitted ({mrt:.0f} s) is outside "
            f"{MRT_RANGE_S[0]:g}–{MRT_RANGE_S[1]:g} s.",
        )

    def corr(v: float | None) -> float | None:
        return lag_corrected_load(v, ramp_rate_per_min=rate, mean_response_time_s=mrt) if v is not None else None

    return LagCorrection(
        load=col, ramp_rate_per_min=rate, mean_response_time_s=mrt, vt1_raw=vt1_load, vt1_corrected=corr(vt1_load),
        vt2_raw=vt2_load, vt2_corrected=corr(vt2_load),
    ), ()
