"""Each kind of simulated test holds the truth its metadata states (checked on the noise-free
series), and suites are deterministic. Detection accuracy is not asserted here."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from analysis import columns as C
from analysis.simulation import (
    ALL_KINDS,
    HARD_KINDS,
    ORIGINAL_KINDS,
    CaseTruth,
    case_inputs,
    noise_free_course,
    simulate_case,
    simulation_suite,
)

SEEDS = (0, 1, 2)


def _clean(kind: str, seed: int):
    return simulate_case(kind, seed, noise=0.0, clean=True)


def _exercise(session):
    b = session.breaths
    return b[b[C.PHASE] == "exercise"]


def _exercise_of(course, session):
    t = course[C.T_S]
    return course[(t >= _exercise(session)[C.T_S].iloc[0] - 0.5) & (t <= session.meta["truth_exercise_end_t_s"])]


def _course(kind: str, seed: int, step_s: float = 1.0, *, oscillation: bool = True):
    inputs = case_inputs(kind, seed)
    extras = inputs.extras if oscillation else replace(inputs.extras, oscillation_period_s=None)
    s = _clean(kind, seed)
    end = float(s.breaths[C.T_S].iloc[-1])
    return noise_free_course(inputs.profile, inputs.protocol, np.arange(0.0, end, step_s), extras=extras), s


@pytest.mark.parametrize("kind", ALL_KINDS)
@pytest.mark.parametrize("seed", SEEDS)
def test_vt1_truth_is_where_the_noise_free_vo2_crosses_it(kind, seed):
    b, s = _course(kind, seed, oscillation=False)  # the metabolic VO2 behind an oscillation
    truth = CaseTruth.from_meta(s.meta)
    for key in ("vt1", "vt2"):
        vo2, t = getattr(truth, f"{key}_vo2_ml_min"), getattr(truth, f"{key}_t_s")
        if vo2 is None:
            assert t is None
            continue
        # the model's VO2 at the stated time is the stated VO2 (1-s samples)
        at = float(np.interp(t, b[C.T_S], b[C.VO2_ML_MIN]))
        assert at == pytest.approx(vo2, rel=0.005)
        assert truth.vo2max_ml_min > vo2
    assert truth.vo2peak_ml_min <= truth.vo2max_ml_min + 1e-6


@pytest.mark.parametrize("kind", [k for k in ALL_KINDS if not k.startswith("hf_") or k == "hf_plain"])
@pytest.mark.parametrize("seed", SEEDS)
def test_ve_vco2_slope_truth_matches_the_noise_free_breaths(kind, seed):
    course, s = _course(kind, seed, step_s=0.5)  # time-uniform, as averaged data are
    truth = CaseTruth.from_meta(s.meta)
    ex = _exercise_of(course, s)
    vco2_l, ve = ex[C.VCO2_ML_MIN] / 1000.0, ex[C.VE_L_MIN]
    whole = np.polyfit(vco2_l, ve, 1)[0]
    assert whole == pytest.approx(truth.ve_vco2_slope_whole_exercise, abs=0.3)
    if truth.vt2_t_s is not None:
        below = ex[C.T_S] <= truth.vt2_t_s
        assert np.polyfit(vco2_l[below], ve[below], 1)[0] == pytest.approx(truth.ve_vco2_slope_to_vt2, abs=0.3)
        # without over-breathing the line below VT2 is the planted one
        if kind != "overbreathing":
            assert truth.ve_vco2_slope_to_vt2 == pytest.approx(truth.ve_vco2_slope, abs=0.6)


def _course_with(kind: str, seed: int, **changes):
    inputs = case_inputs(kind, seed)
    s = _clean(kind, seed)
    end = float(s.breaths[C.T_S].iloc[-1])
    return noise_free_course(inputs.profile, inputs.protocol, np.arange(0.0, end, 1.0), extras=replace(inputs.extras, **changes))


def _strongest_period_s(ratio: np.ndarray) -> float:
    x = (ratio - 1.0) * np.hanning(len(ratio))
    power = np.abs(np.fft.rfft(x, n=8 * len(x))) ** 2
    freq = np.fft.rfftfreq(8 * len(x), d=1.0)
    return float(1.0 / freq[1:][np.argmax(power[1:])])


@pytest.mark.parametrize("seed", range(5))
def test_sustained_oscillation_period_and_amplitude_are_recovered(seed):
    course, s = _course("hf_oscillation", seed)
    plain, _ = _course("hf_oscillation", seed, oscillation=False)
    truth = CaseTruth.from_meta(s.meta)
    assert truth.oscillation_present
    assert 40 <= truth.oscillation_period_s <= 90 and 0.12 <= truth.oscillation_amplitude_fraction <= 0.30
    assert s.meta["truth_oscillation_exercise_fraction"] >= 0.6
    extras = case_inputs("hf_oscillation", seed).extras
    assert 0.08 <= extras.oscillation_period_jitter <= 0.20 and 0.15 <= extras.oscillation_amplitude_jitter <= 0.35
    t = course[C.T_S].to_numpy()
    keep = t < s.meta["truth_oscillation_end_t_s"]
    # without the cycle-to-cycle irregularity: VE over the oscillation-free VE swings by 1 +/- A
    # and the strongest periodogram peak (rest and exercise) is the period
    pure = (_course_with("hf_oscillation", seed, oscillation_period_jitter=0.0, oscillation_amplitude_jitter=0.0)
            [C.VE_L_MIN] / plain[C.VE_L_MIN]).to_numpy()
    assert float(pure.max() - 1) == pytest.approx(truth.oscillation_amplitude_fraction, rel=0.02)
    assert _strongest_period_s(pure[keep]) == pytest.approx(truth.oscillation_period_s, rel=0.05)
    # irregular cycles: the swing's RMS is A / sqrt(2) (a sine's) within 25 %, the period
    # within 10 %, and the cycles do differ
    ratio = (course[C.VE_L_MIN] / plain[C.VE_L_MIN]).to_numpy()
    rms = float(np.sqrt(np.mean((ratio[keep] - 1.0) ** 2)))
    assert rms == pytest.approx(truth.oscillation_amplitude_fraction / np.sqrt(2), rel=0.25)
    assert _strongest_period_s(ratio[keep]) == pytest.approx(truth.oscillation_period_s, rel=0.10)
    assert float(np.max(np.abs(ratio - pure))) > 0.02


@pytest.mark.parametrize("seed", range(5))
def test_transient_and_plain_heart_failure_have_no_sustained_oscillation(seed):
    transient = CaseTruth.from_meta(_clean("hf_transient_oscillation", seed).meta)
    assert not transient.oscillation_present and transient.oscillation_period_s is not None
    assert _clean("hf_transient_oscillation", seed).meta["truth_oscillation_exercise_fraction"] < 0.6
    plain = _clean("hf_plain", seed)
    assert not CaseTruth.from_meta(plain.meta).oscillation_present
    assert "truth_oscillation_period_s" not in plain.meta
    # heart failure: steep VE/VCO2 slope (Arena et al. 2007 classes start at 30, from memory)
    assert CaseTruth.from_meta(plain.meta).ve_vco2_slope >= 36


@pytest.mark.parametrize("seed", range(6))
def test_lung_limited_tests_plateau_near_mvv_retain_co2_and_desaturate(seed):
    s = _clean("lung_limited", seed)
    truth = CaseTruth.from_meta(s.meta)
    meta = s.meta
    assert truth.vt2_vo2_ml_min is None and "truth_vt2_t_s" not in meta
    mvv = meta.get("mvv_l_min", 40.0 * meta["fev1_l"] if "fev1_l" in meta else None)
    assert mvv == pytest.approx(truth.mvv_l_min)
    ex = _exercise(s)
    ve_peak = float(ex[C.VE_L_MIN].iloc[-5:].mean())
    reserve_pct = 100 * (mvv - ve_peak) / mvv
    # breathing reserve below 15 % of MVV (ATS/ACCP 2003, from memory)
    assert reserve_pct < 15 and truth.breathing_reserve_pct < 15
    assert ve_peak < mvv
    # VE stops following VCO2 late in the test: VE/VCO2 falls over the last third
    third = ex.iloc[-len(ex) // 3 :]
    eq = third[C.VE_L_MIN] / third[C.VCO2_ML_MIN] * 1000
    assert float(eq.iloc[-3:].mean()) < float(eq.iloc[:3].mean())
    # PETCO2 rises late (CO2 retained) and SpO2 falls by 4-9 points
    assert float(ex[C.PETCO2_MMHG].iloc[-1]) - float(ex[C.PETCO2_MMHG].min()) >= 2.0
    fall = float(s.breaths[C.SPO2_PCT].iloc[:10].mean() - ex[C.SPO2_PCT].min())
    assert 4.0 <= fall <= 9.0
    assert fall == pytest.approx(truth.spo2_rest_pct - truth.spo2_min_pct, abs=0.05)


@pytest.mark.parametrize("kind", ["athlete", "recreational"])
@pytest.mark.parametrize("seed", range(10))
def test_healthy_tests_have_no_oscillation_no_desaturation_and_a_normal_reserve(kind, seed):
    truth = CaseTruth.from_meta(_clean(kind, seed).meta)
    assert not truth.oscillation_present
    assert truth.spo2_rest_pct - truth.spo2_min_pct < 2.0
    assert truth.breathing_reserve_pct >= 25


@pytest.mark.parametrize("seed", SEEDS)
def test_overbreathing_shows_at_rest_and_fades_before_vt1(seed):
    s = _clean("overbreathing", seed)
    inputs = case_inputs("overbreathing", seed)
    rest = s.breaths[s.breaths[C.PHASE] == "rest"]
    rer = rest[C.VCO2_ML_MIN] / rest[C.VO2_ML_MIN]
    assert float(rer.mean()) > 1.0 and s.meta["truth_rer_rest"] > 1.0
    assert float(rest[C.PETCO2_MMHG].mean()) < inputs.profile.petco2_rest_mmhg - 4.0
    assert float((rest[C.VE_L_MIN] / rest[C.VCO2_ML_MIN] * 1000).mean()) > 40
    # gone by VT1 (< 3 % of the resting excess left)
    t_left = s.meta["truth_vt1_t_s"] - inputs.protocol.rest_s
    assert np.exp(-t_left / inputs.extras.overbreathing_tau_s) < 0.03


@pytest.mark.parametrize("seed", SEEDS)
def test_short_and_submaximal_tests(seed):
    short = _clean("short_ramp", seed)
    p = case_inputs("short_ramp", seed).protocol
    assert (short.meta["truth_exercise_end_t_s"] - p.rest_s - p.warmup_s) / 60 < 6.0
    sub = _clean("submax", seed)
    assert sub.meta["truth_rer_peak"] < 1.05
    assert sub.meta["truth_vo2peak_ml_min"] < 0.95 * sub.meta["truth_vo2max_ml_min"]


@pytest.mark.parametrize("seed", SEEDS)
def test_slow_component_steepens_vo2_against_work_above_vt1(seed):
    s = _clean("slow_component", seed)
    ex = _exercise(s)
    vt1_t = s.meta["truth_vt1_t_s"]
    below = ex[(ex[C.T_S] > ex[C.T_S].iloc[0] + 90) & (ex[C.T_S] < vt1_t)]
    above = ex[ex[C.T_S] > vt1_t + 60]
    k_below = np.polyfit(below[C.WORK_W], below[C.VO2_ML_MIN], 1)[0]
    k_above = np.polyfit(above[C.WORK_W], above[C.VO2_ML_MIN], 1)[0]
    assert k_below == pytest.approx(s.meta["truth_vo2_work_slope_ml_min_w"], rel=0.05)
    assert k_above > k_below * 1.05


@pytest.mark.parametrize("kind", ["treadmill_steps", "cycle_steps"])
@pytest.mark.parametrize("seed", SEEDS)
def test_step_protocols_jump_at_onset_and_change_in_stages(kind, seed):
    s = _clean(kind, seed)
    inputs = case_inputs(kind, seed)
    b = s.breaths
    load = [C.WORK_W] if kind == "cycle_steps" else [C.SPEED_KMH, C.GRADE_PCT]
    warm = b[b[C.PHASE] == "warmup"]
    ex = _exercise(s)
    first = ex[load].iloc[0].to_numpy(float)
    assert (first > warm[load].iloc[-1].to_numpy(float)).any()  # a step up at exercise onset
    levels = ex[load].drop_duplicates()
    assert len(levels) >= 3
    # stage changes every stage_s
    changes = ex[C.T_S].to_numpy()[np.flatnonzero((ex[load].diff().abs().sum(axis=1) > 0).to_numpy())]
    gaps = np.diff(changes)
    assert np.all(np.abs(gaps - inputs.protocol.stage_s) < 5.0)
    assert inputs.protocol.stage_s in (60.0, 120.0, 180.0)
    # the CO2 stores lag after each step: RER dips right after the onset jump
    assert s.meta["truth_co2_extra_tau_s"] >= 5
    rer = ex[C.VCO2_ML_MIN] / ex[C.VO2_ML_MIN]
    assert float(rer.iloc[:10].min()) < float(warm[C.VCO2_ML_MIN].iloc[-1] / warm[C.VO2_ML_MIN].iloc[-1])


@pytest.mark.parametrize("kind", ALL_KINDS)
def test_same_case_twice_is_identical(kind):
    a, b = simulate_case(kind, 4, noise=1.0), simulate_case(kind, 4, noise=1.0)
    pd.testing.assert_frame_equal(a.breaths, b.breaths)
    assert a.meta == b.meta


def test_suite_size_labels_and_foreign_half():
    cases = list(simulation_suite(["rehab", "lung_limited"], seeds=range(3), noise_levels=(0.5, 1.0)))
    assert len(cases) == 12
    assert [c.label for c in cases[:3]] == ["rehab/s0/n0.5", "rehab/s0/n1", "rehab/s1/n0.5"]
    assert sum(c.foreign for c in cases) == 6
    # the same seed is the same person at every noise level
    assert cases[0].truth == cases[1].truth
    assert cases[0].session.meta["body_mass_kg"] == cases[1].session.meta["body_mass_kg"]


def test_kind_lists():
    assert set(ORIGINAL_KINDS) | set(HARD_KINDS) == set(ALL_KINDS)
    assert len(ALL_KINDS) == 15 and not set(ORIGINAL_KINDS) & set(HARD_KINDS)
    with pytest.raises(Exception, match="kind"):
        case_inputs("nonsense", 0)


@pytest.mark.parametrize("kind", ALL_KINDS)
def test_no_simulated_breath_is_past_the_reject_limits(kind):
    # a cart never exports an impossible value: the importer would reject it (analysis.columns)
    for seed in range(6):
        b = simulate_case(kind, seed, noise=2.0).breaths
        for name in C.NUMERIC:
            if name in b:
                spec = C.COLUMNS[name]
                values = b[name].to_numpy(dtype=float)
                assert np.all(values >= spec.reject_below) and np.all(values <= spec.reject_above), (seed, name)
        assert np.all(b[C.VCO2_ML_MIN] / b[C.VO2_ML_MIN] <= C.RER_REJECT_ABOVE)
        assert np.all(np.diff(b[C.T_S]) > 0)


@pytest.mark.parametrize("kind", ["athlete", "short_ramp", "lung_limited"])
def test_thirty_second_peak_truth_is_the_mean_of_the_last_half_minute(kind):
    course, s = _course(kind, 0, step_s=0.5, oscillation=False)
    end = s.meta["truth_exercise_end_t_s"]
    last = course[(course[C.T_S] >= end - 30) & (course[C.T_S] <= end)]
    truth = CaseTruth.from_meta(s.meta)
    assert truth.vo2peak_30s_ml_min == pytest.approx(float(last[C.VO2_ML_MIN].mean()), rel=0.002)
    assert truth.vo2peak_30s_ml_min <= truth.vo2peak_ml_min
