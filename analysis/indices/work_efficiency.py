"""ΔVO2/ΔWR: the rise of O2 uptake per watt on a cycle ramp."""

from __future__ import annotations

from numpy.typing import ArrayLike

from analysis.errors import require
from analysis.indices._arrays import finite_columns, need_points
from analysis.indices._fit import LineFit, fit_line

#: Reader-facing method sentence (shown under ``methods``).
VO2_WORK_RATE_SLOPE_METHOD = (
    "least-squares slope of VO2 on work rate over the ramp, first 60 s left out (ATS/ACCP 2003)"
)

#: Seconds skipped at the start of the ramp while VO2 catches up with the work rate
#: (common practice: about the VO2 response time constant, ~40-60 s).
DEFAULT_LAG_S = 60.0


def vo2_work_rate_slope(
    t_s: ArrayLike,
    vo2_ml_min: ArrayLike,
    work_w: ArrayLike,
    *,
    lag_s: float = DEFAULT_LAG_S,
) -> LineFit:
    """Slope of VO2 against work rate over an incremental cycle ramp (ΔVO2/ΔWR).

    Parameters
    ----------
    t_s : array_like
        Time, s, of the ramp (exercise) rows only.
    vo2_ml_min : array_like
        O2 uptake, mL/min.
    work_w : array_like
        Work rate, W.
    lag_s : float, keyword-only
        Seconds after the first ramp row that are left out of the fit (default 60 s).

    Returns
    -------
    LineFit
        ``slope`` in mL/min per W; ``intercept`` in mL/min.

    Raises
    ------
    AnalysisError
        Fewer than 5 usable rows after the lag, or a constant work rate.

    Notes
    -----
    VO2 lags a linearly rising work rate by roughly its response time, so the first ~60 s of
    the ramp are excluded and a straight line is fitted to the rest. Healthy adults give about
    10 mL/min/W; values well below 8.5 suggest impaired O2 delivery or use (common practice).

    References
    ----------
    American Thoracic Society / American College of Chest Physicians. ATS/ACCP Statement on
    cardiopulmonary exercise testing. Am J Respir Crit Care Med 2003;167:211-277.
    """
    require(lag_s >= 0, "lag_s", "a number of seconds ≥ 0", lag_s)
    t, vo2, wr = finite_columns(("t_s", "vo2_ml_min", "work_w"), t_s, vo2_ml_min, work_w)
    need_points(t.size, 5, "ΔVO2/ΔWR")
    keep = t >= t.min() + lag_s
    need_points(int(keep.sum()), 5, "ΔVO2/ΔWR (after leaving out the first ramp seconds)")
    return fit_line(wr[keep], vo2[keep], what="ΔVO2/ΔWR")
