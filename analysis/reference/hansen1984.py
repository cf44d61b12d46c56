"""Hansen, Sue and Wasserman 1984: predicted peak VO2 and heart rate on a cycle ergometer.

The coefficients below are recalled (from memory), not looked up: confirm them against the
paper before a clinical lab relies on them.
"""

from __future__ import annotations

from analysis.reference._validate import age_in_derivation_range, cycle_only, number_in
from analysis.subject import reference_sex

#: Ages of the people the equations were derived from, years (from memory: 34–74). Outside
#: this range the equation is refused, never extrapolated.
HANSEN_AGE_RANGE_Y: tuple[float, float] = (34.0, 74.0)

#: Reader-facing method sentence (shown beside every value predicted by this set).
HANSEN_METHOD = (
    "Hansen, Sue & Wasserman 1984 (cycle; from memory): men wt × (50.72 - 0.372·age), women (wt + 43) × "
    "(22.78 - 0.17·age) mL/min, wt = the lower of actual and ideal body weight (men 0.79·height - 60.7, "
    "women 0.65·height - 42.8 kg); HRmax 210 - 0.65·age"
)


def ideal_body_mass_kg(*, height_cm: float, sex: str) -> float:
    """Ideal body weight used with the Hansen 1984 equations.

    Parameters
    ----------
    height_cm : float, keyword-only
        Height, cm.
    sex : {'male', 'female'}, keyword-only
        Any spelling :func:`analysis.subject.reference_sex` accepts.

    Returns
    -------
    float
        Men ``0.79 * height - 60.7``, women ``0.65 * height - 42.8``, kg.

    References
    ----------
    Wasserman K, Hansen JE, Sue DY, et al. Principles of Exercise Testing and Interpretation
    (textbook; the ideal-weight equations, from memory).

    Examples
    --------
    >>> round(ideal_body_mass_kg(height_cm=180, sex="male"), 1)
    81.5
    """
    h = number_in("height_cm", height_cm, 120, 230, "cm")
    return 0.79 * h - 60.7 if reference_sex(sex) == "male" else 0.65 * h - 42.8


#: How the set is named in messages.
_SOURCE = "Hansen et al. 1984"


def _checked_age(age_y: float) -> float:
    return age_in_derivation_range(age_y, HANSEN_AGE_RANGE_Y, _SOURCE)


def hansen1984_vo2max_ml_min(*, age_y: float, sex: str, body_mass_kg: float, height_cm: float, mode: str) -> float:
    """Predicted peak VO2 by Hansen, Sue and Wasserman (1984), cycle ergometer.

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years; refused outside :data:`HANSEN_AGE_RANGE_Y`.
    sex : {'male', 'female'}, keyword-only
    body_mass_kg, height_cm : float, keyword-only
        Actual body mass (kg) and height (cm).
    mode : {'cycle'}, keyword-only
        Only cycle tests: the equations were derived on a cycle ergometer.

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
    Men: ``wt * (50.72 - 0.372 * age)``; women: ``(wt + 43) * (22.78 - 0.17 * age)``, where
    ``wt`` is the actual body mass, or the ideal body weight (:func:`ideal_body_mass_kg`) when
    the actual mass is higher, so that excess fat raises no prediction (the obesity
    adjustment; from memory).

    References
    ----------
    Hansen JE, Sue DY, Wasserman K. Predicted values for clinical exercise testing. Am Rev Respir
    Dis 1984;129(2 Pt 2):S49-S55 (coefficients from memory).

    Examples
    --------
    >>> round(hansen1984_vo2max_ml_min(age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="cycle"), 1)
    2867.2
    """
    age = _checked_age(age_y)
    cycle_only(mode, _SOURCE)
    mass = number_in("body_mass_kg", body_mass_kg, 20, 300, "kg")
    s = reference_sex(sex)
    wt = min(mass, ideal_body_mass_kg(height_cm=height_cm, sex=s))
    if s == "male":
        return wt * (50.72 - 0.372 * age)
    return (wt + 43.0) * (22.78 - 0.17 * age)


def hansen1984_hr_max_bpm(*, age_y: float) -> float:
    """Predicted maximal heart rate used with the Hansen 1984 set: ``210 - 0.65 * age``.

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years; refused outside :data:`HANSEN_AGE_RANGE_Y`.

    Returns
    -------
    float
        beats/min.

    References
    ----------
    Hansen JE, Sue DY, Wasserman K. Am Rev Respir Dis 1984;129:S49-S55 (from memory).

    Examples
    --------
    >>> hansen1984_hr_max_bpm(age_y=40)
    184.0
    """
    return 210.0 - 0.65 * _checked_age(age_y)
