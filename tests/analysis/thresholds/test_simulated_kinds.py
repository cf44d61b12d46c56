"""Thresholds against the simulator's suite of hard kinds of tests (issue items), across seeds.

Every kind of ``analysis.simulation`` (15: the original athlete / recreational / rehab tests and
the hard ones — breath events, slow component, slow CO2 kinetics, treadmill and cycle steps,
over-breathing, heart failure with and without oscillating ventilation, ventilation-limited
lung disease, short steep ramps, submaximal tests) with seeds 0-4 at noise 0.5, 1 and 2
(225 tests), analysed as the pipeline does (outlier breaths excluded, phases, 10 s averaging).
Errors are % of the true VO2max. The bounds are the values measured with this code
(docs/thresholds.md, "Accuracy on the suite of kinds") plus a margin, so the gains stay. The
hard kinds carry cart noise, more cough breaths, irregular oscillation cycles and late rapid
shallow breathing in heart failure (docs/simulation.md): harder than the suite the earlier
bounds were measured on.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from analysis import columns as C
from analysis.breaths import DEFAULT_AVERAGING, average_breaths, exclude_breaths, find_outlier_breaths
from analysis.phases import detect_phases
from analysis.simulation import ORIGINAL_KINDS, simulation_suite
from analysis.thresholds import detect_thresholds

SEEDS = range(5)


def _analyse(session):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        excluded = find_outlier_breaths(session.breaths)["source_row"]
        clean = exclude_breaths(session.breaths, excluded)
        labels = detect_phases(clean).to_numpy()
        avg = average_breaths(clean, DEFAULT_AVERAGING, phase_labels=labels).reset_index(drop=True)
        phases = avg[C.PHASE].fillna("exercise").astype(str).to_numpy()
        return detect_thresholds(avg, phases=phases)


@pytest.fixture(scope="module")
def suite():
    out = []
    for case in simulation_suite(seeds=SEEDS):
        out.append((case.kind, case.seed, case.noise, case.truth, _analyse(case.session)))
    return out


def _errors(suite, key, *, kinds=None):
    errs, missing = [], 0
    for kind, _, _, truth, report in suite:
        if kinds is not None and kind not in kinds:
            continue
        true = getattr(truth, f"{key}_vo2_ml_min")
        if true is None:
            continue
        pick = getattr(report, key)
        if pick is None:
            missing += 1
        else:
            errs.append(abs(pick.vo2_ml_min - true) / truth.vo2max_ml_min * 100)
    return np.array(errs), missing


def test_vt1_accuracy_all_kinds(suite):
    # measured on these 225 tests (cart noise): median 1.7 %, p90 6.3 % of VO2max, 37 not given
    # (1.9 / 6.7 % before excess CO2 beside V-slope counted 0.4 of its weight; 7.1 %, 39 not given
    # before V-slope's lines needed 7 points each; 2.1 / 9.7 %, 14 not given
    # before a lone reading contradicted by another method, or one on the rise at VT2, became
    # not determinable)
    err, missing = _errors(suite, "vt1")
    assert np.median(err) <= 3.0
    assert np.percentile(err, 90) <= 8.5
    assert missing <= 42


def test_vt1_accuracy_original_kinds(suite):
    # the original, easier suite keeps VT1 median <= 4 % and p90 <= 8 %: measured 1.6 / 6.0 % on
    # these 45 tests, two not determinable (noise 2; 1.5 / 6.2 % and three with V-slope lines of
    # 5 points); a p90 of 45 tests moves with one test, hence the margin
    err, missing = _errors(suite, "vt1", kinds=ORIGINAL_KINDS)
    assert np.median(err) <= 3.0
    assert np.percentile(err, 90) <= 9.0
    assert missing <= 3


def test_vt2_accuracy_and_no_false_vt2(suite):
    # measured (cart noise): median 1.8 %, p90 4.6 %, 18 of 177 missed; VT2 reported in 0 of 48
    # tests without one (5 of 48 before a VT2 needed a VE/VCO2 rise or a PETCO2 fall). 15 were
    # missed (p90 5.3 %) before a VT2 less than 14 % of the VO2 range above VT1 became not
    # determinable: the three set aside here were 9-20 % of VO2max off (on the 450-test harness
    # that rule also removed the two VT2s reported in oscillating heart failure without one)
    err, missing = _errors(suite, "vt2")
    assert np.median(err) <= 2.5
    assert np.percentile(err, 90) <= 7.0
    assert missing <= 20
    without = [r for k, _, _, t, r in suite if t.vt2_vo2_ml_min is None]
    false = sum(r.vt2 is not None for r in without)
    assert false <= len(without) / 7
    assert false <= 2


def test_oscillating_ventilation_keeps_vt2(suite):
    # VT2 under oscillating ventilation: with pure-sine cycles 6 of 6 here (median 0.6 %); with
    # irregular cycles (cart-noise suite) 3 of 6 (median 8.2 %)
    err, missing = _errors(suite, "vt2", kinds=("hf_oscillation",))
    assert err.size >= 3 and missing <= 3
    assert np.median(err) <= 9.0


def test_step_onset_no_longer_taken_for_vt1(suite):
    # walk-to-run and first-stage jumps: VT1 median within 3 % of VO2max (measured 1.7 / 1.5 %)
    for kind in ("treadmill_steps", "cycle_steps"):
        err, _ = _errors(suite, "vt1", kinds=(kind,))
        assert np.median(err) <= 3.0, kind


def test_short_ramps_degrade_gracefully(suite):
    # short steep ramps: the readings given are closer (measured median 2.5 %, p90 9.4 % with cart
    # noise; 22 % before a reading on the rise at VT2 became not determinable; before this work
    # 13.7 % / 29 % on seeds 0-9 without cart noise), and a lone early reading is reported as not
    # determinable
    err, missing = _errors(suite, "vt1", kinds=("short_ramp",))
    assert np.median(err) <= 5.0
    assert np.percentile(err, 90) <= 14.0
    for kind, _, _, _, report in suite:
        if kind == "short_ramp" and report.vt1 is None and report.vt1_undetermined is not None:
            assert not report.vt1_undetermined.determinable and report.vt1_undetermined.reason


def test_interval_calibration(suite):
    # the stated 90 % interval holds the truth in 85-95 % of tests (measured here 92 % / 92 % with
    # the confidence scaling; 91 % / 90 % on the hard kinds of the 450 tests of seeds 0-9 through
    # the importer and the pipeline)
    for key in ("vt1", "vt2"):
        hits = []
        for _, _, _, truth, report in suite:
            true = getattr(truth, f"{key}_vo2_ml_min")
            pick = getattr(report, key) or getattr(report, f"{key}_undetermined")
            if true is None or pick is None or pick.ci90_vo2_ml_min is None:
                continue
            lo, hi = pick.ci90_vo2_ml_min
            hits.append(lo <= true <= hi)
        assert 0.85 <= np.mean(hits) <= 0.95, (key, np.mean(hits))


def test_vt1_before_vt2_always(suite):
    for kind, seed, noise, _, report in suite:
        if report.vt1 is not None and report.vt2 is not None:
            assert report.vt1.vo2_ml_min < report.vt2.vo2_ml_min, (kind, seed, noise)
            assert report.vt1.t_s < report.vt2.t_s, (kind, seed, noise)
