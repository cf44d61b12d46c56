"""Reported threshold VO2 against the simulator's truth: the row value, the estimate, and an old tree's estimate.

Usage::

    python benchmarks/eval_threshold_values.py [--seeds 8] [--noise 0.5 1 2] [--before]

For every demo profile with its protocol (:data:`analysis.simulation.DEMO_TESTS`) x seeds x noise
levels, the session is simulated and analysed. For VT1 and VT2 it compares with the planted
truth (``truth_vt1_vo2_ml_min`` / ``truth_vt2_vo2_ml_min``):

* **row value**: the VO2 of the averaged row nearest the pick (what ``vt1.vo2_ml_min`` reported
  until results layout 1);
* **after**: the reported ``vt1.vo2_ml_min`` now, the method's own estimate (the consensus);
* **before** (``--before``): the consensus of the detection of
  :data:`benchmarks.trees.BEFORE_COMMIT` (its ``thresholds.vt1.vo2_ml_min``, the pick the
  charts drew) on the SAME simulated sessions: each is written as a session file by this tree
  and analysed in one fresh interpreter of the old tree (``git archive``).

It prints one Markdown table: median and 90th percentile of |error| as % of the true threshold
VO2, and the number of tests where the threshold was found. Not a speed benchmark.
"""

from __future__ import annotations

import argparse
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from analysis.pipeline import analyze_session  # noqa: E402
from analysis.simulation import DEMO_TESTS, simulate_session  # noqa: E402

KINDS = ("vt1", "vt2")


@dataclass
class Errors:
    """|error| % of the true threshold VO2 of one threshold, per way of reading it."""

    tests: int = 0
    row: list[float] = field(default_factory=list)
    after: list[float] = field(default_factory=list)
    before: list[float] = field(default_factory=list)

    def add(self, other: Errors) -> None:
        self.tests += other.tests
        self.row += other.row
        self.after += other.after
        self.before += other.before


def _pct(value: float, truth: float) -> float:
    return 100.0 * abs(value - truth) / truth


def errors(seeds: int, noise: float, *, before_tree: Path | None = None) -> dict[str, Errors]:
    """Errors of every demo profile x ``seeds`` at one noise level (and of the old tree's consensus)."""
    out = {k: Errors() for k in KINDS}
    sessions: list[Any] = []
    for demo in DEMO_TESTS:
        for seed in range(seeds):
            session = simulate_session(demo.profile, demo.protocol, seed=1000 + seed, noise=noise)
            sessions.append(session)
            r = analyze_session(session)
            for kind in KINDS:
                truth = session.meta.get(f"truth_{kind}_vo2_ml_min")
                if truth is None:
                    continue
                out[kind].tests += 1
                value = getattr(r, kind)
                if value is None:
                    continue
                row = float(r.averaged["vo2_ml_min"].iloc[value.index])
                out[kind].row.append(_pct(row, truth))
                out[kind].after.append(_pct(value.vo2_ml_min, truth))
    if before_tree is not None:
        from benchmarks.eval_thresholds import readings_in_old_tree

        for session, got in zip(sessions, readings_in_old_tree(sessions, before_tree), strict=True):
            for kind in KINDS:
                truth = session.meta.get(f"truth_{kind}_vo2_ml_min")
                value = (got.get("consensus") or {}).get(kind)
                if truth is not None and value is not None:
                    out[kind].before.append(_pct(value, truth))
    return out


def _stats(values: list[float], n_truth: int) -> str:
    if not values:
        return f"0 / {n_truth} | – | –"
    a = np.array(values)
    return f"{a.size} / {n_truth} | {np.median(a):.1f} % | {np.percentile(a, 90):.1f} %"


def _rows(found: dict[str, Errors], noise: str, *, with_before: bool) -> list[str]:
    lines = []
    for kind in KINDS:
        e = found[kind]
        cells = [kind.upper(), noise]
        if with_before:
            cells.append(_stats(e.before, e.tests))
        cells += [_stats(e.row, e.tests).split(" | ", 1)[1], _stats(e.after, e.tests)]
        lines.append("| " + " | ".join(cells) + " |")
    return lines


def table(seeds: int, noise_levels: list[float], *, before_tree: Path | None = None) -> str:
    with_before = before_tree is not None
    head = ["threshold", "noise"]
    if with_before:
        head += ["before (old consensus): found / with truth", "median", "p90"]
    head += ["row value: median", "p90", "after (estimate): found / with truth", "median", "p90"]
    lines = [
        f"Demo profiles x {seeds} seeds (1000-{999 + seeds}) x noise {', '.join(f'{n:g}' for n in noise_levels)}; "
        "|error| as % of the true threshold VO2.",
        "",
        "| " + " | ".join(head) + " |",
        "|" + "---|" * len(head),
    ]
    every = {k: Errors() for k in KINDS}
    per_noise = []
    for noise in noise_levels:
        found = errors(seeds, noise, before_tree=before_tree)
        per_noise += _rows(found, f"{noise:g}", with_before=with_before)
        for kind in KINDS:
            every[kind].add(found[kind])
    return "\n".join([*lines, *_rows(every, "all", with_before=with_before), *per_noise])


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=(__doc__ or "").splitlines()[0])
    parser.add_argument("--seeds", type=int, default=8, help="seeds per demo profile (default 8)")
    parser.add_argument("--noise", type=float, nargs="+", default=[0.5, 1.0, 2.0], help="noise levels")
    parser.add_argument("--before", action="store_true", help="also score the old tree's consensus on the same sessions")
    args = parser.parse_args(argv)
    tree = None
    if args.before:
        from benchmarks.eval_thresholds import old_tree

        tree = old_tree("its consensus on the same simulated sessions")
        if tree is None:
            return 1
    print(table(args.seeds, args.noise, before_tree=tree))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
