"""Private coercers shared by the index functions: arrays in, finite pairs out."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

from analysis.errors import AnalysisError, InvalidParameter


def present_values(frame: pd.DataFrame, name: str) -> NDArray[np.float64] | None:
    """Column ``name`` of ``frame`` as floats, or ``None`` when it is absent or holds no value."""
    if name not in frame:
        return None
    values = frame[name].to_numpy(dtype=float)
    return values if (~np.isnan(values)).any() else None


#: Name endings of quantities that are never negative (flows, rates, masses; units in names).
NON_NEGATIVE_ENDINGS: tuple[str, ...] = ("_ml_min", "_l_min", "_ml_kg_min", "_bpm", "_kg", "_ml_beat", "_w")


def as_float_array(name: str, values: ArrayLike) -> NDArray[np.float64]:
    """``values`` as a 1-D float array, or :class:`InvalidParameter` naming ``name``.

    Missing values (NaN) are kept; a negative value of a quantity that cannot be negative (its
    name ends in a flow, rate or mass unit, :data:`NON_NEGATIVE_ENDINGS`) is refused.
    """
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InvalidParameter(name, "a sequence of numbers", type(values).__name__) from exc
    if arr.ndim == 0:
        arr = arr.reshape(1)
    if arr.ndim != 1:
        raise InvalidParameter(name, "a one-dimensional sequence", f"shape {arr.shape}")
    if name.endswith(NON_NEGATIVE_ENDINGS):
        negative = np.flatnonzero(arr < 0)
        if negative.size:
            raise InvalidParameter(name, "values of zero or more (a negative value is not a measurement)", float(arr[negative[0]]))
    return arr


def measured(name: str, values: ArrayLike) -> NDArray[np.float64]:
    """A measured quantity (a number or an array of any shape) as floats; missing values (NaN)
    are kept, a negative value of a never-negative quantity is :class:`InvalidParameter`."""
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InvalidParameter(name, "a number or a sequence of numbers", type(values).__name__) from exc
    if name.endswith(NON_NEGATIVE_ENDINGS):
        negative = np.flatnonzero(arr.reshape(-1) < 0)
        if negative.size:
            raise InvalidParameter(name, "values of zero or more (a negative value is not a measurement)",
                                   float(arr.reshape(-1)[negative[0]]))
    return arr


def finite_columns(
    names: Sequence[str], *arrays: ArrayLike
) -> tuple[NDArray[np.float64], ...]:
    """Coerce equal-length arrays and keep only rows where every array is finite."""
    out = [as_float_array(n, a) for n, a in zip(names, arrays, strict=True)]
    lengths = {a.size for a in out}
    if len(lengths) > 1:
        sizes = ", ".join(f"{n}={a.size}" for n, a in zip(names, out, strict=True))
        raise InvalidParameter("/".join(names), "sequences of equal length", sizes)
    if not out:
        return ()
    mask = np.ones(out[0].size, dtype=bool)
    for a in out:
        mask &= np.isfinite(a)
    return tuple(a[mask] for a in out)


def need_points(n: int, minimum: int, what: str) -> None:
    """Raise :class:`AnalysisError` when fewer than ``minimum`` usable points remain."""
    if n < minimum:
        raise AnalysisError(
            f"{what} needs at least {minimum} usable data points but only {n} were found — "
            "check that the exercise phase holds enough breaths with valid values."
        )
