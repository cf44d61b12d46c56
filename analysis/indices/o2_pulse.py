"""Oxygen pulse: O2 uptake per heart beat."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from analysis.indices._arrays import finite_columns, measured, need_points

#: Reader-facing method sentence (shown under ``methods``).
O2_PULSE_METHOD = (
    "VO2/HR: highest ratio of 30-s means of VO2 and HR within exercise; at peak, VO2peak / peak HR (Wasserman et al.)"
)

#: Heart rates below this (beats/min) are treated as missing for O2 pulse (common practice:
#: a dropped or implausible HR signal would give an absurd O2 pulse).
MIN_HR_BPM = 30.0


def o2_pulse_ml_beat(vo2_ml_min: ArrayLike, hr_bpm: ArrayLike) -> NDArray[np.float64]:
    """O2 pulse series, mL/beat.

    Parameters
    ----------
    vo2_ml_min : array_like
        O2 uptake, mL/min.
    hr_bpm : array_like
        Heart rate, beats/min, same length.

    Returns
    -------
    numpy.ndarray
        ``VO2 / HR`` in mL/beat; NaN where HR is missing or below :data:`MIN_HR_BPM`.

    References
    ----------
    Wasserman K, Hansen JE, Sue DY, et al. Principles of Exercise Testing and Interpretation,
    5th ed. Lippincott Williams & Wilkins 2012 (O2 pulse = VO2/HR, from memory).

    Examples
    --------
    >>> o2_pulse_ml_beat([1500.0], [150.0]).tolist()
    [10.0]
    """
    vo2 = measured("vo2_ml_min", vo2_ml_min)
    hr = measured("hr_bpm", hr_bpm)
    if vo2.shape != hr.shape:
        finite_columns(("vo2_ml_min", "hr_bpm"), vo2, hr)  # raises the standard message
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(hr >= MIN_HR_BPM, vo2 / hr, np.nan)
    return out


def o2_pulse_peak_ml_beat(vo2_ml_min: ArrayLike, hr_bpm: ArrayLike) -> float:
    """Highest O2 pulse (mL/beat) in averaged exercise data.

    Parameters
    ----------
    vo2_ml_min, hr_bpm : array_like
        Averaged O2 uptake (mL/min) and heart rate (beats/min).

    Returns
    -------
    float
        Maximum of :func:`o2_pulse_ml_beat`, mL/beat.

    Raises
    ------
    AnalysisError
        No row with both a VO2 and a usable heart rate.

    References
    ----------
    Wasserman K, et al. Principles of Exercise Testing and Interpretation, 5th ed. 2012
    (from memory).
    """
    vo2, hr = finite_columns(("vo2_ml_min", "hr_bpm"), vo2_ml_min, hr_bpm)
    pulse = o2_pulse_ml_beat(vo2, hr)
    pulse = pulse[np.isfinite(pulse)]
    need_points(pulse.size, 1, "The O2 pulse")
    return float(pulse.max())
