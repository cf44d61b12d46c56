"""Reported threshold VO2 against the simulator's truth: the row value (before) and the estimate (after).

Usage::

    python benchmarks/eval_threshold_values.py [--seeds 8] [--noise 0.5 1 2]

For every demo profile with its protocol (:data:`analysis.simulation.DEMO_TESTS`) x seeds x noise
levels, the session is simulated and analysed. For VT1 and VT2 it compares with the planted
truth (``truth_vt1_vo2_ml_min`` / ``truth_vt2_vo2_ml_min``):

* **before**: the VO2 of the averaged row nearest the pick (what ``vt1.vo2_ml_min`` reported
  until results layout 1);
* **after**: the reported ``vt1.vo2_ml_min`` now, the method's own estimate (the consensus).

It prints one Markdown table: median and 90th percentile of |error| as % of the true threshold
VO2, and the number of tests where the threshold was found. Not a speed benchmark.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from analysis.pipeline import analyze_session  # noqa: E402
from analysis.simulation import DEMO_TESTS, simulate_session  # noqa: E402


def errors(seeds: int, noise_levels: list[float]) -> dict[str, dict[str, list[float]]]:
    """|error| % of the true threshold VO2, per threshold and per way of reading it."""
    out: dict[str, dict[str, list[float]]] = {k: {"before": [], "after": [], "tests": []} for k in ("vt1", "vt2")}
    for noise in noise_levels:
        for demo in DEMO_TESTS:
            for seed in range(seeds):
                session = simulate_session(demo.profile, demo.protocol, seed=1000 + seed, noise=noise)
                r = analyze_session(session)
                for kind in ("vt1", "vt2"):
                    truth = session.meta.get(f"truth_{kind}_vo2_ml_min")
                    if truth is None:
                        continue
                    out[kind]["tests"].append(1.0)
                    value = getattr(r, kind)
                    if value is None:
                        continue
                    row = float(r.averaged["vo2_ml_min"].iloc[value.index])
                    out[kind]["before"].append(100.0 * abs(row - truth) / truth)
                    out[kind]["after"].append(100.0 * abs(value.vo2_ml_min - truth) / truth)
    return out


def _rows(found: dict[str, dict[str, list[float]]], noise: str) -> list[str]:
    lines = []
    for kind, label in (("vt1", "VT1"), ("vt2", "VT2")):
        b, a = np.array(found[kind]["before"]), np.array(found[kind]["after"])
        n_truth = len(found[kind]["tests"])
        lines.append(
            f"| {label} | {noise} | {a.size} / {n_truth} | {np.median(b):.1f} % | {np.percentile(b, 90):.1f} % | "
            f"{np.median(a):.1f} % | {np.percentile(a, 90):.1f} % |"
        )
    return lines


def table(seeds: int, noise_levels: list[float]) -> str:
    lines = [
        f"Demo profiles x {seeds} seeds x noise {', '.join(f'{n:g}' for n in noise_levels)}; "
        "|error| as % of the true threshold VO2.",
        "",
        "| threshold | noise | found / with truth | before: row value, median | p90 | after: estimate, median | p90 |",
        "|---|---|---|---|---|---|---|",
    ]
    every: dict[str, dict[str, list[float]]] = {k: {"before": [], "after": [], "tests": []} for k in ("vt1", "vt2")}
    per_noise = []
    for noise in noise_levels:
        found = errors(seeds, [noise])
        per_noise += _rows(found, f"{noise:g}")
        for kind in every:
            for key in every[kind]:
                every[kind][key] += found[kind][key]
    return "\n".join([*lines, *_rows(every, "all"), *per_noise])


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=(__doc__ or "").splitlines()[0])
    parser.add_argument("--seeds", type=int, default=8, help="seeds per demo profile (default 8)")
    parser.add_argument("--noise", type=float, nargs="+", default=[0.5, 1.0, 2.0], help="noise levels")
    args = parser.parse_args(argv)
    print(table(args.seeds, args.noise))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
