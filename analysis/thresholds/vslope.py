"""V-slope: the two-line fit of VCO2 against VO2 (Beaver, Wasserman and Whipp 1986)."""

from __future__ import annotations

import math

import numpy as np
from scipy.special import fdtrc

from analysis.errors import InvalidParameter, require
from analysis.thresholds.results import VSlopeFit
from analysis.thresholds.segments import SplitTable, split_table
from analysis.thresholds.uncertainty import hull, profile_accept

#: Acceptance rules for a V-slope breakpoint. Beaver et al. (1986) require the upper slope to
#: exceed the lower by more than 0.1 and the lower slope to be near 1 (from memory); the
#: accepted band for "near 1" (0.6-1.3) is ours, wide enough for the CO2 stored early in a ramp.
MIN_SLOPE_INCREASE = 0.1
LOWER_SLOPE_RANGE = (0.6, 1.3)
#: The two lines must beat one line by an F test at this level. Searching every split inflates
#: the F statistic, so a strict level is used (common practice for change-point searches).
F_TEST_ALPHA = 0.001


def f_test_p(sse_one_line: float, sse_two_lines: float, n: int) -> float:
    """p-value of the F test of two independent lines (4 parameters) against one line (2).

    ``F = ((SSE1 - SSE2) / 2) / (SSE2 / (n - 4))`` with 2 and n - 4 degrees of freedom
    (extra-sum-of-squares F test, common practice).
    """
    dof = n - 4
    if dof <= 0:
        return 1.0
    if sse_two_lines <= 0.0:
        return 0.0 if sse_one_line > 0 else 1.0
    f_stat = ((sse_one_line - sse_two_lines) / 2.0) / (sse_two_lines / dof)
    if f_stat < 0.0:  # below the support of F: sf = 1, as scipy.stats.f.sf gives
        return 1.0
    # the survival function of F(2, dof) itself (what scipy.stats.f.sf evaluates, without
    # the distribution object's argument handling)
    return float(fdtrc(2, dof, f_stat))


def vslope_fit(
    vo2_ml_min: np.ndarray,
    vco2_ml_min: np.ndarray,
    *,
    min_segment: int = 5,
) -> VSlopeFit:
    """Exhaustive two-line least-squares fit of VCO2 on VO2 (the V-slope method).

    Parameters
    ----------
    vo2_ml_min, vco2_ml_min : array_like
        Paired VO2 and VCO2 in mL/min (averaged data, any order; NaN pairs are dropped).
    min_segment : int, default 5
        Fewest points allowed in each line.

    Returns
    -------
    VSlopeFit
        The best split and both lines; ``valid`` with ``reason`` after the acceptance rules.

    Notes
    -----
    The points are sorted by VO2. For every split point (between two different VO2 values,
    with at least ``min_segment`` points each side) two independent least-squares lines are
    fitted, one below and one above. Cumulative sums of x, y, x^2, xy, y^2 make each split
    O(1), so the whole search is O(n) after the O(n log n) sort. Among the splits that meet
    Beaver's slope rules -- (1) the upper slope exceeds the lower by more than 0.1 and (2) the
    lower slope is near 1 (0.6-1.3) -- the one with the smallest total squared error wins
    (when none meets them, the best free split is returned, invalid, with the rule it breaks).
    The breakpoint is where the two lines cross. The winner must also (3) explain the data
    better than one line (F test, alpha = 0.001, 2 and n - 4 degrees of freedom).
    ``ci90_vo2_ml_min`` is the 90 % profile interval of the break over the splits meeting
    (1)-(2) (:func:`analysis.thresholds.uncertainty.profile_accept`, Lerman 1980).

    References
    ----------
    Beaver WL, Wasserman K, Whipp BJ (1986). A new method for detecting anaerobic threshold by
    gas exchange. J Appl Physiol 60:2020-2027.
    Lerman PM (1980). Fitting segmented regression models by grid search. Appl Stat 29:77-84
    (the profile interval of the join point; from memory).

    Examples
    --------
    >>> import numpy as np
    >>> vo2 = np.arange(1000.0, 3000.0, 50.0)
    >>> vco2 = np.where(vo2 < 2000, 0.95 * vo2, 1900 + 1.4 * (vo2 - 2000))
    >>> fit = vslope_fit(vo2, vco2)
    >>> round(fit.vo2_break_ml_min), fit.valid
    (2000, True)
    """
    x = np.asarray(vo2_ml_min, dtype=float).ravel()
    y = np.asarray(vco2_ml_min, dtype=float).ravel()
    for name, values in (("vo2_ml_min", x), ("vco2_ml_min", y)):
        require(not np.any(values < 0), name, "gas flows of 0 mL/min or more", float(np.min(values[values < 0], initial=0.0)))
    if x.shape != y.shape:
        raise InvalidParameter("vco2_ml_min", f"the same length as vo2_ml_min ({x.size})", y.size)
    require(isinstance(min_segment, (int, np.integer)) and min_segment >= 2, "min_segment", "a whole number of at least 2", min_segment)
    keep = np.flatnonzero(np.isfinite(x) & np.isfinite(y))
    order = keep[np.argsort(x[keep], kind="stable")]
    xs, ys = x[order], y[order]
    n = xs.size
    lo = float(xs[0]) if n else math.nan
    hi = float(xs[-1]) if n else math.nan
    lo_s, hi_s = LOWER_SLOPE_RANGE

    table = split_table(xs, ys, min_segment=int(min_segment))
    free = table.best() if table is not None else None
    fit = None
    rules = None
    if table is not None:
        with np.errstate(invalid="ignore"):
            rules = (table.s2 - table.s1 > MIN_SLOPE_INCREASE) & (table.s1 >= lo_s) & (table.s1 <= hi_s)
        fit = table.best(rules)
    if free is None:
        return VSlopeFit(
            -1, math.nan, math.nan, math.nan, math.nan, math.nan, math.nan, math.nan, False,
            f"too few points: {n} averaged points with VO2 and VCO2, at least {2 * min_segment} with different VO2 needed",
            0, n, lo, hi,
        )
    reason = ""
    if fit is None:  # no split meets the slope rules: report the best free split and why
        fit = free
        if fit.slope_above - fit.slope_below <= MIN_SLOPE_INCREASE:
            reason = (
                f"VCO2 against VO2 never steepens clearly: slope increase < {MIN_SLOPE_INCREASE:g} "
                f"(from {fit.slope_below:.2f} below the best break to {fit.slope_above:.2f} above it)"
            )
        else:
            reason = (
                f"lower slope far from 1: VCO2 against VO2 rises with a slope of {fit.slope_below:.2f} "
                f"below the break ({lo_s:g}-{hi_s:g} expected before VT1)"
            )
    else:
        p_value = f_test_p(fit.sse_one_line, fit.sse, n)
        if p_value >= F_TEST_ALPHA:
            reason = (
                "two lines describe VCO2 against VO2 no better than one straight line, so no break "
                f"was accepted (F test p = {p_value:.3g}; below {F_TEST_ALPHA:g} needed)"
            )
    xb = fit.x_cross
    yb = fit.slope_below * xb + fit.intercept_below
    ci = _profile_interval(table, rules, xs, xb) if table is not None and not reason else None
    return VSlopeFit(
        break_index=int(order[fit.k]),
        vo2_break_ml_min=float(xb),
        vco2_break_ml_min=float(yb),
        slope_below=fit.slope_below,
        intercept_below=fit.intercept_below,
        slope_above=fit.slope_above,
        intercept_above=fit.intercept_above,
        sse=fit.sse,
        valid=not reason,
        reason=reason,
        n_below=fit.k,
        n_above=n - fit.k,
        vo2_min_ml_min=lo,
        vo2_max_ml_min=hi,
        ci90_vo2_ml_min=ci,
    )


def _profile_interval(table: SplitTable, rules: np.ndarray | None, xs: np.ndarray, x_break: float) -> tuple[float, float] | None:
    """90 % profile interval of the break's x over the splits meeting the slope rules.

    A split at sorted position ``k`` puts the break between ``xs[k - 1]`` and ``xs[k]``; the
    interval runs from the lower point of the first accepted split to the upper point of the
    last (and always holds the break itself).
    """
    profile = np.where(rules, table.total, np.inf) if rules is not None else table.total
    keep = profile_accept(profile, n_points=xs.size, n_params=4)
    if keep is None or not keep.any():
        return None
    k = table.k[keep]
    return hull(np.array([xs[k.min() - 1], xs[k.max()]]), including=x_break)
