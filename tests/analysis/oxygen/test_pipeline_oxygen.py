"""The pipeline's per-state oxygen comparison, on one simulated demo test (fixed seed)."""

from __future__ import annotations

import json

import pytest

from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.settings import AnalysisSettings
from analysis.simulation import DEMO_TESTS, simulate_session


@pytest.fixture(scope="module")
def session():
    demo = DEMO_TESTS[0]  # trained cyclist, Hb in the metadata
    return simulate_session(demo.profile, demo.protocol, seed=demo.seed)


def test_oxygen_block_in_results(session):
    data = to_json(analyze_session(session))
    oxygen = data["oxygen"]
    assert oxygen is not None
    json.dumps(oxygen, allow_nan=False)
    assert oxygen["hb_g_dl"] == pytest.approx(session.meta["hb_g_dl"])
    assert oxygen["estimate"] is True and "not a medical device" in oxygen["caution"]
    names = [s["name"] for s in oxygen["states"]]
    assert names[-1] == "peak" and set(names) <= {"rest", "vt1", "vt2", "peak"}
    peak = oxygen["states"][-1]
    # Stringer 1997 at 100 % of peak VO2: 16.22 mL/dL, flagged as an estimate.
    assert peak["q_estimated"] is True and peak["avo2_ml_dl"] == pytest.approx(16.22, abs=1e-6)
    for s in oxygen["states"]:
        u = s["unloading_ml_dl"]
        assert u["po2_fall"] + u["temperature"] + u["acid_base"] + u["dpg"] == pytest.approx(u["total"], abs=1e-6)


def test_measured_cardiac_output_from_settings(session):
    # Textbook Fick (common practice): a-vO2 = VO2 / Q.
    settings = AnalysisSettings(oxygen={"q_l_min": {"peak": 25.0}, "model": "severinghaus"})
    oxygen = to_json(analyze_session(session, settings))["oxygen"]
    peak = oxygen["states"][-1]
    assert peak["q_estimated"] is False and peak["q_method"] == "measured"
    assert peak["avo2_ml_dl"] == pytest.approx(peak["vo2_ml_min"] / 250.0)
    assert oxygen["model"] == "severinghaus"


def test_no_haemoglobin_no_comparison(session):
    meta = {k: v for k, v in session.meta.items() if k != "hb_g_dl"}
    bare = type(session)(meta=meta, breaths=session.breaths, flags=session.flags, source_name=session.source_name)
    assert to_json(analyze_session(bare))["oxygen"] is None


# --- SpO2 per state from the session's own column -------------------------------------------


@pytest.fixture(scope="module")
def desaturating():
    # Simulator profile whose SpO2 falls by 3 % x (fraction of VO2 reserve)^2 (ground truth).
    import analysis.simulation as sim

    return sim.simulate_session(sim.HEART_FAILURE, sim.CYCLE_RAMP_8, seed=5)


def _states(data):
    return {s["name"]: s for s in data["oxygen"]["states"]}


def test_spo2_column_gives_each_states_saturation(desaturating):
    import numpy as np

    from analysis.oxygen.from_test import SPO2_HALF_WINDOW_S
    from analysis.simulation import HEART_FAILURE
    from analysis.simulation._model import spo2_pct as model_spo2

    res = analyze_session(desaturating)
    data = to_json(res)
    states = _states(data)
    avg = res.averaged
    t, spo2 = avg["t_s"].to_numpy(float), avg["spo2_pct"].to_numpy(float)
    assert states["rest"]["sao2_source"] == "spo2"
    rest_mean = np.nanmean(spo2[avg["phase"].to_numpy() == "rest"])
    assert states["rest"]["sao2"] == pytest.approx(rest_mean / 100.0)
    peak_t = data["peak"]["time_s"]
    peak_mean = np.nanmean(spo2[np.abs(t - peak_t) <= SPO2_HALF_WINDOW_S])
    assert states["peak"]["sao2"] == pytest.approx(peak_mean / 100.0)
    # Ground truth: the model's SpO2 at the state's VO2, within 0.5 % (averaging and VO2 lag).
    for name in ("rest", "peak"):
        truth = float(model_spo2(HEART_FAILURE, np.array([states[name]["vo2_ml_min"]]))[0])
        assert 100.0 * states[name]["sao2"] == pytest.approx(truth, abs=0.5)
    assert states["peak"]["sao2"] < states["rest"]["sao2"]  # the modelled exercise desaturation
    # CaO2 = 1.34 Hb SaO2 + 0.0031 PaO2 (content equation, common practice; PaO2 of the state)
    hb = desaturating.meta["hb_g_dl"]
    peak = states["peak"]
    assert peak["cao2_ml_dl"] == pytest.approx(1.34 * hb * peak["sao2"] + 0.0031 * peak["pao2_mmhg"])
    assert "SpO2 column" in data["methods"]["oxygen_spo2"]


def test_settings_spo2_override_the_column(desaturating):
    one = to_json(analyze_session(desaturating, AnalysisSettings(oxygen={"spo2_pct": 95.0})))
    assert [s["sao2"] for s in one["oxygen"]["states"]] == pytest.approx([0.95] * len(one["oxygen"]["states"]))
    per_state = AnalysisSettings(oxygen={"spo2_pct_by_state": {"peak": 92.0}})
    data = to_json(analyze_session(desaturating, per_state))
    states = _states(data)
    assert states["peak"]["sao2"] == pytest.approx(0.92)
    assert states["rest"]["sao2"] == pytest.approx(to_json(analyze_session(desaturating))["oxygen"]["states"][0]["sao2"])


def test_without_spo2_column_the_curve_is_used(session):
    bare = type(session)(
        meta=session.meta, breaths=session.breaths.drop(columns="spo2_pct"), flags=session.flags,
        source_name=session.source_name,
    )
    data = to_json(analyze_session(bare))
    assert {s["sao2_source"] for s in data["oxygen"]["states"]} == {"curve"}
    assert "oxygen_spo2" not in data["methods"]


def test_spo2_by_state_skips_implausible_means():
    import numpy as np
    import pandas as pd

    from analysis.oxygen.from_test import spo2_by_state

    avg = pd.DataFrame({"t_s": np.arange(10) * 10.0, "spo2_pct": [97.0] * 5 + [30.0] * 5})
    phases = np.array(["rest"] * 5 + ["exercise"] * 5)
    out, notes = spo2_by_state(avg, phases, {"peak": 80.0})
    assert out == {"rest": 97.0}
    assert notes and "outside 50-100 %" in notes[0]
    assert spo2_by_state(avg.drop(columns="spo2_pct"), phases, {"peak": 80.0}) == ({}, ())
