"""Run every ``benchmarks/bench_*.py`` and print one table plus the machine facts.

Usage: ``python benchmarks/run_all.py`` (or ``make bench``). Each module defines
``measure() -> list[BenchRow]``; ratios are against baselines measured in the same run.
"""

from __future__ import annotations

import importlib
import os
import platform
import sys
import traceback
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from benchmarks.table import BenchRow, format_table  # noqa: E402


def machine_facts() -> str:
    import numpy
    import pandas

    return (
        f"machine: {platform.machine()}, {os.cpu_count()} CPUs, {platform.system()} {platform.release()}; "
        f"Python {platform.python_version()}, numpy {numpy.__version__}, pandas {pandas.__version__}"
    )


def bench_modules() -> list[str]:
    return sorted(p.stem for p in (ROOT / "benchmarks").glob("bench_*.py"))


def run(names: list[str] | None = None) -> tuple[list[BenchRow], list[str]]:
    """All rows, and one line per module that failed (the others still run)."""
    rows: list[BenchRow] = []
    failures: list[str] = []
    for name in names or bench_modules():
        try:
            module = importlib.import_module(f"benchmarks.{name}")
            rows.extend(module.measure())
        except Exception as exc:  # noqa: BLE001 - one broken benchmark must not hide the others
            traceback.print_exc(file=sys.stderr)
            failures.append(f"{name}: {type(exc).__name__}: {exc}")
    return rows, failures


def main(argv: list[str] | None = None) -> int:
    names = list(argv if argv is not None else sys.argv[1:]) or None
    rows, failures = run(names)
    print(machine_facts())
    print(format_table(rows) if rows else "(no rows)")
    for line in failures:
        print(f"FAILED {line}")
    return 1 if failures else 0


if __name__ == "__main__":
    raise SystemExit(main())
