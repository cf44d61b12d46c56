"""Foreign exports of simulated tests import back through the importer for every kind and
layout; the evaluation reads results and scores them against truth (no accuracy asserted)."""

from __future__ import annotations

import numpy as np
import pytest

from analysis import columns as C
from analysis.io import import_bytes
from analysis.simulation import ALL_KINDS, CaseTruth, SimulatedCase, simulate_case, simulation_suite
from analysis.simulation.evaluate import (
    CaseScore,
    ResultReading,
    compare,
    format_markdown,
    read_result,
    score_case,
    summarise,
)
from analysis.simulation.foreign import FOREIGN_LAYOUTS, foreign_export_bytes, foreign_meta_overrides

GAS_TOL = {C.VO2_ML_MIN: 0.51, C.VCO2_ML_MIN: 0.51, C.VE_L_MIN: 0.051}


@pytest.mark.parametrize("kind", ALL_KINDS)
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_foreign_exports_import_back_with_the_same_breaths(kind, seed):
    s = simulate_case(kind, seed, noise=2.0)
    # seed 0 through every layout; other seeds through one layout each, in turn
    layouts = FOREIGN_LAYOUTS if seed == 0 else [FOREIGN_LAYOUTS[(seed + ALL_KINDS.index(kind)) % len(FOREIGN_LAYOUTS)]]
    for layout in layouts:
        data = foreign_export_bytes(s, layout=layout)
        out = import_bytes(data, file_name=f"{kind}.csv", meta_overrides=foreign_meta_overrides(s, layout=layout))
        b = out.session.breaths
        assert len(b) == len(s.breaths), layout
        # time within the printed resolution (0.1 s for h:mm:ss.s, 0.0001 min otherwise)
        assert np.max(np.abs(b[C.T_S].to_numpy() - s.breaths[C.T_S].to_numpy())) <= 0.051
        for name, tol in GAS_TOL.items():  # printed as 1 mL/min and 0.1 L/min at worst
            assert np.max(np.abs(b[name].to_numpy() - s.breaths[name].to_numpy())) <= tol, (layout, name)
        assert out.session.meta["body_mass_kg"] == pytest.approx(s.meta["body_mass_kg"])
        assert not any(k.startswith("truth_") for k in out.session.meta)  # a cart knows no truth


def test_layouts_differ_in_separator_decimal_and_time():
    s = simulate_case("treadmill_steps", 0)
    seen = set()
    for layout in FOREIGN_LAYOUTS:
        out = import_bytes(foreign_export_bytes(s, layout=layout), file_name="x.csv",
                           meta_overrides=foreign_meta_overrides(s, layout=layout))
        seen.add((out.delimiter, out.decimal, out.time_format_detected, out.gas_unit_detected))
        assert out.session.breaths[C.SPEED_KMH].max() == pytest.approx(s.breaths[C.SPEED_KMH].max(), abs=0.02)
    assert len(seen) == len(FOREIGN_LAYOUTS)
    assert foreign_export_bytes(s, layout=1) == foreign_export_bytes(s, layout="tab_kpa_ml")
    with pytest.raises(Exception, match="layout"):
        foreign_export_bytes(s, layout="nonsense")


def test_the_meta_layout_carries_the_person_in_its_preamble():
    s = simulate_case("lung_limited", 1)  # FEV1 only, no MVV measured
    assert foreign_meta_overrides(s, layout="comma_hms_meta") == {}
    out = import_bytes(foreign_export_bytes(s, layout="comma_hms_meta"), file_name="x.csv")
    for key in ("body_mass_kg", "age_y", "height_cm"):
        assert out.session.meta[key] == pytest.approx(s.meta[key])
    assert ("fev1_l" in out.session.meta) == ("fev1_l" in s.meta)


def _truth(**kw):
    base = dict(vt1_vo2_ml_min=1500.0, vt1_t_s=500.0, vt2_vo2_ml_min=None, vt2_t_s=None, vo2max_ml_min=2000.0,
                vo2peak_ml_min=2000.0, ve_vco2_slope=30.0, ve_vco2_slope_to_vt2=None, ve_vco2_slope_whole_exercise=31.0)
    base.update(kw)
    return CaseTruth(**base)


def test_compare_scores_against_truth_by_hand():
    reading = ResultReading(vt1_vo2_ml_min=1560.0, vt2_vo2_ml_min=1900.0, vt1_ci90_vo2_ml_min=(1450.0, 1620.0),
                            vt2_ci90_vo2_ml_min=None, vo2peak_ml_min=1950.0, ve_vco2_slope=32.5,
                            ve_vco2_slope_span="to_vt2")
    out = compare(reading, _truth())
    assert out["vt1_error_pct"] == pytest.approx(3.0)  # 60 / 2000
    assert out["vt1_in_ci"] is True
    assert out["vt2_given"] and not out["vt2_truth"] and "vt2_error_pct" not in out  # a VT2 where there is none
    assert out["vo2peak_error_pct"] == pytest.approx(2.5)
    assert out["slope_error"] == pytest.approx(1.5)  # no truth to VT2: the whole-exercise truth


def test_read_result_takes_attributes_or_json_keys():
    as_json = {"thresholds": {"vt1": {"vo2_ml_min": 1400.0, "ci90_vo2_ml_min": [1300, 1500]},
                              "vt2": {"vo2_ml_min": 1800.0, "determinable": False}},
               "peak": {"vo2_ml_min": 2100.0}, "indices": {"ve_vco2_slope": 29.0, "ve_vco2_slope_span": "whole_exercise"}}
    r = read_result(as_json)
    assert r.vt1_vo2_ml_min == 1400.0 and r.vt1_ci90_vo2_ml_min == (1300.0, 1500.0)
    assert r.vt2_vo2_ml_min is None  # marked not determinable
    assert (r.vo2peak_ml_min, r.ve_vco2_slope, r.ve_vco2_slope_span) == (2100.0, 29.0, "whole_exercise")


def test_score_case_runs_the_pipeline_through_the_importer_and_counts_crashes():
    cases = list(simulation_suite(["rehab"], seeds=[0, 1], noise_levels=[1.0]))
    direct, foreign = cases
    assert not direct.foreign and foreign.foreign
    scores = [score_case(c) for c in cases]
    assert [s.status for s in scores] == ["ok", "ok"]
    assert scores[0].layout == "" and scores[1].layout in FOREIGN_LAYOUTS
    assert scores[0].vt1_error_pct is not None and scores[0].vo2peak_error_pct is not None

    def boom(session):
        raise RuntimeError("no")

    crashed = score_case(direct, analyze=boom)
    assert crashed.status == "crash" and "no" in crashed.error
    broken = SimulatedCase(kind="rehab", seed=1, noise=1.0, foreign=True,
                           session=type(direct.session)(meta=dict(direct.session.meta), breaths=direct.session.breaths.iloc[:0]),
                           truth=direct.truth)
    assert score_case(broken).status == "import_failed"


def test_summary_rows_and_markdown():
    scores = [
        CaseScore(kind="a", seed=0, noise=1.0, foreign=False, layout="", status="ok", vt1_error_pct=2.0, vt1_given=True,
                  vt2_given=True, vt2_truth=False, vo2peak_error_pct=1.0, slope_error=0.5, vt1_in_ci=True),
        CaseScore(kind="a", seed=1, noise=1.0, foreign=True, layout="x", status="ok", vt1_error_pct=4.0, vt1_given=True,
                  vt2_truth=False, vo2peak_error_pct=3.0, slope_error=1.5, vt1_in_ci=False),
        CaseScore(kind="b", seed=0, noise=1.0, foreign=False, layout="", status="crash", error="x"),
    ]
    rows = summarise(scores, groups={"all": ["a", "b"]})
    assert [r["group"] for r in rows] == ["a", "b", "all"]
    a = rows[0]
    assert a["vt1_median_pct"] == pytest.approx(3.0) and a["vt1_p90_pct"] == pytest.approx(3.8)
    assert (a["vt2_false"], a["vt2_none_tests"], a["vt1_ci_coverage"]) == (1, 2, 0.5)
    assert rows[2]["crashes"] == 1 and rows[2]["n"] == 3
    text = format_markdown(rows)
    assert "| a | 2 | 3.00 | 3.80 |" in text and "1/2" in text and "50 %" in text


def test_summary_split_by_noise_and_layout():
    scores = [
        CaseScore(kind="a", seed=0, noise=0.5, foreign=False, layout="", status="ok", vt1_error_pct=1.0, vt1_given=True),
        CaseScore(kind="b", seed=0, noise=2.0, foreign=True, layout="tab_kpa_ml", status="ok", vt1_error_pct=5.0, vt1_given=True),
    ]
    assert [r["group"] for r in summarise(scores, by="noise")] == ["noise 0.5", "noise 2"]
    assert [r["group"] for r in summarise(scores, by="layout")] == ["direct (no export)", "tab_kpa_ml"]
    with pytest.raises(Exception, match="by"):
        summarise(scores, by="colour")


def test_flags_expected_from_truth_and_read_from_results():
    from analysis.simulation.evaluate import expected_flags, format_flags_markdown, summarise_flags

    lung = CaseTruth.from_meta(simulate_case("lung_limited", 0, noise=0, clean=True).meta)
    assert set(expected_flags(lung)) == {"desaturation", "breathing_reserve_low"}  # SpO2 falls 4-9, reserve < 15 %
    eov = CaseTruth.from_meta(simulate_case("hf_oscillation", 0, noise=0, clean=True).meta)
    assert "oscillatory_ventilation" in expected_flags(eov)
    assert expected_flags(CaseTruth.from_meta(simulate_case("athlete", 0, noise=0, clean=True).meta)) == ()
    # a limit at its cut point: a fall of exactly 4 points is desaturation (ATS/ACCP 2003)
    assert expected_flags(_truth(spo2_rest_pct=97.0, spo2_min_pct=93.0)) == ("desaturation",)
    assert expected_flags(_truth(spo2_rest_pct=97.0, spo2_min_pct=93.1)) == ()
    reading = read_result({"flags": [{"code": "desaturation"}, {"code": "vo2peak_low"}]})
    assert reading.flag_codes == ("desaturation", "vo2peak_low")
    out = compare(reading, lung)
    assert out["flags_raised"] == ("desaturation",)
    score = CaseScore(kind="lung_limited", seed=0, noise=1.0, foreign=False, layout="", status="ok", **out)
    rows = summarise_flags([score])
    assert rows[0]["desaturation"] == (1, 1, 0) and rows[0]["breathing_reserve_low"] == (0, 1, 0)
    assert "1/1 (+0 false)" in format_flags_markdown(rows)
