"""Jones et al. 1985: predicted peak VO2 and heart rate on a cycle ergometer.

The coefficients below are recalled (from memory), not looked up: confirm them against the
paper before a clinical lab relies on them.
"""

from __future__ import annotations

from analysis.reference._validate import age_in_derivation_range, cycle_only, number_in
from analysis.subject import reference_sex

#: Ages of the people the equations were derived from, years (from memory: 15–71).
JONES_AGE_RANGE_Y: tuple[float, float] = (15.0, 71.0)

#: Reader-facing method sentence.
JONES_METHOD = (
    "Jones et al. 1985 (cycle; from memory): VO2max (L/min) = 0.046·height(cm) - 0.021·age - 0.62·sex(m 0, f 1) "
    "- 4.31; HRmax 202 - 0.72·age"
)


#: How the set is named in messages.
_SOURCE = "Jones et al. 1985"


def _checked_age(age_y: float) -> float:
    return age_in_derivation_range(age_y, JONES_AGE_RANGE_Y, _SOURCE)


def jones1985_vo2max_ml_min(*, age_y: float, sex: str, height_cm: float, mode: str) -> float:
    """Predicted peak VO2 by Jones et al. (1985), cycle ergometer.

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years; refused outside :data:`JONES_AGE_RANGE_Y`.
    sex : {'male', 'female'}, keyword-only
    height_cm : float, keyword-only
    mode : {'cycle'}, keyword-only
        Only cycle tests.

    Returns
    -------
    float
        Predicted peak VO2, mL/min.

    Raises
    ------
    OutsideDerivationRange
        (an InvalidParameter) Age outside the derivation range, a treadmill test, or values out of range.

    Notes
    -----
    ``VO2max (L/min) = 0.046 * height_cm - 0.021 * age - 0.62 * sex - 4.31`` with sex 0 for men
    and 1 for women (from memory).

    References
    ----------
    Jones NL, Makrides L, Hitchcock C, Chypchar T, McCartney N. Normal standards for an
    incremental progressive cycle ergometer test. Am Rev Respir Dis 1985;131:700-708
    (coefficients from memory).

    Examples
    --------
    >>> round(jones1985_vo2max_ml_min(age_y=40, sex="male", height_cm=180, mode="cycle"))
    3130
    """
    age = _checked_age(age_y)
    cycle_only(mode, _SOURCE)
    h = number_in("height_cm", height_cm, 120, 230, "cm")
    female = 1.0 if reference_sex(sex) == "female" else 0.0
    return 1000.0 * (0.046 * h - 0.021 * age - 0.62 * female - 4.31)


def jones1985_hr_max_bpm(*, age_y: float) -> float:
    """Predicted maximal heart rate of the Jones 1985 set: ``202 - 0.72 * age`` (from memory).

    Examples
    --------
    >>> jones1985_hr_max_bpm(age_y=40)
    173.2

    References
    ----------
    Jones NL et al. Am Rev Respir Dis 1985;131:700-708 (from memory).
    """
    return 202.0 - 0.72 * _checked_age(age_y)
