"""Times as a reader reads them: ``m:ss`` (``h:mm:ss`` from an hour) on pages, charts and reports.

Exports keep seconds (``t_s``); only what a person reads is formatted here.
"""

from __future__ import annotations

import math
from typing import Any


def clock_text(seconds: Any) -> str:
    """``754`` -> ``'12:34'``; ``3725`` -> ``'1:02:05'``; ``-5`` -> ``'-0:05'``; missing -> ``'–'``.

    Seconds are rounded to the nearest whole second.

    Examples
    --------
    >>> clock_text(754.4)
    '12:34'
    >>> clock_text(3725)
    '1:02:05'
    """
    try:
        value = float(seconds)
    except (TypeError, ValueError):
        return "–"
    if not math.isfinite(value):
        return "–"
    sign = "-" if value < 0 else ""
    total = round(abs(value))
    hours, rest = divmod(total, 3600)
    minutes, secs = divmod(rest, 60)
    if hours:
        return f"{sign}{hours}:{minutes:02d}:{secs:02d}"
    return f"{sign}{minutes}:{secs:02d}"


def clock_ticks(start_s: float, end_s: float, *, max_ticks: int = 8) -> tuple[list[float], list[str]]:
    """Round tick positions (s) and their ``m:ss`` labels for a time axis from ``start_s`` to ``end_s``.

    Steps are whole minutes (or 15/30 s on short spans), so labels read ``2:00``, ``4:00``, ...
    """
    span = max(float(end_s) - float(start_s), 1.0)
    steps = (15, 30, 60, 120, 180, 300, 600, 900, 1800, 3600)
    step = next((s for s in steps if span / s <= max_ticks), steps[-1])
    first = math.ceil(float(start_s) / step) * step
    values = []
    v = first
    while v <= end_s + 1e-9:
        values.append(float(v))
        v += step
    return values, [clock_text(v) for v in values]
