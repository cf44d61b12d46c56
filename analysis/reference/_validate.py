"""Private coercers for the reference equations: one standard message per bad parameter."""

from __future__ import annotations

import math

from analysis.errors import InvalidParameter

#: Accepted spellings of the exercise mode.
MODE_CODES: dict[str, str] = {
    "treadmill": "treadmill",
    "run": "treadmill",
    "walk": "treadmill",
    "cycle": "cycle",
    "bike": "cycle",
    "cycle_ergometer": "cycle",
    "ergometer": "cycle",
}


def number_in(name: str, value: object, low: float, high: float, unit: str) -> float:
    """``value`` as a float within ``[low, high]`` or :class:`InvalidParameter`."""
    try:
        f = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InvalidParameter(name, f"a number between {low:g} and {high:g} {unit}", value) from None
    if not math.isfinite(f) or not low <= f <= high:
        raise InvalidParameter(name, f"a number between {low:g} and {high:g} {unit}", value)
    return f


def mode_code(value: object) -> str:
    """``'treadmill'`` or ``'cycle'`` from the usual spellings."""
    key = str(value).strip().lower().replace(" ", "_") if value is not None else ""
    if key not in MODE_CODES:
        raise InvalidParameter("mode", "'treadmill' or 'cycle'", value)
    return MODE_CODES[key]
