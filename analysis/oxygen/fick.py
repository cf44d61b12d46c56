"""Fick principle: oxygen uptake = cardiac output x arterio-venous O2 content difference.

Units: VO2 in mL/min, cardiac output Q in L/min, contents in mL O2/dL. Since 1 L = 10 dL,
a-vO2 difference (mL/dL) = VO2 / (10 Q).
"""

from __future__ import annotations

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks

#: Stringer et al. (1997): C(a-v)O2 (mL/dL) = intercept + slope * %VO2max.
STRINGER_INTERCEPT_ML_DL = 5.72
STRINGER_SLOPE_ML_DL_PER_PCT = 0.105


def avo2_difference_ml_dl(*, vo2_ml_min: float, q_l_min: float) -> float:
    """Arterio-venous O2 content difference (mL/dL) from VO2 and cardiac output (Fick).

    References
    ----------
    Fick principle, VO2 = Q x C(a-v)O2 (common practice). Textbook example: VO2 250 mL/min,
    Q 5 L/min -> 5 mL/dL.

    Examples
    --------
    >>> avo2_difference_ml_dl(vo2_ml_min=250.0, q_l_min=5.0)
    5.0
    """
    vo2 = _checks.scalar("vo2_ml_min", vo2_ml_min)
    q = _checks.scalar("q_l_min", q_l_min)
    return vo2 / (10.0 * q)


def cardiac_output_l_min(*, vo2_ml_min: float, avo2_ml_dl: float) -> float:
    """Cardiac output (L/min) from VO2 and the a-vO2 content difference (Fick).

    Raises
    ------
    InvalidParameter
        a-vO2 difference not positive (or above 25 mL/dL, more than blood can carry).

    Examples
    --------
    >>> cardiac_output_l_min(vo2_ml_min=250.0, avo2_ml_dl=20.0 - 15.0)
    5.0
    """
    vo2 = _checks.scalar("vo2_ml_min", vo2_ml_min)
    if not (0.0 < float(avo2_ml_dl) <= 25.0):
        raise InvalidParameter("avo2_ml_dl", "a content difference above 0 and at most 25 mL/dL", avo2_ml_dl)
    return vo2 / (10.0 * float(avo2_ml_dl))


def stringer_avo2_difference_ml_dl(*, pct_vo2_peak: float) -> float:
    """ESTIMATED a-vO2 difference (mL/dL) at a given percentage of VO2max (Stringer 1997).

    Notes
    -----
    C(a-v)O2 = 5.72 + 0.105 x %VO2max, derived in healthy subjects during cycle exercise.
    It is a population estimate, not a measurement; it does not hold in heart failure,
    anaemia or hypoxaemia.

    References
    ----------
    Stringer WW, Hansen JE, Wasserman K (1997). Cardiac output estimated noninvasively from
    oxygen uptake during exercise. J Appl Physiol 82:908-912.

    Examples
    --------
    >>> round(stringer_avo2_difference_ml_dl(pct_vo2_peak=100.0), 2)
    16.22
    """
    pct = _checks.scalar("pct_vo2_peak", pct_vo2_peak)
    return STRINGER_INTERCEPT_ML_DL + STRINGER_SLOPE_ML_DL_PER_PCT * pct


def stringer_cardiac_output_l_min(*, vo2_ml_min: float, pct_vo2_peak: float) -> float:
    """ESTIMATED cardiac output (L/min) = VO2 / Stringer a-vO2 difference.

    References
    ----------
    Stringer WW, Hansen JE, Wasserman K (1997). J Appl Physiol 82:908-912.
    """
    return cardiac_output_l_min(
        vo2_ml_min=vo2_ml_min, avo2_ml_dl=stringer_avo2_difference_ml_dl(pct_vo2_peak=pct_vo2_peak)
    )


def stroke_volume_ml(*, q_l_min: float, hr_bpm: float) -> float:
    """Stroke volume (mL per beat) = Q / HR (common practice).

    Examples
    --------
    >>> stroke_volume_ml(q_l_min=5.0, hr_bpm=70.0)
    71.42857142857143
    """
    q = _checks.scalar("q_l_min", q_l_min)
    hr = _checks.scalar("hr_bpm", hr_bpm)
    return 1000.0 * q / hr
