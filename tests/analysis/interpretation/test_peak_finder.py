"""The oscillation peak finder: the one-pass stack against a plain walk from every maximum."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.signal import find_peaks

from analysis.interpretation.oscillation import _peaks


def _peaks_by_walking(y: np.ndarray, *, distance_n: int, prominence: float) -> np.ndarray:
    """Reference: from each local maximum walk outwards to the first higher point on each side,
    take the lowest value met on each side; the prominence is the height above the higher of the
    two lows. Then keep the highest peaks first, dropping any closer than ``distance_n`` to a kept
    one (equal heights: the earlier first). Quadratic, written for clarity only."""
    n = y.size
    kept = []
    for i in range(1, n - 1):
        if not (y[i] > y[i - 1] and y[i] >= y[i + 1]):
            continue
        lows = []
        for step in (-1, 1):
            j, low = i, y[i]
            while 0 <= j + step < n and y[j + step] <= y[i]:
                j += step
                low = min(low, y[j])
            lows.append(low)
        if y[i] - max(lows) >= prominence:
            kept.append(i)
    chosen: list[int] = []
    for k in sorted(kept, key=lambda k: (-y[k], k)):
        if all(abs(k - j) >= distance_n for j in chosen):
            chosen.append(k)
    return np.array(sorted(chosen), dtype=int)


def test_hand_solved_series() -> None:
    # maxima at 1 (3.0), 3 (2.0), 5 (4.0), 8 (2.5, first point of a plateau)
    y = np.array([0.0, 3.0, 1.0, 2.0, 1.5, 4.0, 0.5, 1.0, 2.5, 2.5, 0.0])
    # prominences: 1 -> 3 - max(0, 1) = 2; 3 -> 2 - max(1, 1.5) = 0.5; 5 -> 4 - max(0, 0) = 4;
    # 8 -> 2.5 - max(0.5, 0) = 2
    assert _peaks(y, distance_n=1, prominence=1.0).tolist() == [1, 5, 8]
    assert _peaks(y, distance_n=1, prominence=0.5).tolist() == [1, 3, 5, 8]
    assert _peaks(y, distance_n=1, prominence=2.5).tolist() == [5]
    # 4 points apart: 5 is kept first, then 1 (4 away); 8 is 3 away from 5
    assert _peaks(y, distance_n=4, prominence=1.0).tolist() == [1, 5]


def test_short_and_flat_series_have_no_peaks() -> None:
    assert _peaks(np.array([1.0, 2.0]), distance_n=1, prominence=0.0).size == 0
    assert _peaks(np.full(50, 3.0), distance_n=1, prominence=0.0).size == 0
    assert _peaks(np.arange(50.0), distance_n=1, prominence=0.0).size == 0


def test_long_rising_series_stays_exact() -> None:
    # the case that made the walk quadratic: a rising trend with many small maxima
    rng = np.random.default_rng(7)
    y = np.linspace(0.0, 50.0, 4000) + rng.normal(0.0, 0.4, 4000)
    expected = _peaks_by_walking(y, distance_n=24, prominence=0.075)
    assert expected.size > 0
    assert _peaks(y, distance_n=24, prominence=0.075).tolist() == expected.tolist()


# small integers give many ties and plateaus; floats give tie-free series
_values = st.one_of(
    st.lists(st.integers(0, 6).map(float), min_size=0, max_size=200),
    st.lists(st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False), min_size=0, max_size=200),
)


@settings(deadline=None)
@given(values=_values, distance_n=st.integers(1, 40), prominence=st.sampled_from([0.0, 0.5, 1.0, 2.5, 1e3]))
def test_same_peaks_as_the_plain_walk(values: list[float], distance_n: int, prominence: float) -> None:
    y = np.array(values, dtype=float)
    expected = _peaks_by_walking(y, distance_n=distance_n, prominence=prominence)
    assert _peaks(y, distance_n=distance_n, prominence=prominence).tolist() == expected.tolist()


@settings(deadline=None)
@given(
    values=st.lists(st.floats(-1e3, 1e3, allow_nan=False), min_size=3, max_size=200, unique=True),
    prominence=st.sampled_from([0.0, 1.0, 50.0, 400.0]),
)
def test_same_prominent_peaks_as_scipy(values: list[float], prominence: float) -> None:
    # SciPy's scipy.signal.find_peaks with `prominence` (Wood's topographic prominence, as in
    # scipy.signal.peak_prominences): on tie-free series its maxima and prominences are ours
    y = np.array(values)
    expected, _ = find_peaks(y, prominence=prominence)
    assert _peaks(y, distance_n=1, prominence=prominence).tolist() == expected.tolist()


@pytest.mark.parametrize("seed", range(3))
def test_oscillation_series_against_the_walk(seed: int) -> None:
    # a smoothed ventilation-like series with cycles on a rising trend (the finder's real input)
    rng = np.random.default_rng(seed)
    t = np.arange(0.0, 3000.0)
    y = 0.2 * np.sin(2 * np.pi * t / 60.0) + t / 300.0 + np.convolve(rng.normal(0, 0.3, t.size), np.ones(15) / 15, "same")
    got = _peaks(y, distance_n=24, prominence=0.075)
    assert got.size > 20
    assert got.tolist() == _peaks_by_walking(y, distance_n=24, prominence=0.075).tolist()
