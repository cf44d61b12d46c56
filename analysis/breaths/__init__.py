"""Breath cleaning and averaging.

Public API
----------
Outliers
    :func:`find_outlier_breaths`, :func:`exclude_breaths`
Averaging
    :class:`AveragingSpec`, :data:`DEFAULT_AVERAGING`, :func:`average_breaths`
"""

from analysis.breaths.averaging import DEFAULT_AVERAGING, METHODS, AveragingSpec, average_breaths
from analysis.breaths.cleaning import CleanedBreaths, ExcludedBreath, clean_breaths
from analysis.breaths.derived import with_derived_series
from analysis.breaths.outliers import OUTLIER_COLUMNS, exclude_breaths, find_outlier_breaths

__all__ = [
    "CleanedBreaths",
    "ExcludedBreath",
    "clean_breaths",
    "with_derived_series",
    "AveragingSpec",
    "DEFAULT_AVERAGING",
    "METHODS",
    "OUTLIER_COLUMNS",
    "average_breaths",
    "exclude_breaths",
    "find_outlier_breaths",
]
