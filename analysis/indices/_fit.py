"""Ordinary least-squares line used by the slope-type indices."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from analysis.errors import AnalysisError


@dataclass(frozen=True)
class LineFit:
    """``y = slope * x + intercept`` fitted by least squares.

    Attributes
    ----------
    slope, intercept : float
        In the units of the calling function (stated in its docstring).
    r2 : float
        Coefficient of determination (NaN when ``y`` is constant).
    n : int
        Number of points used.
    """

    slope: float
    intercept: float
    r2: float
    n: int


def fit_line(x: NDArray[np.float64], y: NDArray[np.float64], *, what: str) -> LineFit:
    """Least-squares line through finite ``(x, y)`` pairs (already filtered by the caller)."""
    x_mean = float(x.mean())
    y_mean = float(y.mean())
    dx = x - x_mean
    sxx = float(dx @ dx)
    if sxx <= 0.0:
        raise AnalysisError(
            f"{what}: the x values do not vary, so no line can be fitted — "
            "the exercise data may be too short or constant."
        )
    dy = y - y_mean
    slope = float(dx @ dy) / sxx
    intercept = y_mean - slope * x_mean
    syy = float(dy @ dy)
    resid = dy - slope * dx
    r2 = 1.0 - float(resid @ resid) / syy if syy > 0 else float("nan")
    return LineFit(slope=slope, intercept=intercept, r2=r2, n=int(x.size))
