"""Metabolic equivalents."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from analysis.indices._arrays import measured

#: Reader-facing method sentence (shown under ``methods``).
METS_METHOD = "VO2peak per kg / 3.5 mL/kg/min (common practice)"

#: O2 uptake of one MET, mL/kg/min (common practice).
ML_KG_MIN_PER_MET = 3.5


def mets(vo2_ml_kg_min: ArrayLike) -> float | np.ndarray:
    """O2 uptake expressed in metabolic equivalents.

    Parameters
    ----------
    vo2_ml_kg_min : float or array_like
        O2 uptake per kg body mass, mL/kg/min.

    Returns
    -------
    float or numpy.ndarray
        METs (dimensionless); 1 MET = 3.5 mL/kg/min.

    References
    ----------
    Jetté M, Sidney K, Blümchen G. Metabolic equivalents (METS) in exercise testing, exercise
    prescription, and evaluation of functional capacity. Clin Cardiol 1990;13:555-565
    (from memory; 3.5 mL/kg/min is common practice).

    Examples
    --------
    >>> mets(35.0)
    10.0
    """
    out = measured("vo2_ml_kg_min", vo2_ml_kg_min) / ML_KG_MIN_PER_MET
    return float(out) if out.ndim == 0 else out
