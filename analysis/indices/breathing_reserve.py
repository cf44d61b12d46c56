"""Breathing reserve: how much of the maximal voluntary ventilation was left unused."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from analysis.errors import require
from analysis.records import described

#: Reader-facing method sentence (shown under ``methods``).
BREATHING_RESERVE_METHOD = "MVV - peak VE; MVV measured or FEV1 × 40 (ATS/ACCP 2003)"

#: MVV estimated from FEV1 (L) times this factor (common practice).
MVV_PER_FEV1 = 40.0


@dataclass(frozen=True)
class BreathingReserve:
    """Breathing reserve at peak exercise.

    Attributes
    ----------
    mvv_l_min : float
        Maximal voluntary ventilation used, L/min.
    mvv_source : str
        ``"measured"`` (given) or ``"fev1_x40"`` (estimated as FEV1 × 40).
    reserve_l_min : float
        ``MVV - VE peak``, L/min.
    reserve_pct : float
        ``100 * (MVV - VE peak) / MVV``, %.
    """

    mvv_l_min: float = described(unit="L/min", description="maximal voluntary ventilation used")
    mvv_source: str = described(description="`measured` or `fev1_x40` (FEV1 × 40, common practice)")
    reserve_l_min: float = described(unit="L/min", description="MVV - peak VE")
    reserve_pct: float = described(unit="%", description="100 · (MVV - peak VE) / MVV")


def breathing_reserve(
    ve_peak_l_min: float, *, mvv_l_min: float | None = None, fev1_l: float | None = None
) -> BreathingReserve | None:
    """Breathing reserve from peak ventilation and MVV (given, or ≈ FEV1 × 40).

    Parameters
    ----------
    ve_peak_l_min : float
        Highest averaged minute ventilation during exercise, L/min.
    mvv_l_min : float, optional, keyword-only
        Measured maximal voluntary ventilation, L/min. Takes precedence over ``fev1_l``.
    fev1_l : float, optional, keyword-only
        Forced expiratory volume in 1 s, L; MVV is then estimated as ``40 * FEV1``.

    Returns
    -------
    BreathingReserve or None
        ``None`` when neither MVV nor FEV1 is known.

    Notes
    -----
    A reserve below about 15 % (or 11 L/min) at peak suggests a ventilatory limit (common
    practice).

    References
    ----------
    ATS/ACCP Statement on cardiopulmonary exercise testing. Am J Respir Crit Care Med
    2003;167:211-277 (MVV ≈ FEV1 × 40 and the reserve definition, from memory).

    Examples
    --------
    >>> breathing_reserve(90.0, fev1_l=3.0).reserve_pct
    25.0
    """
    require(np.isfinite(ve_peak_l_min) and ve_peak_l_min > 0, "ve_peak_l_min", "a ventilation > 0 L/min", ve_peak_l_min)
    if mvv_l_min is not None:
        require(np.isfinite(mvv_l_min) and mvv_l_min > 0, "mvv_l_min", "a ventilation > 0 L/min", mvv_l_min)
        mvv, source = float(mvv_l_min), "measured"
    elif fev1_l is not None:
        require(np.isfinite(fev1_l) and fev1_l > 0, "fev1_l", "a volume > 0 L", fev1_l)
        mvv, source = MVV_PER_FEV1 * float(fev1_l), "fev1_x40"
    else:
        return None
    reserve = mvv - float(ve_peak_l_min)
    return BreathingReserve(mvv, source, reserve, 100.0 * reserve / mvv)
