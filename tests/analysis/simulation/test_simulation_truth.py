"""The simulator plants what its profile says: checked on noise-free series and across seeds.

Every expected value comes from the profile (the model's own parameters) or from a published /
common-practice physiological figure named beside the check.
"""

from __future__ import annotations

import numpy as np
import pytest

from analysis import columns as C
from analysis.simulation import (
    DEMO_TESTS,
    REHAB_BASELINE,
    REHAB_FOLLOWUP,
    SUBMAX_SCREEN,
    TRAINED_CYCLIST,
    noise_free_course,
    simulate_session,
)
from analysis.simulation._model import first_order_lag, treadmill_net_cost_ml_kg_min
from analysis.simulation import ProtocolSpec, RECREATIONAL_RUNNER

DEMO_IDS = [d.stem for d in DEMO_TESTS]


def _clean(demo, seed=7):
    return simulate_session(demo.profile, demo.protocol, seed=seed, noise=0, artifacts=0)


def _slope(x, y):
    return float(np.polyfit(np.asarray(x, float), np.asarray(y, float), 1)[0])


def _not_recovery(s):
    return s.breaths[s.breaths[C.PHASE] != "recovery"]


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_vslope_two_lines_match_model_slopes(demo):
    # Beaver et al. 1986: VCO2 against VO2 is two lines, lower slope near 1, upper clearly above 1.
    s = _clean(demo)
    b = _not_recovery(s)
    vt1 = s.meta["truth_vt1_vo2_ml_min"]
    below = b[b[C.VO2_ML_MIN] < vt1 - 1]
    above = b[b[C.VO2_ML_MIN] > vt1 + 1]
    assert _slope(below[C.VO2_ML_MIN], below[C.VCO2_ML_MIN]) == pytest.approx(demo.profile.vco2_slope_below_vt1, abs=1e-9)
    assert len(above) >= 10
    upper = _slope(above[C.VO2_ML_MIN], above[C.VCO2_ML_MIN])
    assert upper == pytest.approx(demo.profile.vco2_slope_above_vt1, abs=1e-9)
    assert upper - demo.profile.vco2_slope_below_vt1 > 0.1  # Beaver 1986 slope increase (from memory)
    assert 1.3 <= upper <= 1.6  # steepened slope ~1.3-1.5 (common practice)


@pytest.mark.parametrize("demo", [d for d in DEMO_TESTS if d.protocol.mode == "cycle"], ids=lambda d: d.stem)
def test_cycle_ramp_vo2_work_slope(demo):
    # ΔVO2/ΔWR on a cycle ramp ≈ 10 mL/min/W in healthy adults (common practice; ATS/ACCP 2003);
    # the model plants the profile's value, lower in the patients.
    s = _clean(demo)
    b = s.breaths
    t_ex = demo.protocol.rest_s + demo.protocol.warmup_s
    t_end = s.meta["truth_exercise_end_t_s"]
    tail = demo.profile.plateau_s + 10 if demo.profile.plateau else 0
    sel = b[(b[C.T_S] > t_ex + 5 * demo.profile.tau_on_s) & (b[C.T_S] < t_end - tail)]
    slope = _slope(sel[C.WORK_W], sel[C.VO2_ML_MIN])
    assert slope == pytest.approx(demo.profile.vo2_work_slope_ml_min_w, rel=0.01)
    assert 7.5 <= slope <= 11.0  # healthy ~10, impaired O2 delivery lower (common practice)


def test_healthy_cyclist_vo2_work_slope_is_about_10_with_noise():
    # ATS/ACCP 2003 (common practice): about 10 mL/min/W; regression on noisy breaths, 5 seeds.
    demo = DEMO_TESTS[0]
    for seed in range(5):
        s = simulate_session(demo.profile, demo.protocol, seed=seed, noise=1, artifacts=0)
        b = s.breaths
        t_ex = demo.protocol.rest_s + demo.protocol.warmup_s
        sel = b[(b[C.T_S] > t_ex + 150) & (b[C.T_S] < s.meta["truth_exercise_end_t_s"] - 90)]
        assert _slope(sel[C.WORK_W], sel[C.VO2_ML_MIN]) == pytest.approx(10.0, abs=0.8)


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_peak_rer_separates_maximal_from_submaximal(demo):
    # RER peak >= 1.10 as a secondary maximality criterion (common practice).
    s = _clean(demo)
    ex = s.breaths[s.breaths[C.PHASE] == "exercise"]
    rer_end = float((ex[C.VCO2_ML_MIN] / ex[C.VO2_ML_MIN]).iloc[-1])
    assert rer_end == pytest.approx(s.meta["truth_rer_peak"], abs=0.005)
    if demo.protocol.stop == "max":
        assert rer_end >= 1.10
    else:
        assert rer_end < 1.10
        assert s.meta["truth_vo2peak_ml_min"] < 0.9 * demo.profile.vo2max_ml_min


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_rer_starts_near_rest_value_and_passes_one_near_vt2(demo):
    s = _clean(demo)
    b = s.breaths
    rest = b[b[C.PHASE] == "rest"]
    assert float((rest[C.VCO2_ML_MIN] / rest[C.VO2_ML_MIN]).median()) == pytest.approx(demo.profile.rer_rest, abs=1e-9)
    if demo.protocol.stop != "max" or demo.profile.vt2_fraction is None:
        return
    ex = b[b[C.PHASE] == "exercise"]
    rer = (ex[C.VCO2_ML_MIN] / ex[C.VO2_ML_MIN]).to_numpy()
    vo2_at_one = float(ex[C.VO2_ML_MIN].to_numpy()[np.argmax(rer >= 1.0)])
    # RER crosses 1.0 between VT1 and a little above VT2 (common practice)
    assert demo.profile.vo2_vt1_ml_min < vo2_at_one < demo.profile.vo2_vt2_ml_min * 1.05


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_ve_vco2_slope_below_vt2_is_the_profiles(demo):
    s = _clean(demo)
    b = _not_recovery(s)
    limit = demo.profile.vo2_vt2_ml_min or np.inf
    below = b[b[C.VO2_ML_MIN] < limit - 1]
    slope = _slope(below[C.VCO2_ML_MIN] / 1000.0, below[C.VE_L_MIN])
    assert slope == pytest.approx(demo.profile.ve_vco2_slope, abs=1e-9)
    assert slope == pytest.approx(s.meta["truth_ve_vco2_slope"], abs=1e-9)
    above = b[b[C.VO2_ML_MIN] > limit + 1]
    if len(above) >= 5:  # respiratory compensation: steeper above VT2
        steeper = _slope(above[C.VCO2_ML_MIN] / 1000.0, above[C.VE_L_MIN])
        assert steeper == pytest.approx(demo.profile.rc_ve_factor * demo.profile.ve_vco2_slope, abs=1e-9)


def test_heart_failure_profile_has_steep_slope_class_iii_or_worse():
    # Arena et al. 2007 ventilatory classes: class III 36.0-44.9, IV >= 45.0.
    hf = next(d for d in DEMO_TESTS if d.profile.vt2_fraction is None)
    assert hf.profile.ve_vco2_slope >= 36.0
    assert "truth_vt2_t_s" not in _clean(hf).meta


def test_plateau_present_for_cyclist_absent_for_runner():
    # Taylor, Buskirk & Henschel 1955 (from memory): plateau when VO2 rises < 150 mL/min
    # despite more work.
    for demo, expect_plateau in ((DEMO_TESTS[0], True), (DEMO_TESTS[1], False)):
        s = _clean(demo)
        ex = s.breaths[s.breaths[C.PHASE] == "exercise"]
        t_end = ex[C.T_S].iloc[-1]
        last = ex[ex[C.T_S] >= t_end - 60]
        rise = float(last[C.VO2_ML_MIN].iloc[-1] - last[C.VO2_ML_MIN].iloc[0])
        load = C.WORK_W if C.WORK_W in ex else C.SPEED_KMH
        assert last[load].iloc[-1] > last[load].iloc[0]  # work kept rising
        assert (rise < 150) is expect_plateau
        if not expect_plateau:  # still rising with the load's O2 demand (ACSM running equation)
            p = demo.profile
            cost = treadmill_net_cost_ml_kg_min(last[C.SPEED_KMH].to_numpy()[[0, -1]], last[C.GRADE_PCT].to_numpy()[[0, -1]])
            demand_rise = (cost[1] - cost[0]) * p.body_mass_kg
            assert 0.6 * demand_rise < rise < 1.2 * demand_rise
    s = _clean(DEMO_TESTS[0])
    assert s.meta["truth_plateau"] == 1.0
    assert s.meta["truth_vo2peak_ml_min"] == pytest.approx(TRAINED_CYCLIST.vo2max_ml_min, rel=0.01)


def test_followup_better_than_baseline():
    base = next(d for d in DEMO_TESTS if d.profile is REHAB_BASELINE)
    follow = next(d for d in DEMO_TESTS if d.profile is REHAB_FOLLOWUP)
    assert base.profile.subject_id == follow.profile.subject_id
    assert follow.test_date > base.test_date
    a, b = _clean(base), _clean(follow)
    assert b.meta["truth_vo2peak_ml_min"] > a.meta["truth_vo2peak_ml_min"]
    assert b.meta["truth_vt1_vo2_ml_min"] > a.meta["truth_vt1_vo2_ml_min"]
    assert b.meta["truth_ve_vco2_slope"] < a.meta["truth_ve_vco2_slope"]
    assert b.breaths[C.VO2_ML_MIN].max() > a.breaths[C.VO2_ML_MIN].max()
    assert b.breaths[C.WORK_W].max() > a.breaths[C.WORK_W].max()


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_vt_truth_times_match_vo2_course(demo):
    s = _clean(demo)
    course = noise_free_course(demo.profile, demo.protocol, [s.meta["truth_vt1_t_s"]])
    assert float(course[C.VO2_ML_MIN].iloc[0]) == pytest.approx(s.meta["truth_vt1_vo2_ml_min"], abs=1.0)
    assert course[C.PHASE].iloc[0] == "exercise"
    if "truth_vt2_t_s" in s.meta:
        assert s.meta["truth_vt1_t_s"] < s.meta["truth_vt2_t_s"] < s.meta["truth_exercise_end_t_s"]


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_end_tidal_pressures_follow_thresholds(demo):
    # Common practice: PETCO2 rises to a plateau between VT1 and VT2 and falls after VT2;
    # PETO2 has its nadir around VT1 and rises after.
    s = _clean(demo)
    ex = _not_recovery(s)
    vo2 = ex[C.VO2_ML_MIN].to_numpy()
    petco2 = ex[C.PETCO2_MMHG].to_numpy()
    peto2 = ex[C.PETO2_MMHG].to_numpy()
    p = demo.profile
    assert petco2[np.argmin(vo2)] == pytest.approx(p.petco2_rest_mmhg, abs=0.5)
    assert petco2.max() == pytest.approx(p.petco2_rest_mmhg + p.petco2_rise_mmhg, abs=1e-9)
    if p.vo2_vt2_ml_min is not None and vo2.max() > p.vo2_vt2_ml_min:
        assert petco2[-1] < petco2.max() - 1.0
    # PETO2 stays near its floor up to VT1 (the floor lies at or before VT1) and rises after it
    up_to_vt1 = vo2 <= p.vo2_vt1_ml_min
    at_vt1 = float(np.interp(p.vo2_vt1_ml_min, np.sort(vo2), peto2[np.argsort(vo2)]))
    assert vo2[np.argmin(peto2)] <= p.vo2_vt1_ml_min + 0.02 * p.vo2max_ml_min
    assert at_vt1 - peto2[up_to_vt1].min() < 1.5
    if demo.protocol.stop == "max":
        assert peto2[-1] > at_vt1 + 5.0


def test_alveolar_gas_equation_at_rest():
    # Alveolar gas equation (textbook, from memory): PIO2 = 0.2093 x (760 - 47) = 149.2 mmHg;
    # PACO2 40, R 0.8 -> PAO2 = 149.2 - 40 x (0.2093 + 0.7907 / 0.8) = 101.3 mmHg.
    from analysis.simulation._model import peto2_mmhg

    assert float(peto2_mmhg(np.array([40.0]), np.array([0.8]), barometric_mmhg=760)[0]) == pytest.approx(101.3, abs=0.1)


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_heart_rate_linear_in_vo2_and_recovers(demo):
    s = _clean(demo)
    b = s.breaths
    p = demo.profile
    rest = b[b[C.PHASE] == "rest"]
    assert rest[C.HR_BPM].to_numpy() == pytest.approx(p.hr_rest_bpm)
    ex = _not_recovery(s)
    expected = p.hr_rest_bpm + (p.hr_max_bpm - p.hr_rest_bpm) * (ex[C.VO2_ML_MIN] - p.vo2_rest_ml_min) / (
        p.vo2max_ml_min - p.vo2_rest_ml_min
    )
    assert ex[C.HR_BPM].to_numpy() == pytest.approx(expected.to_numpy())
    rec = b[b[C.PHASE] == "recovery"]
    assert (np.diff(rec[C.HR_BPM]) < 0).all() and (np.diff(rec[C.VO2_ML_MIN]) < 0).all()
    # CO2 leaves more slowly than O2 uptake falls: RER rises in recovery (common practice)
    rer = (rec[C.VCO2_ML_MIN] / rec[C.VO2_ML_MIN]).to_numpy()
    assert rer[len(rer) // 2] > float(ex[C.VCO2_ML_MIN].iloc[-1] / ex[C.VO2_ML_MIN].iloc[-1])


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=DEMO_IDS)
def test_spo2_normal_and_patient_dips(demo):
    # SpO2 in the high 90s is normal, below 90 % a concern (common practice).
    s = _clean(demo)
    spo2 = s.breaths[C.SPO2_PCT]
    assert spo2.max() <= 100 and spo2.min() >= 92
    if demo.profile.spo2_drop_pct:
        assert spo2.min() < demo.profile.spo2_rest_pct - 1


@pytest.mark.parametrize("noise", [0.0, 1.0, 2.0])
def test_ve_equals_rf_times_vt(noise):
    s = simulate_session(TRAINED_CYCLIST, DEMO_TESTS[0].protocol, seed=5, noise=noise)
    b = s.breaths
    assert (b[C.RF_BPM] * b[C.VT_L]).to_numpy() == pytest.approx(b[C.VE_L_MIN].to_numpy(), rel=1e-12)


@pytest.mark.parametrize(("noise", "low", "high"), [(1.0, 0.05, 0.10), (2.0, 0.10, 0.20)])
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_breath_noise_size(noise, low, high, seed):
    # Lamarra et al. 1987 style (from memory): breath-to-breath VO2 noise roughly 5-10 % at
    # realistic noise; noise=2 doubles it. Measured against the model at the same breath times.
    demo = DEMO_TESTS[1]
    s = simulate_session(demo.profile, demo.protocol, seed=seed, noise=noise, artifacts=0)
    model = noise_free_course(demo.profile, demo.protocol, s.breaths[C.T_S].to_numpy())
    rel = s.breaths[C.VO2_ML_MIN].to_numpy() / model[C.VO2_ML_MIN].to_numpy() - 1.0
    assert low <= rel.std() <= high
    assert abs(rel.mean()) < 0.01  # no bias
    # one tidal-volume term moves VE, VO2 and VCO2 of a breath together
    rel_ve = s.breaths[C.VE_L_MIN].to_numpy() / model[C.VE_L_MIN].to_numpy() - 1.0
    rel_co2 = s.breaths[C.VCO2_ML_MIN].to_numpy() / model[C.VCO2_ML_MIN].to_numpy() - 1.0
    assert np.corrcoef(rel, rel_ve)[0, 1] > 0.4
    assert np.corrcoef(rel, rel_co2)[0, 1] > 0.6


@pytest.mark.parametrize("seed", range(6))
def test_artifacts_inside_test_and_only_there(seed):
    demo = DEMO_TESTS[seed % len(DEMO_TESTS)]
    with_art = simulate_session(demo.profile, demo.protocol, seed=seed, artifacts=3)
    without = simulate_session(demo.profile, demo.protocol, seed=seed, artifacts=0)
    times = [float(x) for x in with_art.meta["truth_artifact_t_s"].split(",")]
    assert len(times) == 3
    t = with_art.breaths[C.T_S]
    assert all(t.iloc[0] < x < t.iloc[-1] for x in times)
    changed = with_art.breaths[C.VE_L_MIN].to_numpy() != without.breaths[C.VE_L_MIN].to_numpy()
    assert sorted(t[changed].round(2).tolist()) == times
    ratio = with_art.breaths.loc[changed, C.VO2_ML_MIN] / without.breaths.loc[changed, C.VO2_ML_MIN]
    assert ((ratio >= 1.8) | (ratio <= 0.55)).all()
    assert (with_art.breaths.loc[changed, C.MARKER] == "").all()  # not marked in the table


def test_no_value_beyond_reject_limits_in_any_demo_test():
    for demo in DEMO_TESTS:
        for seed in (demo.seed, 1, 2):
            b = simulate_session(demo.profile, demo.protocol, seed=seed, noise=2.0).breaths
            for name, spec in C.COLUMNS.items():
                if name not in b or name in (C.PHASE, C.MARKER, C.T_S):
                    continue
                assert b[name].min() >= spec.reject_below, (demo.stem, name)
                assert b[name].max() <= spec.reject_above, (demo.stem, name)
            assert (b[C.VCO2_ML_MIN] / b[C.VO2_ML_MIN]).max() < C.RER_REJECT_ABOVE


def test_first_order_lag_trails_a_ramp_by_tau():
    # Hand-solvable: dx/dt = (u - x)/tau with u = c t gives x = c (t - tau) after the transient.
    t = np.arange(0, 600, 0.5)
    # exact solution from x(0) = 0: x = c (t - tau) + c tau exp(-t / tau)
    x = first_order_lag(5.0 * t, dt_s=0.5, tau_s=40.0, x0=0.0)
    assert x == pytest.approx(5.0 * (t - 40.0) + 5.0 * 40.0 * np.exp(-t / 40.0), abs=1e-6)
    late = t > 400
    assert x[late] == pytest.approx(5.0 * (t[late] - 40.0), abs=0.01)
    step = first_order_lag(np.full(400, 100.0), dt_s=0.5, tau_s=40.0, x0=0.0)
    assert step[80] == pytest.approx(100.0 * (1 - np.exp(-1.0)), rel=1e-2)  # 63 % at t = tau


def test_treadmill_demand_uses_acsm_equations():
    # ACSM metabolic equations (from memory): walking 0.1 S + 1.8 S G, running 0.2 S + 0.9 S G
    # (+3.5 resting), S in m/min. 6 km/h at 1 %: 10 + 1.8 = 11.8; 12 km/h level: 40.0.
    assert treadmill_net_cost_ml_kg_min(np.array([6.0]), np.array([1.0]))[0] == pytest.approx(11.8)
    assert treadmill_net_cost_ml_kg_min(np.array([12.0]), np.array([0.0]))[0] == pytest.approx(40.0)
    p = RECREATIONAL_RUNNER
    proto = ProtocolSpec(mode="treadmill", warmup_s=600, warmup_speed_kmh=6.0, warmup_grade_pct=1.0)
    steady = noise_free_course(p, proto, [proto.rest_s + proto.warmup_s - 1])
    assert float(steady[C.VO2_ML_MIN].iloc[0]) == pytest.approx(p.vo2_rest_ml_min + 11.8 * p.body_mass_kg, abs=0.5)


def test_submaximal_test_stops_before_rcp():
    demo = next(d for d in DEMO_TESTS if d.profile is SUBMAX_SCREEN)
    s = _clean(demo)
    assert demo.protocol.stop == "rer"
    assert "truth_vt2_t_s" not in s.meta  # stopped before the respiratory compensation point
    assert s.meta["truth_rer_peak"] == pytest.approx(demo.protocol.stop_rer, abs=1e-3)
