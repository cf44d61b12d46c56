"""The three-line turn-up search: exhaustive where it claims to be, and right on long series.

The reference is a brute-force double loop over every pair of breaks with ``np.polyfit`` on
each of the three runs (common practice: an O(n^2) search, written independently of the
prefix sums). The search itself is O(n): exhaustive up to ``TURN_EXHAUSTIVE_FIRST_BREAKS`` first-break
candidates, a grid refined by alternating exact searches beyond (speed and memory are
measured in benchmarks/bench_thresholds.py, never asserted here).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analysis.thresholds import segments as S
from analysis.thresholds.segments import best_turn_up


def _line_sse(t: np.ndarray, y: np.ndarray) -> tuple[float, float]:
    if np.ptp(t) == 0:
        return np.nan, np.inf
    slope, icpt = np.polyfit(t, y, 1)
    return float(slope), float(np.sum((y - (slope * t + icpt)) ** 2))


def brute_force_turn(t: np.ndarray, y: np.ndarray, m: int, flat_fraction: float = 0.3):
    """Best admissible (first break, turn) by trying every pair: (total SSE, turn, profile)."""
    n = t.size
    best = (np.inf, -1)
    profile = {}
    for i in range(m, n - 2 * m + 1):
        s1, e1 = _line_sse(t[:i], y[:i])
        for j in range(i + m, n - m + 1):
            s3, e3 = _line_sse(t[j:], y[j:])
            if not s3 > 0:
                continue
            s2, e2 = _line_sse(t[i:j], y[i:j])
            if not s2 <= flat_fraction * s3:
                continue
            total = e1 + e2 + e3
            if not np.isfinite(total):
                continue
            profile[j] = min(profile.get(j, np.inf), total)
            if total < best[0]:
                best = (total, j)
    return best[0], best[1], profile


def _series(n: int, *, seed: int, noise: float = 0.6, turn_frac: float = 0.6) -> tuple[np.ndarray, np.ndarray]:
    """An early fall, a level stretch and a rise (the VE/VCO2 shape), with Gaussian noise."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) * 20.0
    x = np.linspace(0.0, 1.0, n)
    y = 30.0 + 16.0 * np.clip(0.25 - x, 0, None) + 6.0 * np.clip(x - turn_frac, 0, None) / (1 - turn_frac)
    return t, y + noise * rng.standard_normal(n)


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.floats(-50, 50, allow_nan=False), min_size=12, max_size=30),
    st.integers(2, 4),
    st.integers(0, 10_000),
)
def test_exhaustive_search_matches_brute_force(values, m, seed):
    # a small jitter keeps slopes off exact ties (0 against a rounding error of 1e-17 decides
    # admissibility differently in two exact-in-theory computations)
    y = np.array(values) + 0.01 * np.random.default_rng(seed).standard_normal(len(values))
    t = np.arange(y.size) * 20.0
    fit = best_turn_up(t, y, min_segment=m)
    slow, j_slow, profile = brute_force_turn(t, y, m)
    if fit is None:
        assert not np.isfinite(slow)
        return
    assert fit.exhaustive
    assert fit.sse == pytest.approx(slow, rel=1e-6, abs=1e-6)
    # the profile over the turn position is the brute-force one at every admissible turn
    for j, value in profile.items():
        assert fit.profile[j - fit.profile_start] == pytest.approx(value, rel=1e-6, abs=1e-6)


@pytest.mark.parametrize("seed", range(6))
def test_same_turn_as_brute_force_on_realistic_series(seed):
    t, y = _series(60, seed=seed)
    fit = best_turn_up(t, y, min_segment=4)
    slow, j_slow, _ = brute_force_turn(t, y, 4)
    assert fit.turn_index == j_slow
    assert fit.sse == pytest.approx(slow, rel=1e-9)


def test_exhaustive_beyond_the_grid_size():
    # 140 points (129 first-break candidates: more than the 128 grid positions, within the
    # exhaustive limit): every pair is tried, and the answer and profile are the brute force's.
    t, y = _series(140, seed=5)
    fit = best_turn_up(t, y, min_segment=4)
    slow, j_slow, profile = brute_force_turn(t, y, 4)
    assert fit.exhaustive
    assert fit.turn_index == j_slow
    assert fit.sse == pytest.approx(slow, rel=1e-9)
    for j, value in profile.items():
        assert fit.profile[j - fit.profile_start] == pytest.approx(value, rel=1e-6, abs=1e-6)


@pytest.mark.parametrize("seed", range(12))
def test_grid_and_refinement_find_the_brute_force_turn(seed, monkeypatch):
    # With only 8 first-break candidates tried on a 90-point series the grid is coarse (every
    # 10th position); the refinement from the best turn of each stretch still reaches the
    # brute-force optimum (measured: all 12 seeds exact). Where two turns are within 0.5 % in
    # squared error, either is an honest answer and the confidence interval spans both.
    monkeypatch.setattr(S, "TURN_EXHAUSTIVE_FIRST_BREAKS", 8)
    monkeypatch.setattr(S, "TURN_FIRST_BREAKS", 8)
    t, y = _series(90, seed=seed, turn_frac=0.55 + 0.05 * (seed % 3))
    fit = best_turn_up(t, y, min_segment=4)
    slow, j_slow, _ = brute_force_turn(t, y, 4)
    assert not fit.exhaustive
    assert fit.sse == pytest.approx(slow, rel=5e-3)
    assert fit.turn_index == j_slow


def test_long_series_turn_found_without_exhaustive_search():
    # 3,000 points (1,000 minutes at 20 s): beyond the exhaustive range; the planted turn at
    # 60 % of the series is found within 1 % of the series (30 points).
    t, y = _series(3000, seed=1, noise=0.6)
    fit = best_turn_up(t, y, min_segment=4)
    assert not fit.exhaustive
    assert abs(fit.turn_index - 1800) <= 30
    assert fit.slope_after > 0


def test_first_minimum_kept_on_ties():
    # A level series with one exact step: many pairs tie; the first in (first break, turn)
    # order is kept, as a full-matrix argmin would give.
    t = np.arange(20) * 20.0
    y = np.where(np.arange(20) >= 12, 1.0 + 0.5 * (np.arange(20) - 12), 0.0)
    fit = best_turn_up(t, y, min_segment=3)
    slow, j_slow, _ = brute_force_turn(t, y, 3)
    assert fit.turn_index == j_slow
    assert fit.sse == pytest.approx(slow, abs=1e-9)
