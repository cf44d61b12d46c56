"""Private helpers: breath series on a regular time grid and time-based centred means."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import require


def on_grid(t_s: ArrayLike, values: ArrayLike, *, t_from_s: float, t_to_s: float, step_s: float = 1.0) -> tuple[np.ndarray, np.ndarray]:
    """``values`` linearly interpolated on a regular grid from ``t_from_s`` to ``t_to_s``.

    Breaths with a missing value are left out before interpolating; an empty grid comes back
    when fewer than two breaths remain inside the span.
    """
    t = np.asarray(t_s, dtype=float)
    y = np.asarray(values, dtype=float)
    require(t.shape == y.shape, "values", f"as many values as times ({t.size})", y.size)
    ok = np.isfinite(t) & np.isfinite(y)
    t, y = t[ok], y[ok]
    inside = (t >= t_from_s) & (t <= t_to_s)
    if inside.sum() < 2 or t_to_s <= t_from_s:
        return np.empty(0), np.empty(0)
    grid = np.arange(t_from_s, t_to_s + 1e-9, step_s)
    order = np.argsort(t, kind="stable")
    return grid, np.interp(grid, t[order], y[order])


def centred_mean(values: np.ndarray, *, width_n: int) -> np.ndarray:
    """Centred moving mean of ``width_n`` grid points; near the ends the window shrinks to what
    exists (never padded with invented values)."""
    n = values.size
    if n == 0:
        return values.copy()
    half = max(int(width_n) // 2, 0)
    csum = np.concatenate(([0.0], np.cumsum(values)))
    idx = np.arange(n)
    lo = np.clip(idx - half, 0, n)
    hi = np.clip(idx + half + 1, 0, n)
    return (csum[hi] - csum[lo]) / (hi - lo)


def inside_means(values: np.ndarray, *, width_n: int) -> np.ndarray:
    """Means of every full window of ``width_n`` consecutive grid points (windows wholly inside)."""
    if values.size < width_n or width_n < 1:
        return np.empty(0)
    csum = np.concatenate(([0.0], np.cumsum(values)))
    return (csum[width_n:] - csum[:-width_n]) / width_n


def span_of(t_s: np.ndarray, labels: np.ndarray, phase: str) -> tuple[float, float] | None:
    """First and last time of the breaths labelled ``phase`` (``None`` when there are none)."""
    mask = labels == phase
    if not mask.any():
        return None
    times = t_s[mask]
    times = times[np.isfinite(times)]
    return (float(times.min()), float(times.max())) if times.size else None
