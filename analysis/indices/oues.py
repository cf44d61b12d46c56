"""Oxygen uptake efficiency slope (OUES)."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from analysis.indices._arrays import finite_columns, need_points
from analysis.indices._fit import LineFit, fit_line

#: Reader-facing method sentence (shown under ``methods``).
OUES_METHOD = "slope of VO2 (mL/min) on log10 VE (L/min) over the whole exercise phase (Baba et al. 1996)"


def oues(vo2_ml_min: ArrayLike, ve_l_min: ArrayLike) -> LineFit:
    """Oxygen uptake efficiency slope: VO2 against log10 of minute ventilation.

    Parameters
    ----------
    vo2_ml_min : array_like
        O2 uptake, mL/min.
    ve_l_min : array_like
        Minute ventilation, L/min. Rows with VE ≤ 0 or a non-finite value are ignored.

    Returns
    -------
    LineFit
        ``slope`` is the OUES in mL/min of VO2 per tenfold increase of VE (L/min).

    Notes
    -----
    ``VO2 = a * log10(VE) + b``; OUES = ``a``. It needs no maximal effort and is usually taken
    over the whole exercise phase.

    References
    ----------
    Baba R, Nagashima M, Goto M, et al. Oxygen uptake efficiency slope: a new index of
    cardiorespiratory functional reserve derived from the relation between oxygen uptake and
    minute ventilation during incremental exercise. J Am Coll Cardiol 1996;28:1567-1572
    (from memory).

    Examples
    --------
    >>> round(oues([500, 2500, 4500], [10, 100, 1000]).slope, 1)
    2000.0
    """
    vo2, ve = finite_columns(("vo2_ml_min", "ve_l_min"), vo2_ml_min, ve_l_min)
    keep = ve > 0
    need_points(int(keep.sum()), 3, "The OUES")
    return fit_line(np.log10(ve[keep]), vo2[keep], what="OUES")
