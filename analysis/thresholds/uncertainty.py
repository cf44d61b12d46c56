"""90 % intervals for a breakpoint from the profile of the fit's error over the break position.

For a fit with a break (two lines, or three with the turn as the second break), the error
profile is the smallest total squared error with the break at each possible position. The
break positions whose error lies within an F-based margin of the best form the interval
(Hudson 1966; Lerman 1980, who proposed exactly this grid-search profile for the join point of
a segmented regression). The margin is scaled by :data:`PROFILE_INFLATION`, measured on the
project simulator, because averaged breath data are neither independent (running means, CO2
kinetics) nor exactly piecewise linear, both of which make the textbook margin too narrow.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.special import fdtri

#: Confidence level of every threshold interval.
CI_LEVEL = 0.90
#: Multiplier of the F margin (1 = the textbook profile interval). Calibrated on the project
#: simulator's suite of kinds (docs/thresholds.md, "Uncertainty"): the stated 90 % interval
#: should hold the planted threshold in 85-95 % of simulated tests.
PROFILE_INFLATION = 3.0
#: A threshold whose 90 % VO2 interval is wider than this fraction of the highest averaged VO2
#: of exercise is "not determinable" (ours: a reading uncertain by more than +-20 % of peak VO2
#: is not one a reviewer would sign; measured on the simulator in docs/thresholds.md).
MAX_CI_FRACTION = 0.40


def profile_accept(
    profile: np.ndarray,
    *,
    n_points: int,
    n_params: int,
    level: float = CI_LEVEL,
    inflation: float | None = None,
) -> np.ndarray | None:
    """Break positions inside the profile interval (a boolean mask over ``profile``).

    Parameters
    ----------
    profile : numpy.ndarray
        Smallest total squared error with the break at each position (``inf`` where no
        admissible fit exists).
    n_points : int
        Points in the fit.
    n_params : int
        Parameters of the fit (4 for two free lines, 6 for three).
    level : float
        Confidence level (default 0.90).
    inflation : float, optional
        Multiplier of the margin; default :data:`PROFILE_INFLATION`.

    Returns
    -------
    numpy.ndarray or None
        ``profile <= SSE_min * (1 + inflation * F(level; 1, n - p) / (n - p))``; ``None``
        when there are too few points or no finite error.

    Notes
    -----
    With ``s^2 = SSE_min / (n - p)`` the residual variance of the best fit, a break position
    ``k`` is kept when ``(SSE(k) - SSE_min) / s^2 <= F(level; 1, n - p)``: the
    extra-sum-of-squares F test of the break position alone (one parameter), inverted.

    References
    ----------
    Hudson DJ (1966). Fitting segmented curves whose join points have to be estimated. J Am
    Stat Assoc 61:1097-1129 (from memory).
    Lerman PM (1980). Fitting segmented regression models by grid search. Appl Stat 29:77-84
    (from memory).

    Examples
    --------
    >>> import numpy as np
    >>> profile_accept(np.array([14.0, 10.5, 10.0, 10.2, 30.0]), n_points=24, n_params=4).tolist()
    [False, True, True, True, False]
    """
    finite = np.isfinite(profile)
    dof = n_points - n_params
    if dof <= 0 or not finite.any():
        return None
    sse_min = float(np.min(profile[finite]))
    k = PROFILE_INFLATION if inflation is None else inflation
    crit = float(fdtri(1, dof, level))
    limit = sse_min * (1.0 + k * crit / dof) + 1e-12 * max(1.0, abs(sse_min))
    return finite & (profile <= limit)


def hull(values: np.ndarray, *, including: float | None = None) -> tuple[float, float] | None:
    """Smallest and largest finite value (and ``including``), or ``None`` without any."""
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if including is not None and math.isfinite(including):
        v = np.append(v, including)
    if v.size == 0:
        return None
    return float(v.min()), float(v.max())
