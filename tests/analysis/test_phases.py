"""Phase detection and ramp rate."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest

from analysis.errors import DataQualityWarning, InvalidParameter
from analysis.phases import PhaseSpan, detect_phases, label_phases, ramp_rate_w_per_min, theil_sen_slope


def cycle_test(*, warmup_s: float = 180.0, ramp_w_per_min: float = 25.0, steps_s: float = 0.0) -> pd.DataFrame:
    """Rest 120 s at 0 W, warm-up at 20 W, ramp (or steps), then 120 s recovery at 20 W."""
    t = np.arange(0.0, 120 + warmup_s + 600 + 120, 3.0)
    ramp_t = np.clip(t - 120 - warmup_s, 0, None)
    if steps_s:
        ramp_t = np.floor(ramp_t / steps_s) * steps_s
    w = np.where(t < 120, 0.0, 20.0 + ramp_w_per_min * ramp_t / 60.0)
    end = 120 + warmup_s + 600
    w = np.where(t >= end, 20.0, w)
    return pd.DataFrame({"t_s": t, "vo2_ml_min": 1000.0, "vco2_ml_min": 900.0, "ve_l_min": 30.0, "work_w": w})


def test_phase_column_used_as_given():
    b = cycle_test()
    b["phase"] = ["rest"] * 10 + [None] * 5 + ["exercise"] * (len(b) - 15)
    ph = detect_phases(b)
    assert ph.iloc[:15].tolist() == ["rest"] * 15  # gaps filled from the breath before
    assert ph.iloc[-1] == "exercise"
    assert ph.index.equals(b.index)


def test_unknown_phase_label_rejected():
    b = cycle_test()
    b["phase"] = "sprint"
    with pytest.raises(InvalidParameter, match="phase"):
        detect_phases(b)


def test_from_work_rate():
    b = cycle_test()
    ph = detect_phases(b)
    t = b["t_s"].to_numpy()
    # load rules (common practice): no load = rest, first constant load = warm-up, up to the
    # last breath at peak load = exercise, after the load drops = recovery
    assert set(ph[t < 120]) == {"rest"}
    assert set(ph[(t >= 120) & (t < 300)]) == {"warmup"}
    assert set(ph[(t >= 303) & (t < 900)]) == {"exercise"}
    assert set(ph[t >= 900]) == {"recovery"}


def test_stepped_protocol_first_stage_is_exercise_without_warmup():
    # 3-minute stages from 20 W straight after rest: the first stage is as long as the others,
    # so it is exercise, not warm-up
    b = cycle_test(warmup_s=0.0, steps_s=180.0)
    ph = detect_phases(b)
    t = b["t_s"].to_numpy()
    assert set(ph[(t >= 120) & (t < 300)]) == {"exercise"}


def test_treadmill_speed_and_grade():
    t = np.arange(0.0, 900.0, 3.0)
    speed = np.where(t < 60, 0.0, np.where(t < 780, 6.0, 3.0))
    grade = np.where((t >= 240) & (t < 780), (t - 240) / 60.0, 0.0)
    b = pd.DataFrame({"t_s": t, "vo2_ml_min": 1.0, "vco2_ml_min": 1.0, "ve_l_min": 1.0, "speed_kmh": speed, "grade_pct": grade})
    ph = detect_phases(b)
    assert set(ph[t < 60]) == {"rest"}
    assert set(ph[(t >= 60) & (t < 240)]) == {"warmup"}
    assert set(ph[(t > 250) & (t < 777)]) == {"exercise"}
    assert set(ph[t >= 780]) == {"recovery"}


def test_no_load_no_phase_notes_and_calls_everything_exercise():
    b = pd.DataFrame({"t_s": [0.0, 3.0, 6.0], "vo2_ml_min": 1.0, "vco2_ml_min": 1.0, "ve_l_min": 1.0})
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # the note is a value, never a warning
        labelled = label_phases(b)
    assert labelled.labels.tolist() == ["exercise"] * 3 == detect_phases(b).tolist()
    assert len(labelled.notes) == 1 and "every breath is treated as exercise" in labelled.notes[0]
    assert labelled.spans["exercise"] == PhaseSpan(0.0, 6.0)


def test_empty():
    b = pd.DataFrame({"t_s": [], "vo2_ml_min": [], "vco2_ml_min": [], "ve_l_min": []})
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert len(detect_phases(b)) == 0


class TestRampRate:
    @pytest.mark.parametrize("rate", [10.0, 25.0, 30.0])
    def test_continuous_ramp(self, rate):
        assert ramp_rate_w_per_min(cycle_test(ramp_w_per_min=rate)) == pytest.approx(rate, rel=1e-6)

    def test_stepped_ramp_mean_rate(self):
        # 25 W every 60 s is 25 W/min on average (Theil-Sen slope of a staircase)
        b = cycle_test(ramp_w_per_min=25.0, steps_s=60.0)
        assert ramp_rate_w_per_min(b) == pytest.approx(25.0, rel=0.06)

    def test_robust_to_a_glitch(self):
        # one dropped-out sample during the ramp does not move a Theil-Sen slope (Sen 1968)
        b = cycle_test(ramp_w_per_min=20.0)
        b.loc[200, "work_w"] = 5.0
        assert ramp_rate_w_per_min(b, detect_phases(cycle_test(ramp_w_per_min=20.0))) == pytest.approx(20.0, rel=0.01)

    def test_none_without_work_rate(self):
        b = cycle_test().drop(columns="work_w")
        assert ramp_rate_w_per_min(b, pd.Series(["exercise"] * len(b))) is None

    def test_none_for_constant_load(self):
        b = cycle_test()
        b["work_w"] = 100.0
        assert ramp_rate_w_per_min(b, pd.Series(["exercise"] * len(b))) is None

    @pytest.mark.parametrize("seed", range(20))
    def test_theil_sen_equals_the_reference_library(self, seed):
        # scipy.stats.theilslopes (independent implementation of Sen 1968): same median slope,
        # including tied x values and integer loads
        from scipy import stats

        rng = np.random.default_rng(seed)
        n = int(rng.integers(2, 120))
        x = np.round(rng.uniform(0, 600, n), int(rng.integers(0, 2)))
        y = np.round(3.0 * x + rng.normal(0, 40, n))
        if np.ptp(x) == 0:
            assert theil_sen_slope(x, y) is None
        else:
            assert theil_sen_slope(x, y) == stats.theilslopes(y, x).slope

    def test_theil_sen_hand_solved(self):
        # pairs (0,0)-(1,1): 1, (0,0)-(2,4): 2, (1,1)-(2,4): 3 -> median 2
        assert theil_sen_slope(np.array([0.0, 1.0, 2.0]), np.array([0.0, 1.0, 4.0])) == 2.0
        assert theil_sen_slope(np.array([5.0, 5.0]), np.array([0.0, 1.0])) is None

    def test_phase_length_checked(self):
        with pytest.raises(InvalidParameter, match="phases"):
            ramp_rate_w_per_min(cycle_test(), pd.Series(["exercise"]))


@pytest.mark.parametrize("which", [0, 1, 2, 3, 5])
def test_simulated_phases_recovered_from_the_load(which):
    # Ground truth: the simulator's own phase labels. Demo tests with a loaded warm-up (cycle)
    # or a walking warm-up (treadmill) are recovered breath for breath from the load alone.
    sim = pytest.importorskip("analysis.simulation")
    demo = sim.DEMO_TESTS[which]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        s = sim.simulate_session(demo.profile, demo.protocol, seed=0)
    b = s.breaths
    ph = detect_phases(b.drop(columns="phase"))
    assert (ph.to_numpy() == b["phase"].to_numpy()).all()
    if demo.protocol.mode == "cycle":
        assert ramp_rate_w_per_min(b) == pytest.approx(demo.protocol.ramp_w_per_min, rel=1e-6)


def test_unloaded_warmup_reads_as_rest():
    # A warm-up at 0 W cannot be told from rest by the load (documented limit): the simulated
    # heart-failure test pedals unloaded before its ramp, and those breaths read as rest.
    sim = pytest.importorskip("analysis.simulation")
    demo = sim.DEMO_TESTS[4]
    assert demo.protocol.warmup_w == 0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        s = sim.simulate_session(demo.profile, demo.protocol, seed=0)
    ph = detect_phases(s.breaths.drop(columns="phase")).to_numpy()
    truth = s.breaths["phase"].to_numpy()
    assert set(ph[truth == "warmup"]) == {"rest"}
    assert (ph[truth == "recovery"] == "recovery").all()
    assert (ph == truth).mean() > 0.85
