"""Basic behaviour of simulate_session: columns, metadata, determinism, validation."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.simulation import (
    CYCLE_RAMP_30,
    DEMO_TESTS,
    HEART_FAILURE,
    TRAINED_CYCLIST,
    TREADMILL_RAMP,
    RECREATIONAL_RUNNER,
    ProtocolSpec,
    simulate_session,
)

CYCLE_COLUMNS = ["t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "work_w", "rf_bpm", "vt_l",
                 "peto2_mmhg", "petco2_mmhg", "spo2_pct", "phase", "marker", "source_row"]


def test_cycle_session_has_canonical_columns_and_meta():
    s = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=3)
    assert list(s.breaths.columns) == CYCLE_COLUMNS
    for key in ("subject_id", "sex", "age_y", "height_cm", "body_mass_kg", "hb_g_dl", "protocol",
                "test_date", "mode", "barometric_mmhg", "truth_vt1_t_s", "truth_vt1_vo2_ml_min",
                "truth_vt2_t_s", "truth_vt2_vo2_ml_min", "truth_vo2max_ml_min", "truth_ve_vco2_slope",
                "truth_artifact_t_s"):
        assert key in s.meta, key
    assert s.meta["mode"] == "cycle"
    assert s.meta["truth_vo2max_ml_min"] == 4700.0
    assert set(s.breaths[C.PHASE]) == set(C.PHASES)
    assert s.breaths[C.T_S].is_monotonic_increasing
    # 600-1000 breaths for a ~20-minute test (common practice: 20-45 breaths/min in exercise)
    assert 400 <= len(s.breaths) <= 1200


def test_treadmill_session_has_speed_and_grade_not_work():
    s = simulate_session(RECREATIONAL_RUNNER, TREADMILL_RAMP, seed=3)
    assert C.SPEED_KMH in s.breaths and C.GRADE_PCT in s.breaths
    assert C.WORK_W not in s.breaths
    assert s.meta["mode"] == "treadmill"
    ex = s.breaths[s.breaths[C.PHASE] == "exercise"]
    assert ex[C.SPEED_KMH].is_monotonic_increasing
    assert ex[C.SPEED_KMH].iloc[0] == pytest.approx(TREADMILL_RAMP.start_speed_kmh)


def test_profile_without_rcp_omits_vt2_truth():
    demo = next(d for d in DEMO_TESTS if d.profile is HEART_FAILURE)
    s = simulate_session(demo.profile, demo.protocol, seed=1)
    assert "truth_vt2_t_s" not in s.meta and "truth_vt2_vo2_ml_min" not in s.meta
    assert "truth_vt1_t_s" in s.meta


@pytest.mark.parametrize("noise", [0.0, 1.0, 2.0])
def test_same_seed_gives_identical_frame(noise):
    a = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=11, noise=noise)
    b = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=11, noise=noise)
    pd.testing.assert_frame_equal(a.breaths, b.breaths)
    assert a.meta == b.meta


def test_different_seeds_differ():
    a = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=11)
    b = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=12)
    n = min(len(a.breaths), len(b.breaths))
    assert not np.allclose(a.breaths[C.VO2_ML_MIN].to_numpy()[:n], b.breaths[C.VO2_ML_MIN].to_numpy()[:n])
    assert a.meta["truth_artifact_t_s"] != b.meta["truth_artifact_t_s"]


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"seed": -1}, "seed"),
        ({"seed": 1.5}, "seed"),
        ({"seed": 1, "noise": -0.1}, "noise"),
        ({"seed": 1, "artifacts": 99}, "artifacts"),
    ],
)
def test_invalid_arguments_are_named(kwargs, match):
    with pytest.raises(InvalidParameter, match=match):
        simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, **kwargs)


def test_protocol_that_never_reaches_the_stop_rule_is_rejected():
    slow = ProtocolSpec(mode="cycle", warmup_w=20, ramp_w_per_min=3, max_exercise_s=600)
    with pytest.raises(InvalidParameter, match="protocol"):
        simulate_session(TRAINED_CYCLIST, slow, seed=1)


def test_warmup_above_vt1_is_rejected():
    hard = ProtocolSpec(mode="cycle", warmup_w=300, ramp_w_per_min=30)
    with pytest.raises(InvalidParameter, match="warm-up"):
        simulate_session(TRAINED_CYCLIST, hard, seed=1)
