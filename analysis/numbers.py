"""Plain numbers from loosely typed values (metadata, result dicts, data-frame cells)."""

from __future__ import annotations

import math
from typing import Any


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
