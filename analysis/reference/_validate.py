"""Private coercers for the reference equations: one standard message per bad parameter."""

from __future__ import annotations

import math

from analysis.errors import InvalidParameter

#: Accepted spellings of sex, mapped to the two codes used by the equations.
SEX_CODES: dict[str, str] = {
    "m": "male",
    "male": "male",
    "man": "male",
    "f": "female",
    "female": "female",
    "woman": "female",
}

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


def sex_code(value: object) -> str:
    """``'male'`` or ``'female'`` from the usual spellings."""
    key = str(value).strip().lower() if value is not None else ""
    if key not in SEX_CODES:
        raise InvalidParameter("sex", "'male' or 'female' (or 'm' / 'f')", value)
    return SEX_CODES[key]


def mode_code(value: object) -> str:
    """``'treadmill'`` or ``'cycle'`` from the usual spellings."""
    key = str(value).strip().lower().replace(" ", "_") if value is not None else ""
    if key not in MODE_CODES:
        raise InvalidParameter("mode", "'treadmill' or 'cycle'", value)
    return MODE_CODES[key]
