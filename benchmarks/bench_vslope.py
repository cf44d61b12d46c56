"""Speed of the threshold machinery: V-slope on 100,000 points, averaging, outliers, detection.

Rows (each against a baseline measured in the same run, on the same data):

1. ``vslope_fit, 100,000 points`` — the exhaustive two-line search (O(n) after sorting).
   Baseline: one ``np.polyfit`` straight line through the same 100,000 points. Target: within
   10x that single line fit (the search fits two lines at every one of the ~100,000 splits).
2. ``average_breaths, 2,000 breaths`` for each averaging method. Baseline: a pandas
   ``rolling(15).mean()`` over the same three gas columns. Target: a few ms.
3. ``find_outlier_breaths, 2,000 breaths``. Baseline: the same pandas rolling mean.
4. ``detect_thresholds`` on a simulated test (10 s bins). Baseline: ``average_breaths`` of it.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from benchmarks.table import BenchRow, best_of  # noqa: E402

N_POINTS = 100_000
N_BREATHS = 2000


def _breaths(n: int, *, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    t = np.cumsum(rng.uniform(1.5, 3.5, n))
    base = 500.0 + 3000.0 * t / t[-1]
    return pd.DataFrame(
        {
            "source_row": np.arange(2, n + 2),
            "t_s": t,
            "vo2_ml_min": base * (1 + 0.06 * rng.standard_normal(n)),
            "vco2_ml_min": 0.95 * base * (1 + 0.06 * rng.standard_normal(n)),
            "ve_l_min": base / 35.0 * (1 + 0.05 * rng.standard_normal(n)),
            "hr_bpm": 60.0 + base / 30.0,
            "phase": np.where(t < t[-1] * 0.1, "rest", "exercise"),
        }
    )


def measure() -> list[BenchRow]:
    from analysis.breaths import METHODS, AveragingSpec, average_breaths, find_outlier_breaths
    from analysis.simulation import CYCLE_RAMP_30, TRAINED_CYCLIST, simulate_session
    from analysis.thresholds import detect_thresholds, vslope_fit

    rng = np.random.default_rng(0)
    vo2 = rng.uniform(500.0, 4000.0, N_POINTS)
    vco2 = np.where(vo2 < 2500.0, 0.95 * vo2, 0.95 * 2500.0 + 1.3 * (vo2 - 2500.0)) + rng.normal(0.0, 60.0, N_POINTS)
    vslope_fit(vo2, vco2)  # warm-up (imports, caches)
    fit_s = best_of(lambda: vslope_fit(vo2, vco2), repeats=5)
    line_s = best_of(lambda: np.polyfit(vo2, vco2, 1), repeats=5)
    sort_s = best_of(lambda: np.argsort(vo2), repeats=5)
    rows = [
        BenchRow(f"vslope_fit, {N_POINTS:,} points", fit_s, "np.polyfit one line", line_s, "< 10x baseline",
                 f"np.argsort alone {sort_s * 1000:.1f} ms"),
    ]
    b = _breaths(N_BREATHS)
    gases = ["vo2_ml_min", "vco2_ml_min", "ve_l_min"]
    roll_s = best_of(lambda: b[gases].rolling(15, center=True).mean(), repeats=20)
    sizes = {"breaths": 15, "time_bin": 10, "rolling_time": 30, "middle_of_n": 7}
    for method in METHODS:
        spec = AveragingSpec(method, sizes[method])
        s = best_of(lambda spec=spec: average_breaths(b, spec), repeats=20)
        rows.append(BenchRow(f"average_breaths, {N_BREATHS:,} breaths, {spec.label}", s,
                             "pandas rolling(15).mean()", roll_s, "a few ms"))
    out_s = best_of(lambda: find_outlier_breaths(b), repeats=10)
    rows.append(BenchRow(f"find_outlier_breaths, {N_BREATHS:,} breaths", out_s, "pandas rolling(15).mean()", roll_s, ""))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        session = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=0)
    avg = average_breaths(session.breaths)
    det_s = best_of(lambda: detect_thresholds(avg), repeats=5)
    avg_s = best_of(lambda: average_breaths(session.breaths), repeats=10)
    rows.append(BenchRow("detect_thresholds, simulated cyclist ramp", det_s, "average_breaths of it", avg_s, "",
                         f"{len(session.breaths)} breaths, {len(avg)} averaged rows"))
    return rows


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
