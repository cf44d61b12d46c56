"""Plain numbers from loosely typed values (metadata, result dicts, data-frame cells and columns)."""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd


def finite_or_none(value: Any) -> float | None:
    """``value`` as a finite float, or ``None`` when it is missing, not a number, NaN or infinite.

    Examples
    --------
    >>> finite_or_none("2.5"), finite_or_none(None), finite_or_none(float("nan")), finite_or_none("n/a")
    (2.5, None, None, None)
    """
    try:
        f = float(value)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def column_mean(frame: pd.DataFrame, name: str, mask: np.ndarray) -> float | None:
    """Mean of column ``name`` over the rows ``mask`` selects, missing values left out.

    ``None`` when the column is absent or holds no value in those rows.

    Examples
    --------
    >>> frame = pd.DataFrame({"hr_bpm": [60.0, float("nan"), 70.0, 150.0]})
    >>> column_mean(frame, "hr_bpm", np.array([True, True, True, False]))
    65.0
    >>> column_mean(frame, "work_w", np.array([True, True, True, False])) is None
    True
    """
    if name not in frame:
        return None
    values = frame[name].to_numpy(dtype=float)[mask]
    return float(np.nanmean(values)) if (~np.isnan(values)).any() else None
