"""Predicted maximal O2 uptake by the FRIEND registry equation."""

from __future__ import annotations

from analysis.errors import require
from analysis.reference._validate import mode_code, number_in
from analysis.subject import reference_sex

#: Reader-facing method sentence (shown under ``methods``).
FRIEND_METHOD = "FRIEND registry equation (de Souza e Silva et al. 2018)"

LB_PER_KG = 2.2046226218
CM_PER_IN = 2.54


def friend_vo2max_ml_kg_min(
    *, age_y: float, sex: str, body_mass_kg: float, height_cm: float, mode: str
) -> float:
    """Predicted VO2max (mL/kg/min) by the FRIEND equation for treadmill or cycle tests.

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years (20-89 in the registry; 10-100 accepted).
    sex : {'male', 'female'}, keyword-only
        Any spelling :func:`analysis.subject.reference_sex` accepts (``"F"``, ``"weiblich"``, ...).
        Also accepts ``'m'``/``'f'``.
    body_mass_kg : float, keyword-only
        Body mass, kg (converted to lb).
    height_cm : float, keyword-only
        Height, cm (converted to inches).
    mode : {'treadmill', 'cycle'}, keyword-only
        Exercise mode.

    Returns
    -------
    float
        Predicted VO2max, mL/kg/min.

    Notes
    -----
    ``VO2max = 45.2 - 0.35*age - 10.9*sex - 0.15*weight_lb + 0.68*height_in - 0.46*mode`` with
    sex 1 = male, 2 = female and mode 1 = treadmill, 2 = cycle. Standard error of the estimate
    6.6 mL/kg/min: this is a population estimate, not a measurement.

    References
    ----------
    de Souza e Silva CG, Kaminsky LA, Arena R, et al. A reference equation for maximal aerobic
    power for treadmill and cycle ergometer exercise testing: analysis from the FRIEND registry.
    Eur J Prev Cardiol 2018;25:742-750.

    Examples
    --------
    >>> round(friend_vo2max_ml_kg_min(age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="treadmill"), 2)
    41.57
    """
    age = number_in("age_y", age_y, 10, 100, "years")
    mass = number_in("body_mass_kg", body_mass_kg, 20, 300, "kg")
    height = number_in("height_cm", height_cm, 100, 250, "cm")
    s = 1.0 if reference_sex(sex) == "male" else 2.0
    m = 1.0 if mode_code(mode) == "treadmill" else 2.0
    return (
        45.2
        - 0.35 * age
        - 10.9 * s
        - 0.15 * mass * LB_PER_KG
        + 0.68 * height / CM_PER_IN
        - 0.46 * m
    )


def pct_predicted(measured: float, predicted: float) -> float:
    """Measured value as a percentage of a predicted value.

    Parameters
    ----------
    measured, predicted : float
        Same units.

    Returns
    -------
    float
        ``100 * measured / predicted``, %.

    Examples
    --------
    >>> pct_predicted(30.0, 40.0)
    75.0
    """
    require(predicted > 0, "predicted", "a value > 0", predicted)
    return 100.0 * float(measured) / float(predicted)
