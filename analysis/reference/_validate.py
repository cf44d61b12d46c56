"""Private coercers for the reference equations: one standard message per bad parameter."""

from __future__ import annotations

import math

from analysis.errors import InvalidParameter, OutsideDerivationRange

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


def age_in_derivation_range(age_y: object, age_range_y: tuple[float, float], source: str) -> float:
    """``age_y`` as a float inside the ages an equation set was derived from, never extrapolated.

    ``source`` names the set in the message (``"Jones et al. 1985"``); an age outside
    ``age_range_y`` is :class:`OutsideDerivationRange`, one that is no age at all
    :class:`InvalidParameter`.
    """
    age = number_in("age_y", age_y, 5, 110, "years")
    low, high = age_range_y
    if not low <= age <= high:
        raise OutsideDerivationRange(
            "age_y",
            f"an age within {low:g}–{high:g} years, the ages {source} were derived from (no "
            "extrapolation; choose another reference set)",
            age_y,
        )
    return age


def cycle_only(mode: object, source: str) -> None:
    """Refuse any test but a cycle test for a set derived on a cycle ergometer (named by ``source``)."""
    if mode_code(mode) != "cycle":
        raise OutsideDerivationRange("mode", f"a cycle test ({source} were derived on a cycle ergometer)", mode)
