"""Least-squares line segments from prefix sums (the engine behind every breakpoint method).

For points sorted by x, the sums of x, y, x^2, xy and y^2 over any run of consecutive points
come from five cumulative sums, so the least-squares line and its residual sum of squares for
every run are O(1) each. A two-line fit over every split point is then O(n) after sorting, and
a three-line fit over every pair of split points is O(n^2) (used only on averaged data, where
n is a few hundred at most).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

import numpy as np


@dataclass(frozen=True)
class _Prefix:
    x0: float
    y0: float
    n: np.ndarray
    sx: np.ndarray
    sy: np.ndarray
    sxx: np.ndarray
    sxy: np.ndarray
    syy: np.ndarray


def prefix_sums(x: np.ndarray, y: np.ndarray) -> _Prefix:
    """Cumulative sums (with a leading 0) of centred x and y, for runs ``[a, b)``."""
    x0 = float(np.mean(x)) if x.size else 0.0
    y0 = float(np.mean(y)) if y.size else 0.0
    xc = x - x0
    yc = y - y0

    def cs(v: np.ndarray) -> np.ndarray:
        return np.concatenate([[0.0], np.cumsum(v)])

    return _Prefix(x0, y0, np.arange(x.size + 1, dtype=float), cs(xc), cs(yc), cs(xc * xc), cs(xc * yc), cs(yc * yc))


def run_fit(p: _Prefix, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Slope, intercept (in the original units) and SSE of the line through run ``[a, b)``.

    Runs whose x values are all equal get SSE = inf.
    """
    n = p.n[b] - p.n[a]
    with np.errstate(invalid="ignore", divide="ignore"):
        mx = (p.sx[b] - p.sx[a]) / n
        my = (p.sy[b] - p.sy[a]) / n
        cxx = (p.sxx[b] - p.sxx[a]) - n * mx * mx
        cxy = (p.sxy[b] - p.sxy[a]) - n * mx * my
        cyy = (p.syy[b] - p.syy[a]) - n * my * my
        ok = cxx > 1e-12 * max(1.0, float(p.sxx[-1]))
        slope = cxy / np.where(ok, cxx, np.nan)
        sse = np.where(ok, np.maximum(cyy - slope * cxy, 0.0), np.inf)
    # intercept in original units: y - y0 = slope * (x - x0) + (my - slope * mx)
    intercept = p.y0 + my - slope * (mx + p.x0)
    return slope, intercept, sse


@dataclass(frozen=True)
class TwoLine:
    """Best two-line split of sorted points: the upper line starts at sorted position ``k``."""

    k: int
    slope_below: float
    intercept_below: float
    slope_above: float
    intercept_above: float
    sse: float
    sse_one_line: float
    x_cross: float


def crossing(s1: float, b1: float, s2: float, b2: float, lo: float, hi: float) -> float:
    """x where two lines cross, kept inside ``[lo, hi]`` (midpoint when parallel)."""
    if not np.isfinite(s1 - s2) or abs(s1 - s2) < 1e-12:
        return 0.5 * (lo + hi)
    return float(np.clip((b2 - b1) / (s1 - s2), lo, hi))


@dataclass(frozen=True)
class SplitTable:
    """Both lines at every allowed split of points sorted by x (upper line from ``k``)."""

    xs: np.ndarray
    k: np.ndarray
    s1: np.ndarray
    b1: np.ndarray
    s2: np.ndarray
    b2: np.ndarray
    total: np.ndarray
    sse_one_line: float

    def best(self, mask: np.ndarray | None = None) -> TwoLine | None:
        """The split with the smallest total SSE among ``mask`` (all finite ones by default)."""
        ok = np.isfinite(self.total)
        if mask is not None:
            ok &= mask
        if not ok.any():
            return None
        j = int(np.argmin(np.where(ok, self.total, np.inf)))
        s1, b1, s2, b2 = float(self.s1[j]), float(self.b1[j]), float(self.s2[j]), float(self.b2[j])
        x_cross = crossing(s1, b1, s2, b2, float(self.xs[0]), float(self.xs[-1]))
        return TwoLine(int(self.k[j]), s1, b1, s2, b2, float(self.total[j]), self.sse_one_line, x_cross)


def split_table(xs: np.ndarray, ys: np.ndarray, *, min_segment: int) -> SplitTable | None:
    """Fit both lines at every split of points already sorted by x, in O(n).

    Splits between equal x values are not allowed. Returns ``None`` when no split leaves
    ``min_segment`` points on each side.
    """
    n = xs.size
    if n < 2 * min_segment:
        return None
    p = prefix_sums(xs, ys)
    k = np.arange(min_segment, n - min_segment + 1)
    k = k[xs[k - 1] < xs[k]]
    if k.size == 0:
        return None
    s1, b1, e1 = run_fit(p, np.zeros_like(k), k)
    s2, b2, e2 = run_fit(p, k, np.full_like(k, n))
    _, _, e_all = run_fit(p, np.array([0]), np.array([n]))
    return SplitTable(xs, k, s1, b1, s2, b2, e1 + e2, float(e_all[0]))


def best_two_lines(
    xs: np.ndarray,
    ys: np.ndarray,
    *,
    min_segment: int,
    admissible: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None,
) -> TwoLine | None:
    """Two-line least-squares fit over every split point of points already sorted by x.

    ``admissible(slope_below, slope_above)`` may return a boolean mask restricting the splits
    considered (e.g. "the upper line is steeper"). Returns ``None`` when no split leaves
    ``min_segment`` points on each side (or none is admissible).
    """
    table = split_table(xs, ys, min_segment=min_segment)
    if table is None:
        return None
    mask = None
    if admissible is not None:
        with np.errstate(invalid="ignore"):
            mask = np.asarray(admissible(table.s1, table.s2), dtype=bool)
    return table.best(mask)


@lru_cache(maxsize=64)
def _upper_pairs(size: int) -> tuple[np.ndarray, np.ndarray]:
    """Row and column indices of the upper triangle (diagonal included) of a size x size matrix."""
    a, b = np.triu_indices(size)
    a.flags.writeable = False
    b.flags.writeable = False
    return a, b


@dataclass(frozen=True)
class TurnUp:
    """Three-line fit in which the last line rises: the break into the rise and its size.

    ``rise`` is the rise of the last line from the break to the last point; ``t_stat_after``
    is the last line's slope divided by its standard error (from the pooled residual SD).
    """

    t_break: float
    slope_before: float
    slope_after: float
    rise: float
    resid_sd: float
    n_after: int
    t_stat_after: float


def best_turn_up(
    t: np.ndarray, y: np.ndarray, *, min_segment: int = 4, flat_fraction: float = 0.3
) -> TurnUp | None:
    """Find where a series turns upward: three free lines, the last one rising.

    The first two lines absorb an early fall and a flat stretch (e.g. VE/VCO2 falling at the
    start of exercise, then flat); the break between the second and third lines is the turn.
    Only splits whose third line rises and whose second line is at most ``flat_fraction`` as
    steep as the third are considered (a turn from level or falling into a rise, so the first
    of two successive rises is found, not the steeper second). ``t`` sorted.
    Returns ``None`` when no admissible split exists.
    """
    n = t.size
    m = min_segment
    if n < 3 * m:
        return None
    p = prefix_sums(t, y)
    i = np.arange(m, n - 2 * m + 1)  # end of first line
    j = np.arange(2 * m, n - m + 1)  # end of second line
    _, _, e1 = run_fit(p, np.zeros_like(i), i)
    s3, b3, e3 = run_fit(p, j, np.full_like(j, n))
    # Pairs (a, b) with j[b] - i[a] >= m are exactly b >= a (both ranges have the same length);
    # only last lines that rise can be admissible, so the middle line is fitted just for those.
    a_idx, b_idx = _upper_pairs(i.size)
    keep = s3[b_idx] > 0
    a_idx, b_idx = a_idx[keep], b_idx[keep]
    if a_idx.size == 0:
        return None
    s2, b2, e2 = run_fit(p, i[a_idx], j[b_idx])
    total = e1[a_idx] + e2 + e3[b_idx]
    admissible = np.isfinite(total) & (s2 <= flat_fraction * s3[b_idx])
    if not admissible.any():
        return None
    # first minimum in row-major (a, b) order, as a full-matrix argmin would give
    best = int(np.argmin(np.where(admissible, total, np.inf)))
    b = int(b_idx[best])
    jj = int(j[b])
    sb, bb = float(s2[best]), float(b2[best])
    sa, ba = float(s3[b]), float(b3[b])
    total_best = float(total[best])
    t_break = crossing(sb, bb, sa, ba, float(t[jj - 1]), float(t[jj]))
    resid_sd = float(np.sqrt(total_best / max(n - 6, 1)))
    rise = sa * (float(t[-1]) - t_break)
    tt = t[jj:]
    sxx = float(np.sum((tt - tt.mean()) ** 2))
    t_stat = sa / (resid_sd / np.sqrt(sxx)) if resid_sd > 0 and sxx > 0 else np.inf
    return TurnUp(t_break, sb, sa, rise, resid_sd, n - jj, float(t_stat))
