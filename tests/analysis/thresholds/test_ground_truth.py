"""Consensus thresholds against the project simulator's planted truth, across seeds and noise.

Each demo profile (six tests, cycle and treadmill, athlete to heart failure) is simulated with
seeds 0-9 at noise 0.5, 1 and 2, with 3 artifact breaths; the analysis runs as in the pipeline
(outliers excluded, default averaging). Tolerance: the larger of 10 % of the true VO2 and
200 mL/min (common practice: observers' VT1 readings typically differ by 100-200 mL/min).

Measured with this code (docs/thresholds.md), share of runs within tolerance:
noise 0.5 -> VT1 60/60, VT2 40/40; noise 1 -> VT1 58/60, VT2 40/40; noise 2 -> VT1 42/60,
VT2 40/40 (47/60 before a lone VT1 contradicted by another method became "not determinable"; before the on-transient rule, weighted consensus and scaled agreement: 60/60, 60/60,
47-53/60 and 40/40 throughout — the hard kinds of the simulator suite gained far more, see
docs/thresholds.md). No run of a profile without an RCP reported a VT2 above low confidence.
High-confidence VT1 picks were within tolerance in 126 of 129 runs (18/21 at noise 2).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from analysis.breaths import DEFAULT_AVERAGING, AveragingSpec, average_breaths, exclude_breaths, find_outlier_breaths
from analysis.simulation import DEMO_TESTS, simulate_session
from analysis.thresholds import detect_thresholds

SEEDS = range(10)


def tolerance(truth_ml_min: float) -> float:
    return max(0.10 * truth_ml_min, 200.0)


def run(noise: float) -> list[dict]:
    out = []
    for demo in DEMO_TESTS:
        for seed in SEEDS:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                s = simulate_session(demo.profile, demo.protocol, seed=seed, noise=noise, artifacts=3)
                excluded = find_outlier_breaths(s.breaths)["source_row"]
                avg = average_breaths(exclude_breaths(s.breaths, excluded), DEFAULT_AVERAGING)
                r = detect_thresholds(avg)
            out.append({"name": f"{demo.stem} seed {seed}", "meta": s.meta, "report": r})
    return out


@pytest.fixture(scope="module", params=[0.5, 1.0, 2.0], ids=["noise0.5", "noise1", "noise2"])
def runs(request):
    return request.param, run(request.param)


#: Smallest share of runs within tolerance, per noise level (measured share minus margin).
MIN_SHARE_VT1 = {0.5: 1.0, 1.0: 0.95, 2.0: 0.68}
MIN_SHARE_VT2 = {0.5: 1.0, 1.0: 0.95, 2.0: 0.85}


def test_vt1_within_tolerance(runs):
    noise, results = runs
    hits, misses = 0, []
    for r in results:
        truth = r["meta"]["truth_vt1_vo2_ml_min"]
        pick = r["report"].vt1
        if pick is not None and abs(pick.vo2_ml_min - truth) <= tolerance(truth):
            hits += 1
        else:
            misses.append((r["name"], truth, None if pick is None else round(pick.vo2_ml_min)))
    assert hits / len(results) >= MIN_SHARE_VT1[noise], misses


def test_vt2_within_tolerance_when_truth_has_it(runs):
    noise, results = runs
    with_truth = [r for r in results if "truth_vt2_vo2_ml_min" in r["meta"]]
    assert len(with_truth) == 40  # four of the six demo tests reach their RCP
    hits = 0
    for r in with_truth:
        truth = r["meta"]["truth_vt2_vo2_ml_min"]
        pick = r["report"].vt2
        hits += pick is not None and abs(pick.vo2_ml_min - truth) <= tolerance(truth)
    assert hits / len(with_truth) >= MIN_SHARE_VT2[noise]


def test_no_confident_vt2_without_an_rcp(runs):
    _, results = runs
    without = [r for r in results if "truth_vt2_vo2_ml_min" not in r["meta"]]
    assert len(without) == 20
    for r in without:
        pick = r["report"].vt2
        assert pick is None or pick.confidence == "low", r["name"]


def test_vt1_below_vt2_whenever_both_found(runs):
    _, results = runs
    for r in results:
        rep = r["report"]
        if rep.vt1 is not None and rep.vt2 is not None:
            assert rep.vt1.vo2_ml_min < rep.vt2.vo2_ml_min or rep.vt1.confidence == "low", r["name"]


#: Largest median relative VT1 error per noise level (measured 1.4 %, 2.5 % and 4.9 %).
MAX_MEDIAN_VT1_ERROR = {0.5: 0.04, 1.0: 0.04, 2.0: 0.08}


def test_median_vt1_error(runs):
    noise, results = runs
    err = [
        abs(r["report"].vt1.vo2_ml_min / r["meta"]["truth_vt1_vo2_ml_min"] - 1) if r["report"].vt1 else 1.0
        for r in results
    ]
    assert float(np.median(err)) < MAX_MEDIAN_VT1_ERROR[noise]


def test_high_confidence_vt1_is_reliable(runs):
    # Confidence should mean something: measured over all 180 runs, 126 of 129 high-confidence
    # VT1 picks were within tolerance (59/59, 49/49 and 18/21 at noise 0.5, 1 and 2).
    _, results = runs
    high = [r for r in results if r["report"].vt1 is not None and r["report"].vt1.confidence == "high"]
    assert len(high) >= 10
    ok = sum(
        abs(r["report"].vt1.vo2_ml_min - r["meta"]["truth_vt1_vo2_ml_min"]) <= tolerance(r["meta"]["truth_vt1_vo2_ml_min"])
        for r in high
    )
    assert ok / len(high) >= 0.85


@pytest.mark.parametrize("stage_s", [60.0, 180.0])
def test_stepped_protocols(stage_s):
    # The four cycle demo tests with the ramp replaced by 1- or 3-minute steps, seeds 0-4,
    # noise 1. Measured: every VT1 within tolerance (worst 10.4 % = 98 mL/min with 1-min
    # steps, 8.7 % with 3-min steps); VT2 19/20 within tolerance with 3-min steps.
    import dataclasses

    cycle = [d for d in DEMO_TESTS if d.protocol.mode == "cycle" and d.protocol.stop == "max"]
    assert len(cycle) == 4
    vt1_ok = vt2_ok = vt2_n = n = 0
    for demo in cycle:
        protocol = dataclasses.replace(demo.protocol, stage_s=stage_s)
        for seed in range(5):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                s = simulate_session(demo.profile, protocol, seed=seed, noise=1.0, artifacts=3)
                excluded = find_outlier_breaths(s.breaths)["source_row"]
                r = detect_thresholds(average_breaths(exclude_breaths(s.breaths, excluded)))
            n += 1
            t1 = s.meta["truth_vt1_vo2_ml_min"]
            vt1_ok += r.vt1 is not None and abs(r.vt1.vo2_ml_min - t1) <= tolerance(t1)
            if "truth_vt2_vo2_ml_min" in s.meta:
                t2 = s.meta["truth_vt2_vo2_ml_min"]
                vt2_n += 1
                vt2_ok += r.vt2 is not None and abs(r.vt2.vo2_ml_min - t2) <= tolerance(t2)
    assert vt1_ok == n
    assert vt2_ok / vt2_n >= 0.9


@pytest.mark.parametrize(
    "spec",
    [AveragingSpec("rolling_time", 30), AveragingSpec("breaths", 15), AveragingSpec("middle_of_n", 7), AveragingSpec("time_bin", 30)],
    ids=lambda s: s.label,
)
def test_any_averaging_choice_gives_the_same_thresholds(spec):
    # The reviewer's averaging choice changes the display, not the thresholds much: measured
    # over 6 demo tests x 5 seeds at noise 1, every VT1 within 10.5 % and every VT2 within 5 %.
    for demo in DEMO_TESTS[:4]:
        for seed in range(2):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                s = simulate_session(demo.profile, demo.protocol, seed=seed, noise=1.0, artifacts=3)
                excluded = find_outlier_breaths(s.breaths)["source_row"]
                r = detect_thresholds(average_breaths(exclude_breaths(s.breaths, excluded), spec))
            t1, t2 = s.meta["truth_vt1_vo2_ml_min"], s.meta["truth_vt2_vo2_ml_min"]
            assert abs(r.vt1.vo2_ml_min - t1) <= tolerance(t1)
            assert abs(r.vt2.vo2_ml_min - t2) <= tolerance(t2)
