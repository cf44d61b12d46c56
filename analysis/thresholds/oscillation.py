"""Oscillating ventilation: find its period, and average it out before the threshold fits.

Periodic breathing during exercise (periods of 40-90 s, swings of 10-30 % of VE; seen in heart
failure) survives 10-20 s averaging, inflates the residuals of every line fit and hides the
respiratory compensation point. A centred mean over one whole period removes a periodic
component whatever its phase, so the fits see the trend underneath.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from analysis import columns as C

#: Periods looked for, s (oscillatory ventilation in heart failure: about 40-90 s; from memory).
PERIOD_RANGE_S = (35.0, 110.0)
#: An oscillation counts when the autocorrelation of detrended VE at the period is at least this
#: and at half the period at most ``-HALF_PERIOD_MAX`` (a real swing reverses at half a period).
#: Ours, measured on the project simulator (docs/thresholds.md): all 10 seeds of the oscillating
#: kind found, none of the kinds without oscillation.
MIN_AUTOCORRELATION = 0.45
HALF_PERIOD_MAX = 0.4
#: The trend removed before the autocorrelation: a centred mean over this long, s.
DETREND_S = 150.0


def _running_mean_time(t: np.ndarray, v: np.ndarray, width_s: float) -> np.ndarray:
    """Centred mean of ``v`` over ``width_s`` seconds around each point (missing values skipped)."""
    ok = np.isfinite(v)
    cs = np.concatenate([[0.0], np.cumsum(np.where(ok, v, 0.0))])
    cn = np.concatenate([[0], np.cumsum(ok)])
    lo = np.searchsorted(t, t - width_s / 2, side="left")
    hi = np.searchsorted(t, t + width_s / 2, side="right")
    cnt = cn[hi] - cn[lo]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(cnt > 0, (cs[hi] - cs[lo]) / np.where(cnt > 0, cnt, 1), np.nan)


def oscillation_period_s(t_s: np.ndarray, ve_l_min: np.ndarray) -> float | None:
    """Period of oscillating ventilation in an exercise stretch, s, or ``None`` when there is none.

    Parameters
    ----------
    t_s, ve_l_min : numpy.ndarray
        Times (sorted) and VE of averaged exercise rows (10 s bins or finer work best).

    Returns
    -------
    float or None

    Notes
    -----
    VE is divided by its centred 150-s mean (the trend of the test), and the autocorrelation of
    what is left is read at every lag within :data:`PERIOD_RANGE_S`. The lag with the highest
    autocorrelation is the period when that autocorrelation is at least
    :data:`MIN_AUTOCORRELATION` and the one at half that lag is at most
    ``-HALF_PERIOD_MAX``.

    References
    ----------
    Box GEP, Jenkins GM (1976). Time Series Analysis: Forecasting and Control (the sample
    autocorrelation; from memory). Oscillatory ventilation in heart failure, periods of about
    40-90 s: common practice.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.arange(0.0, 900.0, 10.0)
    >>> ve = (20 + t / 30) * (1 + 0.2 * np.sin(2 * np.pi * t / 60))
    >>> oscillation_period_s(t, ve)
    60.0
    """
    t = np.asarray(t_s, dtype=float)
    v = np.asarray(ve_l_min, dtype=float)
    ok = np.isfinite(t) & np.isfinite(v) & (v > 0)
    t, v = t[ok], v[ok]
    if t.size < 20:
        return None
    dt = float(np.median(np.diff(t)))
    if dt <= 0 or dt > PERIOD_RANGE_S[0] / 2:
        return None
    r = v / _running_mean_time(t, v, DETREND_S) - 1.0
    r = r - r.mean()
    energy = float(np.sum(r * r))
    if energy <= 0:
        return None
    lags = np.arange(max(2, int(np.ceil(PERIOD_RANGE_S[0] / dt))), int(np.floor(PERIOD_RANGE_S[1] / dt)) + 1)
    lags = lags[lags < r.size // 2]
    if lags.size == 0:
        return None
    ac = np.array([np.sum(r[:-lag] * r[lag:]) / energy for lag in lags])
    k = int(np.argmax(ac))
    lag = int(lags[k])
    half = max(1, round(lag / 2))
    ac_half = float(np.sum(r[:-half] * r[half:]) / energy)
    if ac[k] < MIN_AUTOCORRELATION or ac_half > -HALF_PERIOD_MAX:
        return None
    return float(lag * dt)


def average_over_period(avg: pd.DataFrame, labels: np.ndarray, period_s: float) -> pd.DataFrame:
    """A copy of ``avg`` whose gas and ventilation columns are centred means over one period.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged rows with ``t_s`` (sorted) and any of VO2, VCO2, VE, PETO2, PETCO2.
    labels : numpy.ndarray
        One phase label per row; the mean runs within each phase (a period never mixes
        exercise with recovery).
    period_s : float
        The oscillation period, s (:func:`oscillation_period_s`).

    Returns
    -------
    pandas.DataFrame

    Notes
    -----
    A mean over exactly one period of a sinusoid is zero whatever its phase, so the trend
    underneath is kept and the swing removed (the mean over a whole number of periods; common
    practice).

    References
    ----------
    Common practice (moving average over one period of a periodic component).
    """
    out = avg.copy()
    t = avg[C.T_S].to_numpy(dtype=float)
    cols = [c for c in (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN, C.PETO2_MMHG, C.PETCO2_MMHG) if c in avg.columns]
    for label in np.unique(labels):
        rows = np.flatnonzero(labels == label)
        if rows.size == 0:
            continue
        for c in cols:
            v = avg[c].to_numpy(dtype=float)[rows]
            out.loc[out.index[rows], c] = _running_mean_time(t[rows], v, period_s)
    return out
