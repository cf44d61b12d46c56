"""Heart-rate indices: reserve, percent of reserve, and 1-minute recovery."""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import require
from analysis.indices._arrays import finite_columns, measured

#: Reader-facing method sentences (shown under ``methods``).
HR_RESERVE_METHOD = "peak HR - resting HR; % of reserve by Karvonen et al. 1957"
HR_RECOVERY_METHOD = "HR at end of exercise - HR 60 s later (Cole et al. 1999)"
HR_PEAK_METHOD = "highest averaged heart rate during exercise"


def hr_reserve_bpm(*, hr_max_bpm: float, hr_rest_bpm: float) -> float:
    """Heart-rate reserve, beats/min.

    Parameters
    ----------
    hr_max_bpm : float, keyword-only
        Peak (or predicted maximal) heart rate, beats/min.
    hr_rest_bpm : float, keyword-only
        Resting heart rate, beats/min.

    Returns
    -------
    float
        ``hr_max - hr_rest``.

    References
    ----------
    Karvonen MJ, Kentala E, Mustala O. The effects of training on heart rate; a longitudinal
    study. Ann Med Exp Biol Fenn 1957;35:307-315 (from memory).

    Examples
    --------
    >>> hr_reserve_bpm(hr_max_bpm=190, hr_rest_bpm=60)
    130.0
    """
    require(np.isfinite(hr_max_bpm) and hr_max_bpm > 0, "hr_max_bpm", "a heart rate > 0", hr_max_bpm)
    require(np.isfinite(hr_rest_bpm) and hr_rest_bpm > 0, "hr_rest_bpm", "a heart rate > 0", hr_rest_bpm)
    require(hr_max_bpm > hr_rest_bpm, "hr_max_bpm", f"above the resting heart rate ({hr_rest_bpm})", hr_max_bpm)
    return float(hr_max_bpm - hr_rest_bpm)


def pct_hr_reserve(hr_bpm: ArrayLike, *, hr_max_bpm: float, hr_rest_bpm: float) -> float | np.ndarray:
    """Heart rate as a percentage of the heart-rate reserve (Karvonen).

    Parameters
    ----------
    hr_bpm : float or array_like
        Heart rate(s), beats/min.
    hr_max_bpm, hr_rest_bpm : float, keyword-only
        Maximal and resting heart rate, beats/min.

    Returns
    -------
    float or numpy.ndarray
        ``100 * (hr - hr_rest) / (hr_max - hr_rest)``, %.

    References
    ----------
    Karvonen MJ, Kentala E, Mustala O 1957 (from memory).

    Examples
    --------
    >>> pct_hr_reserve(125, hr_max_bpm=190, hr_rest_bpm=60)
    50.0
    """
    reserve = hr_reserve_bpm(hr_max_bpm=hr_max_bpm, hr_rest_bpm=hr_rest_bpm)
    out = 100.0 * (measured("hr_bpm", hr_bpm) - hr_rest_bpm) / reserve
    return float(out) if out.ndim == 0 else out


def hr_recovery_1min_bpm(t_s: ArrayLike, hr_bpm: ArrayLike, *, t_end_exercise_s: float) -> float | None:
    """Fall of heart rate in the first minute after exercise stops.

    Parameters
    ----------
    t_s : array_like
        Time, s (whole test or exercise plus recovery; averaged data recommended).
    hr_bpm : array_like
        Heart rate, beats/min.
    t_end_exercise_s : float, keyword-only
        Time at which exercise stopped, s.

    Returns
    -------
    float or None
        ``HR(t_end) - HR(t_end + 60 s)`` in beats/min (values read by linear interpolation), or
        ``None`` when the recording does not reach 60 s of recovery with a heart rate.

    Notes
    -----
    An abnormal (blunted) value after an upright test is commonly ≤ 12 beats/min.

    References
    ----------
    Cole CR, Blackstone EH, Pashkow FJ, Snader CE, Lauer MS. Heart-rate recovery immediately
    after exercise as a predictor of mortality. N Engl J Med 1999;341:1351-1357 (from memory).

    Examples
    --------
    >>> hr_recovery_1min_bpm([0, 60, 120], [150, 170, 140], t_end_exercise_s=60)
    30.0
    """
    require(math.isfinite(t_end_exercise_s), "t_end_exercise_s", "the time exercise ended, s", t_end_exercise_s)
    t, hr = finite_columns(("t_s", "hr_bpm"), t_s, hr_bpm)
    if t.size < 2:
        return None
    order = np.argsort(t, kind="stable")
    t, hr = t[order], hr[order]
    t1 = t_end_exercise_s + 60.0
    if t_end_exercise_s < t[0] or t1 > t[-1]:
        return None
    return float(np.interp(t_end_exercise_s, t, hr) - np.interp(t1, t, hr))
