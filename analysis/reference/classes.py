"""Functional classes: Weber (peak VO2) and Arena's ventilatory class (VE/VCO2 slope)."""

from __future__ import annotations

from analysis.reference._validate import number_in

#: Reader-facing method sentences (shown under ``methods``).
WEBER_CLASS_METHOD = "classes A-D by VO2peak per kg (Weber & Janicki 1985)"
VENTILATORY_CLASS_METHOD = (
    "classes I-IV by the whole-exercise VE/VCO2 slope (Arena et al. 2007; the paper's slope spans all "
    "exercise data, from memory)"
)

#: Weber class descriptions (Weber & Janicki 1985, from memory).
WEBER_DESCRIPTIONS: dict[str, str] = {
    "A": "none to mild impairment (peak VO2 > 20 mL/kg/min)",
    "B": "mild to moderate impairment (16-20 mL/kg/min)",
    "C": "moderate to severe impairment (10-16 mL/kg/min)",
    "D": "severe impairment (< 10 mL/kg/min)",
}

#: Ventilatory class descriptions by VE/VCO2 slope (Arena et al. 2007).
VENTILATORY_DESCRIPTIONS: dict[str, str] = {
    "I": "VE/VCO2 slope ≤ 29.9",
    "II": "VE/VCO2 slope 30.0-35.9",
    "III": "VE/VCO2 slope 36.0-44.9",
    "IV": "VE/VCO2 slope ≥ 45.0",
}


def weber_class(vo2_peak_ml_kg_min: float) -> str:
    """Weber functional class from peak VO2.

    Parameters
    ----------
    vo2_peak_ml_kg_min : float
        Peak O2 uptake, mL/kg/min.

    Returns
    -------
    {'A', 'B', 'C', 'D'}
        A > 20; B 16-20 (16 and 20 included); C 10 to below 16; D < 10 mL/kg/min.

    Notes
    -----
    The class was defined for patients with chronic heart failure; for other people it only
    describes the size of the aerobic capacity. The shared boundary 16 is placed in class B
    and 10 in class C (our reading of the overlapping published ranges).

    References
    ----------
    Weber KT, Janicki JS. Cardiopulmonary exercise testing for evaluation of chronic cardiac
    failure. Am J Cardiol 1985;55:22A-31A (from memory).

    Examples
    --------
    >>> weber_class(18.0)
    'B'
    """
    v = number_in("vo2_peak_ml_kg_min", vo2_peak_ml_kg_min, 0, 120, "mL/kg/min")
    if v > 20.0:
        return "A"
    if v >= 16.0:
        return "B"
    if v >= 10.0:
        return "C"
    return "D"


def ventilatory_class(ve_vco2_slope: float) -> str:
    """Ventilatory class (I-IV) from the VE/VCO2 slope.

    Parameters
    ----------
    ve_vco2_slope : float
        VE/VCO2 slope, dimensionless.

    Returns
    -------
    {'I', 'II', 'III', 'IV'}
        I ≤ 29.9; II 30.0-35.9; III 36.0-44.9; IV ≥ 45.0. Values between published cut points
        (e.g. 29.95) go to the higher class, i.e. the limits are < 30, < 36 and < 45.

    References
    ----------
    Arena R, Myers J, Abella J, et al. Development of a ventilatory classification system in
    patients with heart failure. Circulation 2007;115:2410-2417.

    Examples
    --------
    >>> ventilatory_class(33.0)
    'II'
    """
    v = number_in("ve_vco2_slope", ve_vco2_slope, 0, 200, "")
    if v < 30.0:
        return "I"
    if v < 36.0:
        return "II"
    if v < 45.0:
        return "III"
    return "IV"
