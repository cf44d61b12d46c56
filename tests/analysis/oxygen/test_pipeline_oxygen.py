"""The pipeline's per-state oxygen comparison, on one simulated demo test (fixed seed)."""

from __future__ import annotations

import json

import pytest

from analysis.pipeline import analyze_session
from analysis.settings import AnalysisSettings
from analysis.simulation import DEMO_TESTS, simulate_session


@pytest.fixture(scope="module")
def session():
    demo = DEMO_TESTS[0]  # trained cyclist, Hb in the metadata
    return simulate_session(demo.profile, demo.protocol, seed=demo.seed)


def test_oxygen_block_in_results(session):
    data = analyze_session(session).to_json_dict()
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
    oxygen = analyze_session(session, settings).to_json_dict()["oxygen"]
    peak = oxygen["states"][-1]
    assert peak["q_estimated"] is False and peak["q_method"] == "measured"
    assert peak["avo2_ml_dl"] == pytest.approx(peak["vo2_ml_min"] / 250.0)
    assert oxygen["model"] == "severinghaus"


def test_no_haemoglobin_no_comparison(session):
    meta = {k: v for k, v in session.meta.items() if k != "hb_g_dl"}
    bare = type(session)(meta=meta, breaths=session.breaths, flags=session.flags, source_name=session.source_name)
    assert analyze_session(bare).to_json_dict()["oxygen"] is None
