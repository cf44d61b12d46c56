"""V-slope two-line fit: planted breakpoints, an independent fit (pwlf), brute force, rejections."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analysis.errors import InvalidParameter
from analysis.thresholds import vslope_fit
from analysis.thresholds.segments import best_two_lines


def planted(n: int = 80, *, break_vo2: float = 2000.0, s1: float = 0.95, s2: float = 1.40, noise_sd: float = 0.0, seed: int = 0):
    """VCO2 = s1*VO2 below the break, continuous with slope s2 above (Beaver 1986 shape)."""
    rng = np.random.default_rng(seed)
    vo2 = np.linspace(800.0, 3400.0, n)
    vco2 = np.where(vo2 <= break_vo2, s1 * vo2, s1 * break_vo2 + s2 * (vo2 - break_vo2))
    return vo2, vco2 + noise_sd * rng.standard_normal(n)


class TestPlantedBreak:
    def test_noise_free_recovers_break_exactly(self):
        # Beaver 1986 construction: two straight lines meeting at the breakpoint (common practice).
        vo2 = np.arange(1000.0, 3000.0 + 1, 50.0)
        vco2 = np.where(vo2 <= 2000.0, 0.95 * vo2, 1900.0 + 1.4 * (vo2 - 2000.0))
        fit = vslope_fit(vo2, vco2)
        assert fit.valid, fit.reason
        assert fit.vo2_break_ml_min == pytest.approx(2000.0, abs=1e-6)
        assert fit.vco2_break_ml_min == pytest.approx(1900.0, abs=1e-6)
        assert fit.slope_below == pytest.approx(0.95, abs=1e-9)
        assert fit.slope_above == pytest.approx(1.40, abs=1e-9)
        assert fit.sse == pytest.approx(0.0, abs=1e-6)

    def test_input_order_does_not_matter(self):
        vo2, vco2 = planted(60)
        perm = np.random.default_rng(3).permutation(vo2.size)
        a, b = vslope_fit(vo2, vco2), vslope_fit(vo2[perm], vco2[perm])
        assert a.vo2_break_ml_min == pytest.approx(b.vo2_break_ml_min)
        # break_index points at the same physical point in each ordering
        assert vo2[a.break_index] == pytest.approx(vo2[perm][b.break_index])

    @pytest.mark.parametrize("seed", range(5))
    def test_noisy_within_tolerance(self, seed):
        # 40 mL/min noise on averaged VCO2 (about 2 %, typical of 10-20 s bins; common practice):
        # break within 100 mL/min of the planted 2000 mL/min (measured worst about 60).
        vo2, vco2 = planted(80, noise_sd=40.0, seed=seed)
        fit = vslope_fit(vo2, vco2)
        assert fit.valid, fit.reason
        assert abs(fit.vo2_break_ml_min - 2000.0) < 100.0
        assert fit.slope_above - fit.slope_below > 0.3

    @pytest.mark.parametrize("seed", range(4))
    def test_agrees_with_pwlf(self, seed):
        # pwlf (Jekel & Venter 2019, general-purpose piecewise-linear least squares) fits a
        # continuous two-segment line; Beaver's two free lines cross within 60 mL/min of it.
        pwlf = pytest.importorskip("pwlf")
        vo2, vco2 = planted(80, noise_sd=40.0, seed=seed)
        ours = vslope_fit(vo2, vco2)
        model = pwlf.PiecewiseLinFit(vo2, vco2, seed=seed)
        breaks = model.fit(2)
        assert abs(ours.vo2_break_ml_min - breaks[1]) < 60.0


class TestRejections:
    def test_one_straight_line_is_rejected(self):
        # No breakpoint: slope 1.0 throughout (Beaver 1986 requires an increase > 0.1, from memory).
        vo2 = np.linspace(800.0, 3000.0, 60)
        fit = vslope_fit(vo2, 1.0 * vo2)
        assert not fit.valid
        assert "slope increase < 0.1" in fit.reason

    @pytest.mark.parametrize("seed", range(5))
    def test_noisy_straight_line_is_rejected(self, seed):
        rng = np.random.default_rng(seed)
        vo2 = np.linspace(800.0, 3000.0, 60)
        fit = vslope_fit(vo2, 0.95 * vo2 + 40.0 * rng.standard_normal(60))
        assert not fit.valid
        assert fit.reason

    def test_lower_slope_far_from_one(self):
        vo2 = np.linspace(800.0, 3000.0, 60)
        vco2 = np.where(vo2 <= 2000, 0.3 * vo2, 600 + 0.9 * (vo2 - 2000))
        fit = vslope_fit(vo2, vco2)
        assert not fit.valid
        assert "lower slope far from 1" in fit.reason

    def test_too_few_points(self):
        fit = vslope_fit(np.arange(5.0), np.arange(5.0))
        assert not fit.valid and "too few points" in fit.reason

    def test_empty(self):
        fit = vslope_fit(np.array([]), np.array([]))
        assert not fit.valid and "too few points" in fit.reason

    def test_nan_pairs_dropped(self):
        vo2, vco2 = planted(60)
        vco2 = vco2.copy()
        vco2[[3, 30]] = np.nan
        fit = vslope_fit(vo2, vco2)
        assert fit.valid and fit.vo2_break_ml_min == pytest.approx(2000.0, abs=30.0)

    def test_length_mismatch(self):
        with pytest.raises(InvalidParameter, match="vco2_ml_min"):
            vslope_fit(np.arange(10.0), np.arange(9.0))

    def test_bad_min_segment(self):
        with pytest.raises(InvalidParameter, match="min_segment"):
            vslope_fit(np.arange(10.0), np.arange(10.0), min_segment=1)


def brute_force_sse(x: np.ndarray, y: np.ndarray, m: int) -> float:
    """O(n^2) reference: np.polyfit on both sides of every split (sorted by x)."""
    order = np.argsort(x, kind="stable")
    xs, ys = x[order], y[order]
    best = np.inf
    for k in range(m, xs.size - m + 1):
        if xs[k - 1] == xs[k] or np.ptp(xs[:k]) == 0 or np.ptp(xs[k:]) == 0:
            continue
        sse = 0.0
        for a, b in ((0, k), (k, xs.size)):
            coef = np.polyfit(xs[a:b], ys[a:b], 1)
            sse += float(np.sum((ys[a:b] - np.polyval(coef, xs[a:b])) ** 2))
        best = min(best, sse)
    return best


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(st.integers(0, 400), st.floats(-500, 500, allow_nan=False)), min_size=6, max_size=40),
    st.integers(2, 4),
)
def test_prefix_sum_search_matches_brute_force(points, m):
    x = np.array([p[0] for p in points], dtype=float) * 10.0
    y = np.array([p[1] for p in points], dtype=float)
    order = np.argsort(x, kind="stable")
    fast = best_two_lines(x[order], y[order], min_segment=m)
    slow = brute_force_sse(x, y, m)
    if fast is None:
        assert not np.isfinite(slow)
    else:
        # The prefix-sum form gets each SSE as a difference of sums as large as the data's total
        # sum of squares, so its rounding error scales with that total, not with the SSE (a
        # near-perfect fit of large values loses relative digits; Chan, Golub & LeVeque 1983 on
        # sum-of-squares updating, from memory). Allow 1e-10 of the total besides rel 1e-6.
        total_ss = float(np.sum((y - y.mean()) ** 2))
        assert fast.sse == pytest.approx(slow, rel=1e-6, abs=1e-6 + 1e-10 * total_ss)


def test_prefix_sum_rounding_found_by_hypothesis():
    # The case Hypothesis found (two near-collinear points far from the mean): 1.0e-6 absolute
    # off the polyfit reference, 4.5e-12 of the total sum of squares (220,493.5).
    x = np.array([10.0, 10.0, 20.0, 1900.0, 1930.0, 2720.0])
    y = np.array([299.0, 300.0, -101.0, 477.0, 470.0, 298.0])
    fast = best_two_lines(x, y, min_segment=2)
    assert fast is not None
    assert fast.sse == pytest.approx(brute_force_sse(x, y, 2), rel=1e-6, abs=1e-10 * 220_493.5)


def test_handles_100k_points():
    # Size check only (speed is measured in benchmarks/bench_vslope.py).
    rng = np.random.default_rng(0)
    vo2 = rng.uniform(500.0, 4000.0, 100_000)
    vco2 = np.where(vo2 < 2500, 0.95 * vo2, 0.95 * 2500 + 1.3 * (vo2 - 2500)) + rng.normal(0, 60, vo2.size)
    fit = vslope_fit(vo2, vco2)
    assert fit.valid
    assert fit.vo2_break_ml_min == pytest.approx(2500.0, abs=25.0)


def brute_force_admissible_sse(x: np.ndarray, y: np.ndarray, m: int) -> float:
    """O(n^2) reference for vslope_fit's choice: best split meeting Beaver's slope rules."""
    order = np.argsort(x, kind="stable")
    xs, ys = x[order], y[order]
    best = np.inf
    for k in range(m, xs.size - m + 1):
        if xs[k - 1] == xs[k] or np.ptp(xs[:k]) == 0 or np.ptp(xs[k:]) == 0:
            continue
        (s1, c1), (s2, c2) = np.polyfit(xs[:k], ys[:k], 1), np.polyfit(xs[k:], ys[k:], 1)
        if not (s2 - s1 > 0.1 and 0.6 <= s1 <= 1.3):
            continue
        sse = float(np.sum((ys[:k] - (s1 * xs[:k] + c1)) ** 2) + np.sum((ys[k:] - (s2 * xs[k:] + c2)) ** 2))
        best = min(best, sse)
    return best


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.integers(50, 400), min_size=12, max_size=40, unique=True),
    st.floats(0.7, 1.2),
    st.floats(0.0, 1.0),
    st.integers(0, 10_000),
)
def test_vslope_choice_matches_brute_force(xs, s1, rise, seed):
    # Random two-line data with noise: vslope_fit's split is the brute-force best admissible one
    x = np.array(xs, dtype=float) * 10.0
    brk = float(np.median(x))
    rng = np.random.default_rng(seed)
    y = np.where(x <= brk, s1 * x, s1 * brk + (s1 + rise) * (x - brk)) + 30.0 * rng.standard_normal(x.size)
    fit = vslope_fit(x, y, min_segment=3)
    slow = brute_force_admissible_sse(x, y, 3)
    if np.isfinite(slow):
        assert fit.sse == pytest.approx(slow, rel=1e-6, abs=1e-6)
        assert fit.slope_above - fit.slope_below > 0.1
    else:
        assert not fit.valid and ("slope" in fit.reason)
