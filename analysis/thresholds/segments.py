"""Least-squares line segments from prefix sums (the engine behind every breakpoint method).

For points sorted by x, the sums of x, y, x^2, xy and y^2 over any run of consecutive points
come from five cumulative sums, so the least-squares line and its residual sum of squares for
every run are O(1) each. A two-line fit over every split point is then O(n) after sorting. The
three-line "turn-up" fit searches its second break (the turn) at every point and its first break
at every point too when there are at most :data:`TURN_EXHAUSTIVE_FIRST_BREAKS` candidates (every
clinical test at 20 s resolution), otherwise on a grid of :data:`TURN_FIRST_BREAKS` positions
refined by alternating exact one-dimensional searches: O(n) time and memory in both cases.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

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


def block_fit(p: _Prefix, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Slope and SSE of the line through run ``[a[r], b[c])`` for every pair: arrays ``(len(a), len(b))``.

    The same numbers as :func:`run_fit` with broadcast indices, gathered once per row and
    column (cells with ``b <= a`` come out as inf or NaN and must be masked by the caller).
    """

    def diff(v: np.ndarray) -> np.ndarray:
        return v[b][None, :] - v[a][:, None]

    n = diff(p.n)
    with np.errstate(invalid="ignore", divide="ignore"):
        mx = diff(p.sx) / n
        my = diff(p.sy) / n
        cxx = diff(p.sxx) - n * mx * mx
        cxy = diff(p.sxy) - n * mx * my
        cyy = diff(p.syy) - n * my * my
        ok = cxx > 1e-12 * max(1.0, float(p.sxx[-1]))
        slope = cxy / np.where(ok, cxx, np.nan)
        sse = np.where(ok, np.maximum(cyy - slope * cxy, 0.0), np.inf)
    return slope, sse


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


#: Most first-break positions the turn-up fit tries in full. With at most this many candidates
#: (n <= TURN_EXHAUSTIVE_FIRST_BREAKS + 3 * min_segment - 1 points: 89 minutes of exercise at
#: 20 s points) the search is exhaustive. Up to this size the exhaustive search is never slower
#: than the grid and refinement (measured: 0.40 against 1.31 ms at 129 candidates, 2.21 against
#: 2.23 ms at 256).
TURN_EXHAUSTIVE_FIRST_BREAKS = 256
#: Beyond :data:`TURN_EXHAUSTIVE_FIRST_BREAKS` candidates, the first break is tried on a grid of
#: this many positions and then refined.
TURN_FIRST_BREAKS = 128
#: Cells evaluated at once in the turn-up search (bounds its memory whatever the length).
_CHUNK_CELLS = 1 << 16
#: When the first break was searched on a grid, the refinement starts from the best turn in
#: each of this many equal stretches of the series.
TURN_REFINE_STARTS = 16


@dataclass(frozen=True)
class TurnUp:
    """Three-line fit in which the last line rises: the break into the rise and its size.

    ``rise`` is the rise of the last line from the break to the last point; ``t_stat_after``
    is the last line's slope divided by its standard error (from the pooled residual SD).
    ``sse`` is the total squared error of the three lines and ``turn_index`` the position of
    the first point of the last line. ``profile`` holds, for every possible start of the last
    line (positions ``profile_start`` onward), the smallest total squared error of an
    admissible fit with the turn there (``inf`` where none is admissible): the profile of the
    fit's error over the turn position, from which its confidence interval is read.
    """

    t_break: float
    slope_before: float
    slope_after: float
    rise: float
    resid_sd: float
    n_after: int
    t_stat_after: float
    sse: float = np.nan
    turn_index: int = -1
    profile_start: int = 0
    profile: np.ndarray = field(default_factory=lambda: np.zeros(0), compare=False, repr=False)
    exhaustive: bool = True


def _first_breaks(count: int, limit: int) -> np.ndarray:
    """Positions (0-based, among ``count`` candidates) tried for the first break."""
    if count <= limit:
        return np.arange(count)
    return np.unique(np.linspace(0, count - 1, limit).round().astype(np.int64))


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

    Notes
    -----
    Every line comes from prefix sums in O(1). The turn (second break) is tried at every
    point. The first break is tried at every point when there are at most
    :data:`TURN_EXHAUSTIVE_FIRST_BREAKS` candidates, which makes the search exhaustive (the same answer
    as trying every pair; the first minimum in the order first break, then turn). With more
    candidates it is tried on a grid of :data:`TURN_FIRST_BREAKS` positions, and the best pair
    is then refined by alternating exact searches over all first breaks (turn fixed) and all
    turns (first break fixed) until neither moves. Either way the work and memory grow in
    proportion to the number of points (evaluated in chunks of at most 65,536 cells).
    """
    n = t.size
    m = min_segment
    if n < 3 * m:
        return None
    p = prefix_sums(t, y)
    i = np.arange(m, n - 2 * m + 1)  # end of first line
    j = np.arange(2 * m, n - m + 1)  # end of second line (start of the last)
    _, _, e1 = run_fit(p, np.zeros_like(i), i)
    s3, b3, e3 = run_fit(p, j, np.full_like(j, n))
    rising = s3 > 0
    if not rising.any():
        return None
    rows = np.arange(i.size) if i.size <= TURN_EXHAUSTIVE_FIRST_BREAKS else _first_breaks(i.size, TURN_FIRST_BREAKS)
    # best admissible total for each turn position (over the first breaks tried), and the
    # first minimum over all pairs in row-major (first break, turn) order
    profile = np.full(j.size, np.inf)
    best_total, best_a, best_b = np.inf, -1, -1
    cols = np.flatnonzero(rising)
    step = max(1, _CHUNK_CELLS // cols.size)
    e3c, s3c, jc = e3[cols], s3[cols], j[cols]
    for lo in range(0, rows.size, step):
        ra = rows[lo : lo + step]
        # a block of (first break, turn) pairs; pairs with j[b] - i[a] >= m are exactly b >= a
        s2, e2 = block_fit(p, i[ra], jc)
        with np.errstate(invalid="ignore"):
            ok = (cols[None, :] >= ra[:, None]) & (s2 <= flat_fraction * s3c[None, :])
        total = np.where(ok, e1[ra][:, None] + e2 + e3c[None, :], np.inf)
        k = int(np.argmin(total))  # first minimum in row-major (first break, turn) order
        r, c = divmod(k, cols.size)
        if total[r, c] < best_total:
            best_total, best_a, best_b = float(total[r, c]), int(ra[r]), int(cols[c])
        profile[cols] = np.minimum(profile[cols], total.min(axis=0))
    if not np.isfinite(best_total):
        return None
    exhaustive = rows.size == i.size
    if not exhaustive:
        # refine from the best pair and from the turns best on the grid (several starts, so a
        # turn whose first break fell between grid positions is not lost)
        blocks = np.array_split(np.arange(j.size), min(TURN_REFINE_STARTS, j.size))
        starts = np.unique([int(bl[np.argmin(profile[bl])]) for bl in blocks if bl.size])
        lines = _TurnLines(p, i, j, e1, s3, e3, flat_fraction)
        for b0 in starts[np.isfinite(profile[starts])]:
            a0 = int(np.argmin(lines.first_breaks(int(b0))))
            a_r, b_r, tot_r = _refine(lines, a0, int(b0), float(profile[b0]))
            profile[b_r] = min(profile[b_r], tot_r)
            if tot_r < best_total:
                best_a, best_b, best_total = a_r, b_r, tot_r
    a, b = best_a, best_b
    jj = int(j[b])
    sb_arr, bb_arr, _ = run_fit(p, np.array([i[a]]), np.array([jj]))
    sb, bbv = float(sb_arr[0]), float(bb_arr[0])
    sa, ba = float(s3[b]), float(b3[b])
    t_break = crossing(sb, bbv, sa, ba, float(t[jj - 1]), float(t[jj]))
    resid_sd = float(np.sqrt(best_total / max(n - 6, 1)))
    rise = sa * (float(t[-1]) - t_break)
    tt = t[jj:]
    sxx = float(np.sum((tt - tt.mean()) ** 2))
    t_stat = sa / (resid_sd / np.sqrt(sxx)) if resid_sd > 0 and sxx > 0 else np.inf
    return TurnUp(
        t_break, sb, sa, rise, resid_sd, n - jj, float(t_stat),
        sse=best_total, turn_index=jj, profile_start=int(j[0]), profile=profile, exhaustive=exhaustive,
    )


@dataclass
class _TurnLines:
    """Totals of the three-line fit along one turn or one first break, each computed once.

    The refinement starts from up to :data:`TURN_REFINE_STARTS` turns and often passes the
    same turn or first break again (measured on the 2,000- and 20,000-breath benchmark
    sessions: 44-109 searches, 18-34 of them distinct), so every search is kept.
    """

    p: _Prefix
    i: np.ndarray
    j: np.ndarray
    e1: np.ndarray
    s3: np.ndarray
    e3: np.ndarray
    flat_fraction: float
    _by_turn: dict[int, np.ndarray] = field(default_factory=dict)
    _by_first: dict[int, np.ndarray] = field(default_factory=dict)

    def first_breaks(self, b: int) -> np.ndarray:
        """Total squared error of every first break (positions 0..b) with the turn at ``b``."""
        if b not in self._by_turn:
            aa = np.arange(0, b + 1)
            s2, _, e2 = run_fit(self.p, self.i[aa], np.full_like(aa, self.j[b]))
            with np.errstate(invalid="ignore"):
                ok = s2 <= self.flat_fraction * self.s3[b]
            self._by_turn[b] = np.where(ok, self.e1[aa] + e2 + self.e3[b], np.inf)
        return self._by_turn[b]

    def turns(self, a: int) -> np.ndarray:
        """Total squared error of every turn (positions a.., last line rising) with the first break at ``a``."""
        if a not in self._by_first:
            bb = np.arange(a, self.j.size)
            s2, _, e2 = run_fit(self.p, np.full_like(bb, self.i[a]), self.j[bb])
            with np.errstate(invalid="ignore"):
                ok = (self.s3[bb] > 0) & (s2 <= self.flat_fraction * self.s3[bb])
            self._by_first[a] = np.where(ok, self.e1[a] + e2 + self.e3[bb], np.inf)
        return self._by_first[a]


def _refine(lines: _TurnLines, a: int, b: int, total: float) -> tuple[int, int, float]:
    """Alternate exact searches over the first break (turn fixed) and the turn (first fixed)."""
    for _ in range(50):
        moved = False
        tot = lines.first_breaks(b)
        k = int(np.argmin(tot))
        if tot[k] < total:
            a, total, moved = k, float(tot[k]), True
        tot = lines.turns(a)  # turns a, a + 1, ...
        k = int(np.argmin(tot))
        if tot[k] < total:
            b, total, moved = a + k, float(tot[k]), True
        if not moved:
            break
    return a, b, total
