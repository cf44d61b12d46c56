"""Speed of the simulator: one test, a batch of seeds, and the demo set.

Target (from the simulator brief): a 20-minute test (600-1000 breaths) in well under 0.1 s.
Baseline in the same run: drawing the same number of normal deviates with numpy, the floor
below which no breath-by-breath simulation can go.
"""

from __future__ import annotations

import tempfile

import numpy as np

from benchmarks.table import BenchRow, best_of


def measure() -> list[BenchRow]:
    from analysis.simulation import CYCLE_RAMP_30, DEMO_TESTS, TRAINED_CYCLIST, generate_demo, simulate_session

    session = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=0)
    n = len(session.breaths)
    rng = np.random.default_rng(0)
    floor = best_of(lambda: rng.standard_normal((9, n)), repeats=20)
    one = best_of(lambda: simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=0), repeats=10)
    clean = best_of(lambda: simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=0, noise=0, artifacts=0), repeats=10)

    def batch() -> None:
        for seed in range(50):
            simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=seed)

    fifty = best_of(batch, repeats=2)

    from analysis.simulation import ALL_KINDS, simulate_case

    def kinds() -> None:
        for kind in ALL_KINDS:
            simulate_case(kind, 0)

    every_kind = best_of(kinds, repeats=3)
    with tempfile.TemporaryDirectory() as tmp:
        demo = best_of(lambda: generate_demo(tmp), repeats=3)
    return [
        BenchRow("simulate_session, cyclist ramp, noise 1", one, "numpy normals, same size", floor,
                 "< 100 ms", f"{n} breaths"),
        BenchRow("simulate_session, noise 0, no artifacts", clean, "numpy normals, same size", floor, "< 100 ms"),
        BenchRow("simulate_session x 50 seeds", fifty, "", None, "< 5 s"),
        BenchRow(f"simulate_case, one of each of the {len(ALL_KINDS)} kinds", every_kind, "simulate_session, cyclist ramp",
                 one * len(ALL_KINDS), "< 1 s", "hard kinds add extras, breath events and the extended truth"),
        BenchRow(f"generate_demo ({len(DEMO_TESTS)} files)", demo, "", None, "< 2 s"),
    ]


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
