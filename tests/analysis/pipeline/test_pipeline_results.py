"""analyze_session: JSON keys and types, settings applied, zones, errors."""

import json

import numpy as np
import pandas as pd
import pytest

from analysis.errors import AnalysisError
from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.results import CAUTIONS, TOP_LEVEL_KEYS
from analysis.session import Session
from analysis.settings import AnalysisSettings, MetadataOverrides, ThresholdOverride

THRESHOLD_KEYS = {"vo2_ml_min", "time_s", "hr_bpm", "work_w", "method", "source", "confidence", "vo2_ml_kg_min", "pct_vo2_peak"}


@pytest.fixture(scope="module")
def results(cyclist):
    return analyze_session(cyclist)


def test_json_has_stable_keys_and_is_strict_json(results):
    d = to_json(results)
    assert list(d) == list(TOP_LEVEL_KEYS)
    text = json.dumps(d, allow_nan=False)  # raises on NaN/inf
    assert json.loads(text)["vo2_peak_ml_min"] == pytest.approx(results.vo2_peak_ml_min)
    for kind in ("vt1", "vt2"):
        assert THRESHOLD_KEYS <= set(d[kind])
    assert d["cautions"] == list(CAUTIONS)
    assert isinstance(d["warnings"], list) and all(isinstance(w, str) for w in d["warnings"])
    assert {"method", "size", "label"} <= set(d["averaging"])
    assert d["breaths"]["excluded"] == len(d["excluded_breaths"])


def test_every_headline_number_has_a_method(results):
    d = to_json(results)
    for key in ("vo2_peak", "rer_peak", "hr_peak_bpm", "ve_vco2_slope", "oues", "o2_pulse", "vt1", "vt2",
                "maximality", "predicted_vo2max", "weber_class", "ventilatory_class", "zones", "averaging",
                "energy_expenditure", "fat_max", "mets", "breathing_reserve", "vo2_work_rate_slope"):
        assert d["methods"].get(key), key


def test_threshold_values_are_the_estimate_and_30s_means_at_its_time(results):
    d = to_json(results)
    avg = results.averaged
    pick = results.thresholds.vt1
    # VO2 and time: the consensus estimate itself, one value everywhere
    assert d["vt1"]["vo2_ml_min"] == d["thresholds"]["vt1"]["vo2_ml_min"] == pick.vo2_ml_min
    assert d["vt1"]["time_s"] == pick.t_s
    assert d["vt1"]["pct_vo2_peak"] == pytest.approx(100 * pick.vo2_ml_min / d["vo2_peak_ml_min"])
    # HR, work rate and RER: 30-s means centred on that time; each 10-s bin counts for the
    # seconds of it inside pick.t_s ± 15 s (by hand: a bin centred at c covers c ± 5 s)
    t = avg["t_s"].to_numpy(float)
    w = np.clip(np.minimum(t + 5, pick.t_s + 15) - np.maximum(t - 5, pick.t_s - 15), 0, None)
    assert w.sum() == pytest.approx(30.0)

    def mean(col):
        return float(np.average(avg[col].to_numpy(float), weights=w))

    assert d["vt1"]["hr_bpm"] == pytest.approx(mean("hr_bpm"))
    assert d["vt1"]["work_w"] == pytest.approx(mean("work_w"))
    assert d["vt1"]["rer"] == pytest.approx(mean("vco2_ml_min") / mean("vo2_ml_min"))


def test_zones_match_threshold_hr_and_rise(results):
    d = to_json(results)
    zones = d["zones"]["zones"]
    assert len(zones) == 3
    assert zones[0]["hr_high_bpm"] == pytest.approx(d["vt1"]["hr_bpm"])
    assert zones[1]["hr_low_bpm"] == pytest.approx(d["vt1"]["hr_bpm"])
    assert zones[1]["hr_high_bpm"] == pytest.approx(d["vt2"]["hr_bpm"])
    assert zones[2]["hr_high_bpm"] == pytest.approx(d["hr_peak_bpm"])
    highs = [z["hr_high_bpm"] for z in zones]
    works = [z["work_high_w"] for z in zones]
    assert highs == sorted(highs) and works == sorted(works)


def test_derived_indices_consistent(results):
    d = to_json(results)
    ind = d["indices"]
    # METs = VO2 per kg / 3.5 (common practice)
    assert ind["mets_peak"] == pytest.approx(d["vo2_peak_ml_kg_min"] / 3.5)
    # Weber class A above 20 mL/kg/min (Weber & Janicki 1985, from memory)
    assert d["classes"]["weber"] == "A"
    # FRIEND % predicted (de Souza e Silva 2018) = measured / predicted
    p = d["predicted"]
    assert p["pct_predicted_vo2max"] == pytest.approx(100 * d["vo2_peak_ml_kg_min"] / p["vo2max_friend_ml_kg_min"])


def test_threshold_overrides_and_metadata_overrides(cyclist, results):
    auto = to_json(results)
    s = AnalysisSettings(
        vt1_override=ThresholdOverride(t_s=600.0, reason="clear V-slope break on review"),
        metadata=MetadataOverrides(body_mass_kg=2 * cyclist.meta["body_mass_kg"]),
    )
    d = to_json(analyze_session(cyclist, s))
    assert d["vt1"]["source"] == "manual" and d["vt1"]["method"] == "manual"
    assert abs(d["vt1"]["time_s"] - 600.0) <= 10.0
    assert "clear V-slope break" in d["vt1"]["note"]
    assert d["vo2_peak_ml_kg_min"] == pytest.approx(auto["vo2_peak_ml_kg_min"] / 2)
    assert d["settings"]["vt1_override"]["t_s"] == 600.0


def test_manual_exclusion_and_restoring(cyclist, results):
    auto_rows = [e.source_row for e in results.excluded_breaths]
    assert auto_rows, "the simulator injects artifacts that the outlier test should catch"
    keep_row = int(auto_rows[0])
    extra = int(cyclist.breaths["source_row"].iloc[100])
    r = analyze_session(cyclist, AnalysisSettings(excluded_rows=(extra,), restored_rows=(keep_row,)))
    ex = r.excluded_table()
    assert keep_row not in set(ex["source_row"])
    assert ex.loc[ex["source_row"] == extra, "by"].tolist() == ["reviewer"]
    assert r.breaths.used == r.breaths.total - len(ex) == r.breaths.total - r.breaths.excluded


def test_no_hb_gives_no_oxygen_section(cyclist):
    meta = {k: v for k, v in cyclist.meta.items() if k != "hb_g_dl"}
    d = to_json(analyze_session(Session(meta, cyclist.breaths, source_name="x.csv")))
    assert d["oxygen"] is None


def test_missing_required_column():
    b = pd.DataFrame({"t_s": np.arange(30.0), "vo2_ml_min": 1000.0, "vco2_ml_min": 900.0})
    with pytest.raises(AnalysisError, match="ve_l_min"):
        analyze_session(Session({}, b, source_name="short.csv"))


def test_too_few_breaths():
    b = pd.DataFrame({"t_s": np.arange(5.0), "vo2_ml_min": 1000.0, "vco2_ml_min": 900.0, "ve_l_min": 30.0})
    with pytest.raises(AnalysisError, match="only 5 breaths"):
        analyze_session(Session({}, b, source_name="tiny.csv"))


def test_without_metadata_values_are_null_and_warned(cyclist):
    meta = {"subject_id": "X"}
    d = to_json(analyze_session(Session(meta, cyclist.breaths, source_name="anon.csv")))
    assert d["vo2_peak_ml_kg_min"] is None
    assert d["predicted"]["vo2max_friend_ml_kg_min"] is None
    assert any("Body mass unknown" in w for w in d["warnings"])
    assert any("FRIEND" in w for w in d["warnings"])


def test_without_oxygen_only_the_oxygen_section_changes(cyclist, results):
    full = to_json(results)
    lean = to_json(analyze_session(cyclist, with_oxygen=False))
    assert full["oxygen"] is not None and lean["oxygen"] is None
    for key in ("vo2_peak_ml_min", "vt1", "vt2", "indices", "zones", "maximality"):
        assert lean[key] == full[key]


def test_parallel_threads_give_the_same_results(cyclist, results):
    # the dashboard server analyses in threads; results must not depend on that
    from concurrent.futures import ThreadPoolExecutor

    with ThreadPoolExecutor(max_workers=3) as pool:
        outs = list(pool.map(lambda _: to_json(analyze_session(cyclist)), range(3)))
    expected = to_json(results)
    for d in outs:
        assert d["vo2_peak_ml_min"] == expected["vo2_peak_ml_min"]
        assert d["warnings"] == expected["warnings"]
