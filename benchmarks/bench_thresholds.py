"""Threshold detection on long recordings: time per averaged point and peak memory growth.

Rows: ``detect_thresholds`` on invented breath-by-breath tests of 2,000, 20,000 and 100,000
breaths (averaged into the default 10 s bins first; the averaging is not timed). Each row's
baseline is the 2,000-breath run of the same process, scaled to the row's number of averaged
points, so the ratio is "time per averaged point, relative to the smallest test". Targets
(from the thresholds brief): ratio within 1.5x at 100,000 breaths, and peak memory growth
during detection (tracemalloc) under 50 MiB at 20,000 breaths.

The recordings are a slow ramp with VT1 at 45 % and VT2 at 75 % of the ramp, VCO2 steepening
against VO2 above VT1 and VE against VCO2 above VT2, end-tidal pressures turning at the
thresholds, and Gaussian breath noise (invented data, fixed seed).
"""

from __future__ import annotations

import sys
import tracemalloc
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from benchmarks.table import BenchRow, best_of  # noqa: E402

SIZES = (2_000, 20_000, 100_000)
#: Peak memory growth allowed at 20,000 breaths (thresholds brief), MiB.
MEMORY_TARGET_MIB = 50.0
#: Largest ratio of time per averaged point, largest test against the smallest (brief).
TIME_RATIO_TARGET = 1.5


def long_test(n_breaths: int, *, seed: int = 0) -> pd.DataFrame:
    """An invented ramp test of ``n_breaths`` breaths with planted VT1 and VT2."""
    rng = np.random.default_rng(seed)
    dt = rng.uniform(1.8, 3.2, n_breaths)
    t = np.cumsum(dt)
    frac = t / t[-1]
    rest = frac < 0.05
    vo2 = np.where(rest, 400.0, 400.0 + 3200.0 * np.clip((frac - 0.05) / 0.95, 0.0, 1.0))
    vt1, vt2 = 400.0 + 0.45 * 3200.0, 400.0 + 0.75 * 3200.0
    vco2 = 0.85 * vo2 + np.where(vo2 > vt1, 0.4 * (vo2 - vt1), 0.0)
    vco2_vt2 = 0.85 * vt2 + 0.4 * (vt2 - vt1)
    ve = 4.0 + 25.0 * vco2 / 1000.0 + np.where(vco2 > vco2_vt2, 15.0 * (vco2 - vco2_vt2) / 1000.0, 0.0)
    petco2 = 36.0 + 5.0 * np.clip((vo2 - 400.0) / (vt1 - 400.0), 0.0, 1.0) - 6.0 * np.clip((vo2 - vt2) / 1200.0, 0.0, None)
    peto2 = 100.0 - 4.0 * np.clip((vo2 - 400.0) / (vt1 - 400.0), 0.0, 1.0) + 8.0 * np.clip((vo2 - vt1) / 1600.0, 0.0, None)
    return pd.DataFrame(
        {
            "source_row": np.arange(2, n_breaths + 2),
            "t_s": t,
            "vo2_ml_min": vo2 * (1 + 0.06 * rng.standard_normal(n_breaths)),
            "vco2_ml_min": vco2 * (1 + 0.06 * rng.standard_normal(n_breaths)),
            "ve_l_min": ve * (1 + 0.05 * rng.standard_normal(n_breaths)),
            "peto2_mmhg": peto2 + 1.5 * rng.standard_normal(n_breaths),
            "petco2_mmhg": petco2 + 1.0 * rng.standard_normal(n_breaths),
            "phase": np.where(rest, "rest", "exercise"),
        }
    )


def peak_growth_mib(fn) -> float:  # noqa: ANN001 - any zero-argument callable
    """Peak traced memory above the level at the call, MiB (tracemalloc)."""
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        before, _ = tracemalloc.get_traced_memory()
        fn()
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    return (peak - before) / 2**20


def measure() -> list[BenchRow]:
    from analysis.breaths import DEFAULT_AVERAGING, average_breaths
    from analysis.thresholds import detect_thresholds

    rows: list[BenchRow] = []
    base_per_point: float | None = None
    for n in SIZES:
        avg = average_breaths(long_test(n), DEFAULT_AVERAGING)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            detect_thresholds(avg)  # warm-up
            seconds = best_of(lambda avg=avg: detect_thresholds(avg), repeats=3 if n < 50_000 else 1)
            mib = peak_growth_mib(lambda avg=avg: detect_thresholds(avg))
        m = len(avg)
        per_point = seconds / m
        if base_per_point is None:
            base_per_point = per_point
        target = f"per point ≤ {TIME_RATIO_TARGET:g}x" + (f"; memory < {MEMORY_TARGET_MIB:g} MiB" if n == 20_000 else "")
        rows.append(
            BenchRow(
                f"detect_thresholds, {n:,} breaths", seconds, f"{SIZES[0]:,}-breath run x {m} points",
                base_per_point * m, target,
                f"{m} averaged points, {per_point * 1e6:.0f} µs per point, peak memory +{mib:.1f} MiB",
            )
        )
    return rows


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
