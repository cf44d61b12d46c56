"""Cart noise (analysis.simulation.cart_noise): sizes, correlation, limits, neutral default."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.simulation import HARD_KINDS, ORIGINAL_KINDS, CartNoise, case_inputs, simulate_session
from analysis.simulation.cart_noise import add_cart_noise, wander

RNG = np.random.default_rng(5)


def _flat(n: int = 20000, vo2: float = 1000.0) -> dict[str, np.ndarray]:
    return {"ve": np.full(n, 30.0), "vo2": np.full(n, vo2), "vco2": np.full(n, 0.9 * vo2), "petco2": np.full(n, 38.0)}


def test_wander_is_a_first_order_process_with_the_stated_sd_and_correlation_time():
    t = np.arange(0.0, 200000.0, 2.0)  # 100,000 breaths 2 s apart
    w = wander(t, sd=0.05, tau_s=20.0, rng=np.random.default_rng(1))
    assert np.std(w) == pytest.approx(0.05, rel=0.05)
    # lag-1 correlation exp(-2 / 20) = 0.905 (first-order autoregressive process)
    assert np.corrcoef(w[1:], w[:-1])[0, 1] == pytest.approx(np.exp(-0.1), abs=0.01)
    assert not wander(t[:10], sd=0.0, tau_s=20.0, rng=RNG).any()


def test_additive_floor_has_the_stated_size_at_any_vo2_and_correlated_gases():
    spec = CartNoise(gas_floor_sd_ml_min=60.0, floor_vco2_ratio=0.85, floor_correlation=0.7)
    t = np.arange(20000) * 2.0
    for vo2 in (600.0, 3000.0):  # the same absolute SD at both levels
        out = add_cart_noise(_flat(vo2=vo2), t, spec, noise=1.0, volume_sd=0.07, volume_to_gas=0.7, rng=np.random.default_rng(2))
        d_o2, d_co2 = out["vo2"] - vo2, out["vco2"] - 0.9 * vo2
        assert np.std(d_o2) == pytest.approx(60.0, rel=0.05)
        assert np.std(d_co2) == pytest.approx(0.85 * 60.0, rel=0.05)
        assert np.corrcoef(d_o2, d_co2)[0, 1] == pytest.approx(0.7, abs=0.03)
        assert np.array_equal(out["ve"], np.full(t.size, 30.0))  # the floor is gas only
    # noise 2 doubles it
    out = add_cart_noise(_flat(), t, spec, noise=2.0, volume_sd=0.07, volume_to_gas=0.7, rng=np.random.default_rng(2))
    assert np.std(out["vo2"] - 1000.0) == pytest.approx(120.0, rel=0.05)


def test_irregular_breaths_widen_the_tails_and_limits_hold():
    spec = CartNoise(irregular_share=0.1, irregular_scale=3.0)
    t = np.arange(20000) * 2.0
    out = add_cart_noise(_flat(), t, spec, noise=1.0, volume_sd=0.07, volume_to_gas=0.7, rng=np.random.default_rng(3))
    rel = out["ve"] / 30.0 - 1.0
    changed = rel != 0
    assert changed.mean() == pytest.approx(0.1, abs=0.01)
    # the extra volume noise of an irregular breath: sqrt(3^2 - 1) x 0.07 = 0.198
    assert np.std(rel[changed]) == pytest.approx(np.sqrt(8.0) * 0.07, rel=0.06)
    # gases carry 0.7 of it
    assert np.allclose((out["vo2"][changed] / 1000.0 - 1.0), 0.7 * rel[changed], atol=1e-9)
    big = {"ve": np.full(10, 240.0), "vo2": np.full(10, 6900.0), "vco2": np.full(10, 7900.0), "petco2": np.full(10, 64.0)}
    out = add_cart_noise(big, np.arange(10.0), CartNoise(irregular_share=0.5, irregular_scale=6.0, wander_sd=0.3),
                         noise=5.0, volume_sd=0.07, volume_to_gas=0.7, rng=np.random.default_rng(4))
    assert out["ve"].max() <= 0.95 * 250 and out["vo2"].max() <= 0.95 * 7000 and out["petco2"].max() <= 0.95 * 65


def test_floor_keeps_each_breath_a_human_breath():
    # a heart-failure rest: VO2 250 mL/min, floor 80 mL/min at noise 2 -> RER stays 0.6-1.6 x the true one
    spec = CartNoise(gas_floor_sd_ml_min=80.0)
    flat = {"ve": np.full(5000, 12.0), "vo2": np.full(5000, 250.0), "vco2": np.full(5000, 210.0), "petco2": np.full(5000, 33.0)}
    out = add_cart_noise(flat, np.arange(5000) * 3.0, spec, noise=2.0, volume_sd=0.07, volume_to_gas=0.7, rng=np.random.default_rng(6))
    rer = out["vco2"] / out["vo2"]
    assert rer.min() >= 0.6 * 0.84 - 1e-9 and rer.max() <= 1.6 * 0.84 + 1e-9
    assert out["vo2"].min() >= 125.0


def test_neutral_default_changes_nothing_and_original_kinds_have_none():
    inputs = case_inputs("athlete", 0)
    a = simulate_session(inputs.profile, inputs.protocol, seed=3, noise=1.0)
    b = simulate_session(inputs.profile, inputs.protocol, seed=3, noise=1.0, cart_noise=CartNoise())
    pd.testing.assert_frame_equal(a.breaths, b.breaths)
    assert all(case_inputs(k, 1).cart_noise is None for k in ORIGINAL_KINDS)
    for kind in HARD_KINDS:
        spec = case_inputs(kind, 1).cart_noise
        assert spec is not None and spec.any
        assert 35 <= spec.gas_floor_sd_ml_min <= 120 and 3 <= case_inputs(kind, 1).artifacts <= 16


def test_cart_noise_moves_the_breaths_of_a_hard_kind_only_through_its_own_stream():
    inputs = case_inputs("hf_plain", 2)
    plain = simulate_session(inputs.profile, inputs.protocol, seed=2, noise=1.0, extras=inputs.extras)
    noisy = simulate_session(inputs.profile, inputs.protocol, seed=2, noise=1.0, extras=inputs.extras, cart_noise=inputs.cart_noise)
    assert np.array_equal(plain.breaths[C.T_S], noisy.breaths[C.T_S])  # same breaths
    assert np.array_equal(plain.breaths[C.HR_BPM], noisy.breaths[C.HR_BPM])  # untouched channels
    ratio = noisy.breaths[C.VO2_ML_MIN] / plain.breaths[C.VO2_ML_MIN]
    assert 0.02 < float(np.std(ratio - 1)) < 0.5


def test_bad_values_are_refused_with_the_field_named():
    with pytest.raises(InvalidParameter, match="wander_sd"):
        CartNoise(wander_sd=0.5)
    with pytest.raises(InvalidParameter, match="gas_floor_sd_ml_min"):
        CartNoise(gas_floor_sd_ml_min=-1.0)


def test_late_rise_shape():
    from analysis.simulation._extras_model import late_rise

    t = np.array([0.0, 100.0, 150.0, 200.0, 260.0])
    got = late_rise(t, t_start_s=100.0, t_end_s=200.0)
    assert got[:4] == pytest.approx([0.0, 0.0, 0.25, 1.0])
    assert got[4] == pytest.approx(np.exp(-1.0))  # fading with 60 s in recovery


def test_late_rapid_shallow_breathing_only_in_heart_failure_without_a_compensation_point():
    for kind in ("hf_oscillation", "hf_transient_oscillation", "hf_plain"):
        for seed in range(6):
            inputs = case_inputs(kind, seed)
            if inputs.profile.vt2_fraction is None:
                assert 0.04 <= inputs.extras.late_ve_rise_fraction <= 0.10
                assert 0.50 <= inputs.extras.late_ve_rise_start_fraction <= 0.75
            else:
                assert inputs.extras.late_ve_rise_fraction == 0.0
    assert all(case_inputs(k, 0).extras.late_ve_rise_fraction == 0.0 for k in ("lung_limited", "submax", "recreational"))


def test_late_rise_lifts_ve_by_its_fraction_at_the_end_of_exercise():
    from dataclasses import replace

    from analysis.simulation import noise_free_course, simulate_case

    seed = next(s for s in range(20) if case_inputs("hf_plain", s).profile.vt2_fraction is None)
    inputs = case_inputs("hf_plain", seed)
    end = simulate_case("hf_plain", seed, noise=0.0, clean=True).meta["truth_exercise_end_t_s"]
    t = np.array([inputs.protocol.rest_s + inputs.protocol.warmup_s + 30.0, end])
    with_rise = noise_free_course(inputs.profile, inputs.protocol, t, extras=inputs.extras)
    without = noise_free_course(inputs.profile, inputs.protocol, t, extras=replace(inputs.extras, late_ve_rise_fraction=0.0))
    ratio = (with_rise[C.VE_L_MIN] / without[C.VE_L_MIN]).to_numpy()
    assert ratio[0] == pytest.approx(1.0)
    assert ratio[1] == pytest.approx(1.0 + inputs.extras.late_ve_rise_fraction, rel=1e-3)  # the 0.5-s grid
    petco2 = (with_rise[C.PETCO2_MMHG] / without[C.PETCO2_MMHG]).to_numpy()
    assert petco2[1] == pytest.approx(1.0 - inputs.extras.late_ve_rise_fraction / 2, rel=1e-3)
