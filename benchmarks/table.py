"""Shared shape of a benchmark row and the table printer.

Each ``benchmarks/bench_*.py`` module defines ``measure() -> list[BenchRow]``;
``benchmarks/run_all.py`` runs them all in one process and prints one table. Ratios are against
a baseline measured in the same run on the same machine, never against a stored number.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class BenchRow:
    name: str
    seconds: float
    baseline_name: str = ""
    baseline_seconds: float | None = None
    target: str = ""
    extra: str = ""

    @property
    def ratio(self) -> float | None:
        if not self.baseline_seconds:
            return None
        return self.seconds / self.baseline_seconds


def best_of(fn: Callable[[], object], *, repeats: int = 5) -> float:
    """Best wall-clock time of ``repeats`` calls, in seconds."""
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def format_table(rows: list[BenchRow]) -> str:
    head = ("measurement", "time", "baseline", "ratio", "target", "notes")
    body = []
    for r in rows:
        base = f"{r.baseline_name} {r.baseline_seconds * 1000:.1f} ms" if r.baseline_seconds else ""
        ratio = f"{r.ratio:.2f}x" if r.ratio is not None else ""
        body.append((r.name, f"{r.seconds * 1000:.1f} ms", base, ratio, r.target, r.extra))
    widths = [max(len(x) for x in col) for col in zip(head, *body)]
    line = lambda cells: "| " + " | ".join(c.ljust(w) for c, w in zip(cells, widths)) + " |"  # noqa: E731
    sep = "|" + "|".join("-" * (w + 2) for w in widths) + "|"
    return "\n".join([line(head), sep, *map(line, body)])
