"""Threshold accuracy on the simulator's suite of kinds, per kind (not a speed benchmark).

Usage::

    python benchmarks/eval_thresholds.py [--seeds 10] [--noise 0.5 1 2] [--kinds athlete lung_limited ...]
                                         [--by kind|noise|layout] [--flags] [--cases-csv FILE]
                                         [--before]

Runs :func:`analysis.pipeline.analyze_session` on every case of
:func:`analysis.simulation.simulation_suite` (half of them through a foreign export and the
importer) and prints one Markdown table: VT1/VT2 median and 90th-percentile |error| as % of the
true VO2max, VT2 missed and reported where there is none, VO2peak and VE/VCO2 slope errors,
interval coverage (when the thresholds carry 90 % intervals), crashes and import failures.
``--cases-csv`` also writes one row per case.

``--before`` scores the detection of :data:`benchmarks.trees.BEFORE_COMMIT` (main before the
threshold work, exported with ``git archive``) on the same cases: each case is simulated and,
when foreign, imported by this tree, written as a session file, and analysed in one fresh
interpreter of the old tree (its ``read_session`` and ``analyze_session``).
"""

from __future__ import annotations

import argparse
import csv
import json
import subprocess
import sys
import tempfile
import time
from collections.abc import Sequence
from dataclasses import asdict, replace
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from analysis.simulation import ALL_KINDS, HARD_KINDS, NOISE_LEVELS, ORIGINAL_KINDS, simulation_suite  # noqa: E402
from analysis.simulation.evaluate import (  # noqa: E402
    CaseScore,
    compare,
    evaluate_suite,
    format_flags_markdown,
    format_markdown,
    read_result,
    score_case,
    summarise,
    summarise_flags,
)

#: Run inside the old tree: analyse every session file named on stdin (JSON list of paths) and
#: print one JSON list of the readings the harness needs (or the error text per file). The old
#: result's ``vt1``/``vt2`` hold the VO2 of the averaged row nearest the pick; ``consensus`` holds
#: the pick's own VO2 (``thresholds.vt1.vo2_ml_min``, what the charts drew).
_OLD_TREE_CODE = r"""
import json, sys, math
from analysis.io import read_session
from analysis.pipeline import analyze_session
def num(x):
    try:
        x = float(x)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None
def get(obj, *path):
    for step in path:
        if obj is None:
            return None
        obj = obj.get(step) if isinstance(obj, dict) else getattr(obj, step, None)
    return obj
out = []
for path in json.load(sys.stdin):
    try:
        r = analyze_session(read_session(path))
    except Exception as exc:
        out.append({"error": f"{type(exc).__name__}: {exc}"})
        continue
    out.append({
        "vt1": {"vo2_ml_min": num(get(r, "vt1", "vo2_ml_min"))},
        "vt2": {"vo2_ml_min": num(get(r, "vt2", "vo2_ml_min"))},
        "consensus": {"vt1": num(get(r, "thresholds", "vt1", "vo2_ml_min")),
                      "vt2": num(get(r, "thresholds", "vt2", "vo2_ml_min"))},
        "peak": {"vo2_ml_min": num(get(r, "peak", "vo2_ml_min"))},
        "indices": {"ve_vco2_slope": num(get(r, "indices", "ve_vco2_slope")),
                    "ve_vco2_slope_span": get(r, "indices", "ve_vco2_slope_span")},
    })
print(json.dumps(out))
"""


def readings_in_old_tree(sessions: Sequence[Any], tree: Path) -> list[dict[str, Any]]:
    """Analyse ``sessions`` (written as session files by this tree) with the old ``tree``.

    Returns one reading per session (see ``_OLD_TREE_CODE``), or ``{"error": text}``.
    """
    from analysis.io import write_session

    with tempfile.TemporaryDirectory(prefix="tidemark-eval-") as folder:
        paths = []
        for i, session in enumerate(sessions):
            path = Path(folder) / f"case{i:05d}.csv"
            write_session(session, path)
            paths.append(str(path))
        done = subprocess.run(
            [sys.executable, "-c", _OLD_TREE_CODE], input=json.dumps(paths), cwd=tree, capture_output=True,
            text=True, check=True, env={"PYTHONPATH": str(tree), "PATH": "/usr/bin:/bin"},
        )
    readings: list[dict[str, Any]] = json.loads(done.stdout.strip().splitlines()[-1])
    return readings


def old_tree(what: str) -> Path | None:
    """The tree of :data:`benchmarks.trees.BEFORE_COMMIT`, said on stdout with ``what`` was done
    (or why there is none)."""
    from benchmarks.trees import BEFORE_COMMIT, before_tree

    tree = before_tree()
    if tree is None:
        print(f"git could not give the tree of {BEFORE_COMMIT}")
    else:
        print(f"before = detection of {BEFORE_COMMIT} (old tree); {what}\n")
    return tree


def evaluate_in_old_tree(cases: Sequence[Any], tree: Path) -> list[CaseScore]:
    """Score ``cases`` with the detection of the old ``tree`` (see the module's text)."""
    sessions: list[Any] = []

    def keep(session: Any) -> dict[str, Any]:
        sessions.append(session)
        return {}

    first = [score_case(case, analyze=keep) for case in cases]  # import only; the session is kept
    owners = [i for i, score in enumerate(first) if score.status == "ok"]
    readings = readings_in_old_tree(sessions, tree)
    out = list(first)
    for i, got in zip(owners, readings, strict=True):
        if "error" in got:
            out[i] = replace(first[i], status="crash", error=got["error"])
        else:
            out[i] = replace(first[i], **compare(read_result(got), cases[i].truth))
    return out


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=10, help="seeds per kind (default 10)")
    parser.add_argument("--noise", type=float, nargs="+", default=list(NOISE_LEVELS), help="noise levels")
    parser.add_argument("--kinds", nargs="+", default=list(ALL_KINDS), choices=list(ALL_KINDS), metavar="KIND")
    parser.add_argument("--by", default="kind", choices=["kind", "noise", "layout"], help="split the rows by (default kind)")
    parser.add_argument("--flags", action="store_true", help="also print the interpretation-flag table")
    parser.add_argument("--cases-csv", type=Path, help="also write one row per case to this CSV file")
    parser.add_argument("--before", action="store_true", help="score the detection of the tree before the threshold work")
    args = parser.parse_args(argv)
    start = time.perf_counter()
    suite = simulation_suite(args.kinds, seeds=range(args.seeds), noise_levels=args.noise)
    if args.before:
        tree = old_tree("cases simulated and imported by this tree")
        if tree is None:
            return 1
        scores = evaluate_in_old_tree(list(suite), tree)
    else:
        scores = evaluate_suite(suite)
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
