"""Property tests: any valid person and protocol gives a well-formed, physiologically ordered
session (hypothesis draws the parameters)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, example, given, settings
from hypothesis import strategies as st

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.simulation import ProtocolSpec, SubjectProfile, simulate_session
from analysis.simulation._model import demand_ml_min, treadmill_net_cost_ml_kg_min, vco2_ml_min
from analysis.simulation.simulate import GRID_DT_S


@st.composite
def cases(draw):
    vo2max = draw(st.floats(1000, 5500))
    rest = draw(st.floats(200, 420))
    vt1 = draw(st.floats(0.45, 0.72))
    vt2 = draw(st.one_of(st.none(), st.floats(vt1 + 0.1, 0.93)))
    mode = draw(st.sampled_from(["cycle", "treadmill"]))
    tau = draw(st.floats(25, 70))
    try:
        profile = SubjectProfile(
            subject_id="SEL-9001",
            display_name="Test Person",
            sex=draw(st.sampled_from(["male", "female"])),
            age_y=draw(st.floats(18, 80)),
            height_cm=draw(st.floats(150, 200)),
            body_mass_kg=draw(st.floats(50, 110)),
            hb_g_dl=draw(st.floats(11, 17)),
            vo2_rest_ml_min=rest,
            vo2max_ml_min=vo2max,
            vt1_fraction=vt1,
            vt2_fraction=vt2,
            hr_rest_bpm=draw(st.floats(45, 90)),
            hr_max_bpm=draw(st.floats(130, 200)),
            ve_vco2_slope=draw(st.floats(22, 48)),
            petco2_rest_mmhg=draw(st.floats(30, 42)),
            plateau=draw(st.booleans()),
            tau_on_s=tau,
            plateau_s=min(2.2 * tau, 180.0),
            rer_peak=draw(st.floats(1.05, 1.25)),
        )
    except InvalidParameter:
        assume(False)
    minutes = draw(st.floats(6, 14))
    stop = draw(st.sampled_from(["max", "max", "fraction", "rer"]))
    if mode == "cycle":
        ramp = max((vo2max - rest) / profile.vo2_work_slope_ml_min_w / minutes, 3.0)
        protocol = ProtocolSpec(mode="cycle", warmup_w=0, ramp_w_per_min=ramp, stop=stop,
                                stop_fraction=0.8, stop_rer=1.0)
    else:
        protocol = ProtocolSpec(mode="treadmill", warmup_speed_kmh=3.0, start_speed_kmh=3.5,
                                start_grade_pct=0.0, speed_step_kmh_per_min=0.0, grade_step_pct_per_min=2.0,
                                stage_s=draw(st.sampled_from([0.0, 60.0])), stop=stop, stop_fraction=0.8,
                                stop_rer=1.0, max_exercise_s=3600)
    return profile, protocol, draw(st.integers(0, 10_000)), draw(st.sampled_from([0.0, 1.0, 2.0]))


def _plateau_gap_bound_ml_min(profile: SubjectProfile, protocol: ProtocolSpec) -> float:
    """Largest VO2 gap below VO2max left when a continuous-ramp plateau test stops.

    VO2 follows the demand with a first-order lag (``tau_on_s``). Before the demand reaches
    VO2max it trails the demand by at most the rise up to the start of exercise (warm-up and start
    steps) plus ``tau_on_s`` times the demand's rise per second (the steady lag of a first-order
    system on a ramp). From then on the input is VO2max and the gap shrinks by
    ``exp(-t / tau_on_s)``; the person stops ``plateau_s`` later. The model runs on a grid of
    ``GRID_DT_S`` seconds, linear between samples, which may leave a little more: allowed as a
    factor ``1 + GRID_DT_S / tau_on_s`` (under 4 %, well under 1 mL/min here).
    """
    tau = profile.tau_on_s
    if protocol.mode == "cycle":
        start_w = protocol.warmup_w if protocol.start_w is None else protocol.start_w
        start = demand_ml_min(profile, protocol, work_w=np.array([start_w]))[0]
        rise_per_s = profile.vo2_work_slope_ml_min_w * protocol.ramp_w_per_min / 60.0
    else:
        speed, grade = protocol.start_speed_kmh, protocol.start_grade_pct
        start = demand_ml_min(profile, protocol, speed_kmh=np.array([speed]), grade_pct=np.array([grade]))[0]
        # walking only in these cases (speed fixed), so the net cost is linear in the grade
        one_minute = treadmill_net_cost_ml_kg_min(
            np.array([speed + protocol.speed_step_kmh_per_min]), np.array([grade + protocol.grade_step_pct_per_min])
        )[0] - treadmill_net_cost_ml_kg_min(np.array([speed]), np.array([grade]))[0]
        rise_per_s = one_minute * profile.body_mass_kg / 60.0
    lag = (start - profile.vo2_rest_ml_min) + tau * rise_per_s
    return float(lag * np.exp(-profile.plateau_s / tau) * (1.0 + GRID_DT_S / tau))


def _example(**changes: object) -> tuple[SubjectProfile, ProtocolSpec, int, float]:
    """One case of the ``cases()`` form, for the examples checked on every run."""
    profile = SubjectProfile(
        subject_id="SEL-9001", display_name="Test Person", sex="male", age_y=18.0, height_cm=150.0,
        body_mass_kg=50.0, hb_g_dl=11.0, vo2_rest_ml_min=200.0, vo2max_ml_min=1000.0, vt1_fraction=0.6875,
        vt2_fraction=None, hr_rest_bpm=45.0, hr_max_bpm=130.0, ve_vco2_slope=22.0, petco2_rest_mmhg=30.0,
        plateau=True, tau_on_s=54.0, plateau_s=min(2.2 * 54.0, 180.0), rer_peak=1.25,
    )
    profile = replace(profile, **changes)
    minutes = 6.0
    ramp = max((profile.vo2max_ml_min - profile.vo2_rest_ml_min) / profile.vo2_work_slope_ml_min_w / minutes, 3.0)
    protocol = ProtocolSpec(mode="cycle", warmup_w=0, ramp_w_per_min=ramp, stop="max", stop_fraction=0.8, stop_rer=1.0)
    return profile, protocol, 0, 0.0


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
@given(cases())
# Found on CI: a small plateau profile (VO2max 1000 mL/min, RER at VO2max 1.25, tau 54 s) stops with
# VO2 13 mL/min short of VO2max and RER 1.2398 -- the gap the first-order plateau leaves, not a fault.
@example(_example())
def test_any_valid_case_gives_a_well_formed_session(case):
    profile, protocol, seed, noise = case
    try:
        s = simulate_session(profile, protocol, seed=seed, noise=noise)
    except InvalidParameter as exc:
        # combinations the model refuses by design: a treadmill walk too easy for a very fit
        # person, a warm-up above VT1, or a ventilation beyond adult limits
        assert exc.name in {"protocol", "warmup load", "ve_vco2_slope", "rf_max_bpm"}, exc
        assume(False)
    b = s.breaths
    t = b[C.T_S].to_numpy()
    assert (np.diff(t) > 0).all() and t[0] > 0
    # phases appear once each, in order
    order = [p for i, p in enumerate(b[C.PHASE]) if i == 0 or p != b[C.PHASE].iloc[i - 1]]
    assert order == [p for p in C.PHASES if p in order] and order[0] == "rest" and "exercise" in order
    assert (b[C.RF_BPM] * b[C.VT_L]).to_numpy() == pytest.approx(b[C.VE_L_MIN].to_numpy())
    for name, spec in C.COLUMNS.items():
        if name in b and name not in (C.T_S, C.PHASE, C.MARKER):
            assert spec.reject_below <= b[name].min() and b[name].max() <= spec.reject_above, name
    m = s.meta
    assert m["truth_vo2peak_ml_min"] <= profile.vo2max_ml_min + 1e-6
    times = [m[k] for k in ("truth_vt1_t_s", "truth_vt2_t_s") if k in m] + [m["truth_exercise_end_t_s"]]
    assert times == sorted(times)
    assert len([x for x in m["truth_artifact_t_s"].split(",") if x]) == 3
    # the truth's peak RER is the V-slope model's RER at the VO2 the test ended with
    vo2_end = m["truth_vo2peak_ml_min"]
    assert m["truth_rer_peak"] == pytest.approx(vco2_ml_min(profile, np.array([vo2_end]))[0] / vo2_end, rel=1e-9)
    if protocol.stop == "max":
        # RER reaches rer_peak at VO2max on a continuous ramp. A stepped protocol whose last step ends
        # while VO2 is still closing in on its lagged target stops just below it. On a plateau VO2 only
        # closes in on VO2max (first order): the gap left is bounded by the lag when the demand passed
        # VO2max times exp(-plateau_s / tau) (about 11 % of it after the 2.2 tau drawn here), and RER,
        # rising with VO2 on the VCO2-VO2 line above VT1, is short of rer_peak by what that gap costs.
        stepped = protocol.stage_s > 0
        if stepped:
            low = profile.rer_peak - 0.03
        elif profile.plateau:
            gap = _plateau_gap_bound_ml_min(profile, protocol)
            assert profile.vo2max_ml_min - vo2_end <= gap + 1e-6
            vo2_low = profile.vo2max_ml_min - gap
            low = vco2_ml_min(profile, np.array([vo2_low]))[0] / vo2_low - 1e-9
        else:
            low = profile.rer_peak - 1e-6
        assert low <= m["truth_rer_peak"] <= profile.rer_peak + 1e-6
    if noise == 0:
        ex = b[(b[C.PHASE] != "recovery") & (b[C.VO2_ML_MIN] < profile.vo2_vt1_ml_min - 1)]
        ex = ex[~ex[C.T_S].round(2).isin([float(x) for x in m["truth_artifact_t_s"].split(",")])]
        slope = np.polyfit(ex[C.VO2_ML_MIN], ex[C.VCO2_ML_MIN], 1)[0]
        assert slope == pytest.approx(profile.vco2_slope_below_vt1, abs=1e-6)
