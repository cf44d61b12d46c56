"""Ventilatory efficiency: the VE/VCO2 slope and the VE/VCO2 nadir."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from analysis.indices._arrays import finite_columns, need_points
from analysis.indices._fit import LineFit, fit_line

#: Reader-facing method sentences of the slopes and the nadir (shown under ``methods``).
VE_VCO2_SLOPE_TO_VT2_METHOD = "least-squares slope of VE on VCO2 from exercise start to VT2 (Arena et al. 2007)"
VE_VCO2_SLOPE_WHOLE_EXERCISE_METHOD = (
    "least-squares slope of VE on VCO2 over the whole exercise phase (Arena et al. 2007)"
)
VE_VCO2_NADIR_METHOD = (
    "lowest VE/VCO2 during exercise, as the ratio of 30-s means of VE and VCO2 within exercise (Sun et al. 2002)"
)


def ve_vco2_slope(vco2_ml_min: ArrayLike, ve_l_min: ArrayLike) -> LineFit:
    """Slope of minute ventilation against CO2 output.

    Parameters
    ----------
    vco2_ml_min : array_like
        CO2 output, mL/min (converted to L/min before the fit).
    ve_l_min : array_like
        Minute ventilation, L/min, same length. Pairs with a non-finite value are ignored.

    Returns
    -------
    LineFit
        ``slope`` is dimensionless (L/min of VE per L/min of VCO2); ``intercept`` is in L/min.

    Raises
    ------
    AnalysisError
        Fewer than 3 usable pairs, or VCO2 constant.

    Notes
    -----
    Ordinary least squares of VE on VCO2, ``VE = slope * VCO2 + intercept``. The caller picks the
    span: the whole exercise phase, or from exercise start to VT2 (the respiratory compensation
    point), where the relation is linear in healthy people.

    References
    ----------
    Arena R, Myers J, Abella J, et al. Development of a ventilatory classification system in
    patients with heart failure. Circulation 2007;115:2410-2417.

    Examples
    --------
    >>> round(ve_vco2_slope([1000, 2000, 3000], [30, 55, 80]).slope, 3)
    25.0
    """
    vco2, ve = finite_columns(("vco2_ml_min", "ve_l_min"), vco2_ml_min, ve_l_min)
    need_points(vco2.size, 3, "The VE/VCO2 slope")
    return fit_line(vco2 / 1000.0, ve, what="VE/VCO2 slope")


def ve_vco2_nadir(vco2_ml_min: ArrayLike, ve_l_min: ArrayLike) -> float:
    """Lowest ventilatory equivalent for CO2 (VE/VCO2) in averaged data.

    Parameters
    ----------
    vco2_ml_min : array_like
        CO2 output, mL/min, from averaged (not breath-by-breath) exercise data.
    ve_l_min : array_like
        Minute ventilation, L/min.

    Returns
    -------
    float
        Minimum of ``VE / VCO2`` (both in L/min; dimensionless). Rows with VCO2 ≤ 0 are ignored.

    Notes
    -----
    The nadir is taken over whatever averaging the caller applied (common practice: the lowest
    30-s or 7-breath averaged value during exercise).

    References
    ----------
    Sun XG, Hansen JE, Garatachea N, Storer TW, Wasserman K. Ventilatory efficiency during
    exercise in healthy subjects. Am J Respir Crit Care Med 2002;166:1443-1448 (from memory).

    Examples
    --------
    >>> ve_vco2_nadir([1000, 2000], [30, 50])
    25.0
    """
    vco2, ve = finite_columns(("vco2_ml_min", "ve_l_min"), vco2_ml_min, ve_l_min)
    keep = vco2 > 0
    need_points(int(keep.sum()), 1, "The VE/VCO2 nadir")
    return float(np.min(ve[keep] / (vco2[keep] / 1000.0)))
