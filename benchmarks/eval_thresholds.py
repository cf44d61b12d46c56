"""Threshold accuracy on the simulator's suite of kinds, per kind (not a speed benchmark).

Usage::

    python benchmarks/eval_thresholds.py [--seeds 10] [--noise 0.5 1 2] [--kinds athlete lung_limited ...]
                                         [--by kind|noise|layout] [--flags] [--cases-csv FILE]

Runs :func:`analysis.pipeline.analyze_session` on every case of
:func:`analysis.simulation.simulation_suite` (half of them through a foreign export and the
importer) and prints one Markdown table: VT1/VT2 median and 90th-percentile |error| as % of the
true VO2max, VT2 missed and reported where there is none, VO2peak and VE/VCO2 slope errors,
interval coverage (when the thresholds carry 90 % intervals), crashes and import failures.
``--cases-csv`` also writes one row per case.
"""

from __future__ import annotations

import argparse
import csv
import sys
import time
from dataclasses import asdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from analysis.simulation import ALL_KINDS, HARD_KINDS, NOISE_LEVELS, ORIGINAL_KINDS, simulation_suite  # noqa: E402
from analysis.simulation.evaluate import (  # noqa: E402
    evaluate_suite,
    format_flags_markdown,
    format_markdown,
    summarise,
    summarise_flags,
)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=10, help="seeds per kind (default 10)")
    parser.add_argument("--noise", type=float, nargs="+", default=list(NOISE_LEVELS), help="noise levels")
    parser.add_argument("--kinds", nargs="+", default=list(ALL_KINDS), choices=list(ALL_KINDS), metavar="KIND")
    parser.add_argument("--by", default="kind", choices=["kind", "noise", "layout"], help="split the rows by (default kind)")
    parser.add_argument("--flags", action="store_true", help="also print the interpretation-flag table")
    parser.add_argument("--cases-csv", type=Path, help="also write one row per case to this CSV file")
    args = parser.parse_args(argv)
    start = time.perf_counter()
    scores = evaluate_suite(simulation_suite(args.kinds, seeds=range(args.seeds), noise_levels=args.noise))
    rows = summarise(scores, groups={"original (all)": ORIGINAL_KINDS, "hard (all)": HARD_KINDS}, by=args.by)
    print(format_markdown(rows))
    if args.flags:
        print("\nInterpretation flags (raised/due, + raised where the truth does not call for them):\n")
        print(format_flags_markdown(summarise_flags(scores)))
    print(
        f"\n{len(scores)} cases ({args.seeds} seeds x {len(args.noise)} noise levels per kind, "
        f"noise {', '.join(f'{x:g}' for x in args.noise)}), {time.perf_counter() - start:.0f} s"
    )
    for s in scores:
        if s.status != "ok":
            print(f"{s.status}: {s.kind}/s{s.seed}/n{s.noise:g} {s.layout}: {s.error[:300]}")
    if args.cases_csv:
        with args.cases_csv.open("w", newline="", encoding="utf-8") as fh:
            writer = csv.DictWriter(fh, fieldnames=list(asdict(scores[0])))
            writer.writeheader()
            writer.writerows(asdict(s) for s in scores)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
