"""Speed of the analysis: one 2,000-breath session, its stages, and a 500-session batch.

Targets (from the pipeline brief): ``analyze_session`` on 2,000 breaths within 3x the time
``pandas.read_csv`` needs to read that session file (baseline measured in the same run), and
the folder batch of ``tidemark analyze DIR --out`` at 20 sessions/s or more on 2 cores.
``TIDEMARK_BENCH_SESSIONS`` sets the batch size (default 500).
"""

from __future__ import annotations

import os
import resource
import tempfile
import time
from pathlib import Path

import pandas as pd

from benchmarks.table import BenchRow, best_of

N_BREATHS = 2000
#: Batch target of the folder analysis (issue): sessions per second on 2 cores.
TARGET_SESSIONS_PER_S = 20.0


def best_cpu(fn, *, repeats: int = 5) -> float:
    """Best process CPU time of ``repeats`` calls, s (less sensitive to other load than wall time)."""
    best = float("inf")
    for _ in range(repeats):
        c0 = time.process_time()
        fn()
        best = min(best, time.process_time() - c0)
    return best


def long_session():
    """A 2,000-breath simulated cycle test (long rest, warm-up and recovery around a ramp)."""
    from analysis.simulation import TRAINED_CYCLIST, ProtocolSpec, simulate_session
    from analysis.session import Session

    protocol = ProtocolSpec(
        mode="cycle", rest_s=1200, warmup_s=1200, warmup_w=120, ramp_w_per_min=9, recovery_s=1200, recovery_w=30
    )
    s = simulate_session(TRAINED_CYCLIST, protocol, seed=2000)
    if len(s.breaths) < N_BREATHS:
        raise RuntimeError(f"the benchmark protocol gave only {len(s.breaths)} breaths")
    return Session(dict(s.meta), s.breaths.iloc[:N_BREATHS].reset_index(drop=True), source_name="bench.session.csv")


def measure() -> list[BenchRow]:
    from analysis import pipeline as P
    from analysis.breaths.cleaning import clean_breaths
    from analysis.interpretation.lag import threshold_lag
    from analysis.interpretation.summary import interpret_test
    from analysis.oxygen.from_test import oxygen_from_test
    from analysis.oxygen.pathway import oxygen_pathway
    from analysis.phases import label_phases
    from analysis.records import to_json
    from analysis.io import read_session
    from analysis.io.session_file import write_session
    from analysis.settings import AnalysisSettings
    from analysis.simulation import DEMO_TESTS, generate_demo
    from tidemark.commands.analyze import analyze_batch

    rows: list[BenchRow] = []
    session = long_session()
    settings = AnalysisSettings()
    with tempfile.TemporaryDirectory() as tmp:
        path = write_session(session, Path(tmp) / "bench.session.csv")
        read_csv = best_of(lambda: pd.read_csv(path, comment="#"), repeats=10)
        read_sess = best_of(lambda: read_session(path), repeats=5)
        read_csv_cpu = best_cpu(lambda: pd.read_csv(path, comment="#"), repeats=10)
        P.analyze_session(session, settings)  # warm-up: imports and caches are not part of a run
        read_and_analyze = best_of(lambda: P.analyze_session(read_session(path), settings), repeats=5)
    analyze = best_of(lambda: P.analyze_session(session, settings), repeats=7)
    analyze_cpu = best_cpu(lambda: P.analyze_session(session, settings), repeats=7)
    extra = f"{len(session.breaths)} breaths"
    rows.append(
        BenchRow(
            "TARGET 1: analyze_session, 2,000 breaths", analyze, "pd.read_csv of the same file", read_csv,
            "≤ 3x read_csv",
            f"{extra}, Hb known (oxygen comparison included); CPU {analyze_cpu * 1000:.1f} ms vs "
            f"{read_csv_cpu * 1000:.1f} ms = {analyze_cpu / read_csv_cpu:.1f}x",
        )
    )
    rows.append(
        BenchRow("read_session + analyze_session, same file", read_and_analyze, "pd.read_csv of the same file",
                 read_csv, "", "file to results, as one folder-batch job does (with oxygen)")
    )
    rows.append(BenchRow("read_session (strict reader), same file", read_sess, "pd.read_csv of the same file",
                         read_csv, "", extra))

    # stages, to show where the time goes (same baseline)
    breaths = session.breaths
    clean_kw = dict(window_breaths=settings.outlier_window_breaths, k_sd=settings.outlier_k_sd)
    clean = clean_breaths(breaths, **clean_kw).breaths
    labels = label_phases(clean).labels.to_numpy()
    avg = P.average_breaths(clean, settings.averaging, phase_labels=labels).reset_index(drop=True)
    res = P.analyze_session(session, settings)
    phases_avg = res.averaged["phase"].astype(str).to_numpy()
    stages = [
        ("stage: outlier breaths", lambda: clean_breaths(breaths, **clean_kw)),
        ("stage: phases", lambda: label_phases(clean)),
        ("stage: averaging", lambda: P.average_breaths(clean, settings.averaging, phase_labels=labels)),
        ("stage: thresholds", lambda: P.detect_thresholds(avg, phases=phases_avg)),
        (
            "stage: oxygen comparison (4 states)",
            lambda: oxygen_from_test(res.averaged, phases_avg=phases_avg, hb_g_dl=res.subject.hb_g_dl,
                                     options=settings.oxygen, peak=res.peak, vt1=res.vt1, vt2=res.vt2),
        ),
        (
            "stage: ramp response-time fit (lag correction)",
            lambda: threshold_lag(res.averaged, phases_avg=phases_avg, vt1=res.vt1, vt2=res.vt2, mode=res.subject.mode),
        ),
        ("stage: oxygen pathway (cascade, what-if, sensitivity)", lambda: oxygen_pathway(res.oxygen)),
        (
            "stage: interpretation (flags and the values behind them)",
            lambda: interpret_test(
                clean, res.averaged, breath_phases=labels.astype(str), phases_avg=phases_avg,
                meta=P.effective_metadata(session, settings), mode=res.subject.mode,
                beta_blocker=res.subject.beta_blocker, indices=res.indices, maximality=res.maximality,
                vo2_peak_ml_min=res.peak.vo2_ml_min, vt1=res.vt1, vt2=res.vt2,
                reference_set=settings.reference_set, lag=res.interpretation.lag if res.interpretation else None,
            ),
        ),
        ("stage: results JSON (to_json)", lambda: to_json(res)),
    ]
    for name, fn in stages:
        t = best_of(fn, repeats=5)
        rows.append(BenchRow(name, t, "pd.read_csv", read_csv, ""))

    n = int(os.environ.get("TIDEMARK_BENCH_SESSIONS", "500"))
    workers = 2
    with tempfile.TemporaryDirectory() as tmp:
        demo = generate_demo(Path(tmp) / "demo")
        folder = Path(tmp) / "batch"
        folder.mkdir()
        files = []
        for i in range(n):
            src = demo[i % len(demo)]
            dst = folder / f"{i:04d}_{src.name}"
            dst.write_bytes(src.read_bytes())
            files.append(dst)
        cpu0 = resource.getrusage(resource.RUSAGE_CHILDREN)
        t0 = time.perf_counter()
        out = analyze_batch(files, workers=workers, progress=False)
        batch = time.perf_counter() - t0
        cpu1 = resource.getrusage(resource.RUSAGE_CHILDREN)
    child_cpu = (cpu1.ru_utime + cpu1.ru_stime) - (cpu0.ru_utime + cpu0.ru_stime)
    failed = sum(r["status"] != "ok" for r in out)
    rate = n / batch
    allowed = n / TARGET_SESSIONS_PER_S
    rows.append(
        BenchRow(
            f"TARGET 2: batch, {n} sessions, {workers} workers: {rate:.1f} sessions/s",
            batch,
            f"time allowed at {TARGET_SESSIONS_PER_S:g}/s",
            allowed,
            f"≥ {TARGET_SESSIONS_PER_S:g} sessions/s (ratio ≤ 1)",
            f"{failed} failed; worker CPU {1000 * child_cpu / n:.0f} ms/session "
            f"(= {workers * n / child_cpu:.1f} sessions/s on {workers} idle cores); demo files, 250-550 breaths, "
            "pool start-up included",
        )
    )
    return rows


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
