"""Accepted ranges of blood conditions, declared once, and the coercers that enforce them.

The limits are generous physiological bounds for human blood (common practice): values
outside them are either typing mistakes or conditions the curve models were never fitted to.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import InvalidParameter


@dataclass(frozen=True)
class Limit:
    """Closed interval ``[low, high]`` with the unit used in messages."""

    low: float
    high: float
    unit: str

    def describe(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        return f"a number from {self.low:g} to {self.high:g}{unit}"


#: Accepted ranges of every condition (common practice: human blood in life or in a sample).
LIMITS: dict[str, Limit] = {
    "po2_mmhg": Limit(0.0, 2000.0, "mmHg"),
    "ph": Limit(6.8, 7.8, ""),
    "temperature_c": Limit(20.0, 45.0, "°C"),
    "pco2_mmhg": Limit(5.0, 150.0, "mmHg"),
    "dpg_mmol_l": Limit(0.0, 15.0, "mmol/L"),
    "base_excess_mmol_l": Limit(-30.0, 30.0, "mmol/L"),
    "p50_mmhg": Limit(5.0, 100.0, "mmHg"),
    "hill_n": Limit(1.0, 5.0, ""),
    "hb_g_dl": Limit(3.0, 25.0, "g/dL"),
    "huefner_ml_g": Limit(1.30, 1.40, "mL O2/g"),
    "spo2_pct": Limit(50.0, 100.0, "%"),
    "vo2_ml_min": Limit(0.0, 10000.0, "mL/min"),
    "q_l_min": Limit(0.5, 60.0, "L/min"),
    "hr_bpm": Limit(20.0, 260.0, "beats/min"),
    "pct_vo2_peak": Limit(0.0, 120.0, "%"),
    "pb_mmhg": Limit(200.0, 800.0, "mmHg"),
    "fio2": Limit(0.10, 1.0, ""),
    "altitude_m": Limit(-500.0, 9000.0, "m"),
    "aa_gradient_mmhg": Limit(0.0, 80.0, "mmHg"),
    "rer": Limit(0.5, 2.0, ""),
    "ph2o_mmhg": Limit(0.0, 100.0, "mmHg"),
    "cohb_fraction": Limit(0.0, 0.6, "(fraction of total Hb, e.g. 0.10 for 10 %)"),
    "methb_fraction": Limit(0.0, 0.6, "(fraction of total Hb, e.g. 0.02 for 2 %)"),
    "dmo2_ml_min_mmhg": Limit(0.5, 2000.0, "mL/min/mmHg"),
}


def scalar(name: str, value: object) -> float:
    """Return ``value`` as a float inside ``LIMITS[name]``, else raise InvalidParameter."""
    limit = LIMITS[name]
    try:
        number = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InvalidParameter(name, limit.describe(), value) from None
    if not math.isfinite(number) or number < limit.low or number > limit.high:
        raise InvalidParameter(name, limit.describe(), value)
    return number


def array(name: str, value: object) -> np.ndarray:
    """Return ``value`` as a float array whose every element lies inside ``LIMITS[name]``."""
    limit = LIMITS[name]
    try:
        values = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InvalidParameter(name, limit.describe(), value) from None
    bad = ~np.isfinite(values) | (values < limit.low) | (values > limit.high)
    if np.any(bad):
        first = values[bad].flat[0] if values.ndim else float(values)
        raise InvalidParameter(name, limit.describe() + " (every element)", float(first))
    return values


def fraction_open(name: str, value: object) -> np.ndarray:
    """Return ``value`` as a float array strictly between 0 and 1."""
    try:
        values = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InvalidParameter(name, "a fraction strictly between 0 and 1", value) from None
    bad = ~np.isfinite(values) | (values <= 0.0) | (values >= 1.0)
    if np.any(bad):
        first = values[bad].flat[0] if values.ndim else float(values)
        raise InvalidParameter(name, "a fraction strictly between 0 and 1 (e.g. 0.75, not 75)", float(first))
    return values


def as_output(values: np.ndarray, like: ArrayLike) -> float | np.ndarray:
    """A float when the caller passed a scalar, an array otherwise."""
    if np.ndim(like) == 0:
        return float(values)
    return values
