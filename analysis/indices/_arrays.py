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


def as_float_array(name: str, values: ArrayLike) -> NDArray[np.float64]:
    """``values`` as a 1-D float array, or :class:`InvalidParameter` naming ``name``."""
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InvalidParameter(name, "a sequence of numbers", type(values).__name__) from exc
    if arr.ndim == 0:
        arr = arr.reshape(1)
    if arr.ndim != 1:
        raise InvalidParameter(name, "a one-dimensional sequence", f"shape {arr.shape}")
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
