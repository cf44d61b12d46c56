"""Time-window means of averaged data: the 30-s values read for peaks, nadirs and thresholds."""

from __future__ import annotations

import numpy as np


def window_means(t_s: np.ndarray, values: np.ndarray, *, window_s: float, inside: bool = False) -> np.ndarray:
    """Centred time-window means: for each row, the mean of the finite values within
    ``window_s / 2`` seconds of it (``window_s`` 0 returns ``values`` unchanged).

    With ``inside=True`` a row whose window does not lie wholly inside the rows given gets NaN:
    the window must end no later than the last row's own span (half the typical row spacing
    after it) and start no earlier than the first row's. A window at the last row of exercise
    would otherwise hold only half its width of data. When no row has a whole window (data
    shorter than the window) the centred means are returned as they are.
    """
    t = np.asarray(t_s, dtype=float)
    v = np.asarray(values, dtype=float)
    if window_s <= 0 or v.size == 0:
        return v.copy()
    means = _centred_means(t, v, window_s=window_s)
    if not inside or t.size < 2:
        return means
    half_row = 0.5 * float(np.median(np.diff(t)))
    eps = 1e-9
    whole = (t - window_s / 2.0 >= t[0] - half_row - eps) & (t + window_s / 2.0 <= t[-1] + half_row + eps)
    if not whole.any():
        return means
    return np.where(whole, means, np.nan)


def _centred_means(t: np.ndarray, v: np.ndarray, *, window_s: float) -> np.ndarray:
    ok = np.isfinite(v)
    csum = np.concatenate(([0.0], np.cumsum(np.where(ok, v, 0.0))))
    ccnt = np.concatenate(([0], np.cumsum(ok)))
    lo = np.searchsorted(t, t - window_s / 2.0, side="left")
    hi = np.searchsorted(t, t + window_s / 2.0, side="right")
    n = ccnt[hi] - ccnt[lo]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, (csum[hi] - csum[lo]) / np.maximum(n, 1), np.nan)
