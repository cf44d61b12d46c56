"""Energy expenditure (Weir) and carbohydrate / fat oxidation (Frayn), with FATmax."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import require
from analysis.indices._arrays import as_float_array, finite_columns, measured, need_points

#: Reader-facing method sentences (shown under ``methods``).
ENERGY_EXPENDITURE_METHOD = "abbreviated Weir equation (Weir 1949)"
SUBSTRATE_METHOD = "Frayn 1983 equations without protein (averaged points with RER below 1.0)"
FAT_MAX_METHOD = (
    "averaged exercise point with the highest fat oxidation by the Frayn 1983 equations (Achten et al. 2002)"
)

#: Above this RER the Frayn equations no longer describe substrate use, because buffering of
#: lactic acid adds non-metabolic CO2 (common practice).
FRAYN_MAX_RER = 1.0


def _in_litres(
    vo2_ml_min: ArrayLike, vco2_ml_min: ArrayLike, equation: Callable[[np.ndarray, np.ndarray], np.ndarray]
) -> float | np.ndarray:
    """``equation(VO2, VCO2)`` with both gases in L/min; a float for scalar input, else an array."""
    vo2 = measured("vo2_ml_min", vo2_ml_min) / 1000.0
    vco2 = measured("vco2_ml_min", vco2_ml_min) / 1000.0
    out = np.asarray(equation(vo2, vco2))
    return float(out) if out.ndim == 0 else out


def energy_expenditure_kcal_min(vo2_ml_min: ArrayLike, vco2_ml_min: ArrayLike) -> float | np.ndarray:
    """Energy expenditure by the abbreviated Weir equation.

    Parameters
    ----------
    vo2_ml_min : float or array_like
        O2 uptake, mL/min.
    vco2_ml_min : float or array_like
        CO2 output, mL/min.

    Returns
    -------
    float or numpy.ndarray
        Energy expenditure, kcal/min.

    Notes
    -----
    ``EE = 3.941 * VO2 + 1.106 * VCO2`` with gases in L/min (urinary nitrogen term omitted).

    References
    ----------
    Weir JB de V. New methods for calculating metabolic rate with special reference to protein
    metabolism. J Physiol 1949;109:1-9.

    Examples
    --------
    >>> round(energy_expenditure_kcal_min(1000.0, 800.0), 4)
    4.8258
    """
    return _in_litres(vo2_ml_min, vco2_ml_min, lambda vo2, vco2: 3.941 * vo2 + 1.106 * vco2)


def carbohydrate_oxidation_g_min(vo2_ml_min: ArrayLike, vco2_ml_min: ArrayLike) -> float | np.ndarray:
    """Carbohydrate oxidation rate by Frayn's equation (protein term omitted).

    Parameters
    ----------
    vo2_ml_min, vco2_ml_min : float or array_like
        O2 uptake and CO2 output, mL/min.

    Returns
    -------
    float or numpy.ndarray
        g/min: ``4.55 * VCO2 - 3.21 * VO2`` (gases in L/min), not clipped.

    References
    ----------
    Frayn KN. Calculation of substrate oxidation rates in vivo from gaseous exchange. J Appl
    Physiol 1983;55:628-634 (from memory).

    Examples
    --------
    >>> round(carbohydrate_oxidation_g_min(1000.0, 1000.0), 2)
    1.34
    """
    return _in_litres(vo2_ml_min, vco2_ml_min, lambda vo2, vco2: 4.55 * vco2 - 3.21 * vo2)


def fat_oxidation_g_min(vo2_ml_min: ArrayLike, vco2_ml_min: ArrayLike) -> float | np.ndarray:
    """Fat oxidation rate by Frayn's equation (protein term omitted).

    Parameters
    ----------
    vo2_ml_min, vco2_ml_min : float or array_like
        O2 uptake and CO2 output, mL/min.

    Returns
    -------
    float or numpy.ndarray
        g/min: ``1.67 * VO2 - 1.67 * VCO2`` (gases in L/min), not clipped; negative above RER 1.

    References
    ----------
    Frayn KN. J Appl Physiol 1983;55:628-634 (from memory).

    Examples
    --------
    >>> round(fat_oxidation_g_min(1000.0, 700.0), 3)
    0.501
    """
    return _in_litres(vo2_ml_min, vco2_ml_min, lambda vo2, vco2: 1.67 * (vo2 - vco2))


@dataclass(frozen=True)
class FatMax:
    """Where fat oxidation peaked in averaged exercise data.

    Attributes
    ----------
    fat_g_min : float
        Highest fat oxidation rate, g/min.
    vo2_ml_min : float
        VO2 at that point, mL/min.
    pct_vo2_peak : float or None
        That VO2 as % of VO2peak (``None`` when VO2peak was not given).
    t_s : float
        Time of that point, s.
    position : int
        Position (0-based) of that point in the input arrays.
    """

    fat_g_min: float
    vo2_ml_min: float
    pct_vo2_peak: float | None
    t_s: float
    position: int


def fat_max(
    t_s: ArrayLike,
    vo2_ml_min: ArrayLike,
    vco2_ml_min: ArrayLike,
    *,
    vo2_peak_ml_min: float | None = None,
) -> FatMax | None:
    """Intensity of peak fat oxidation (FATmax) in averaged exercise data.

    Parameters
    ----------
    t_s, vo2_ml_min, vco2_ml_min : array_like
        Averaged exercise rows: time (s), O2 uptake and CO2 output (mL/min).
    vo2_peak_ml_min : float, optional, keyword-only
        VO2peak, mL/min, to express FATmax as % of peak.

    Returns
    -------
    FatMax or None
        ``None`` when no row has RER below 1.0 (fat oxidation is then not estimable).

    Notes
    -----
    Fat oxidation is computed by Frayn's equation for every row with RER < 1.0; the row with
    the highest rate is FATmax. On a ramp this is an estimate only (steady-state stages are the
    usual protocol).

    References
    ----------
    Frayn KN. J Appl Physiol 1983;55:628-634 (from memory).
    Achten J, Gleeson M, Jeukendrup AE. Determination of the exercise intensity that elicits
    maximal fat oxidation. Med Sci Sports Exerc 2002;34:92-97 (from memory).
    """
    require(vo2_peak_ml_min is None or (math.isfinite(vo2_peak_ml_min) and vo2_peak_ml_min > 0),
            "vo2_peak_ml_min", "a peak VO2 above 0 mL/min, or nothing", vo2_peak_ml_min)
    t, vo2, vco2 = (as_float_array(n, a) for n, a in (("t_s", t_s), ("vo2_ml_min", vo2_ml_min), ("vco2_ml_min", vco2_ml_min)))
    finite_columns(("t_s", "vo2_ml_min", "vco2_ml_min"), t, vo2, vco2)  # equal lengths
    usable = np.isfinite(t) & np.isfinite(vo2) & np.isfinite(vco2)
    need_points(int(usable.sum()), 1, "FATmax")
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = usable & (vo2 > 0) & (vco2 / vo2 < FRAYN_MAX_RER)
    if not ok.any():
        return None
    fat = np.where(ok, fat_oxidation_g_min(vo2, vco2), -np.inf)
    i = int(np.argmax(fat))
    pct = 100.0 * vo2[i] / vo2_peak_ml_min if vo2_peak_ml_min else None
    return FatMax(float(fat[i]), float(vo2[i]), pct, float(t[i]), i)
