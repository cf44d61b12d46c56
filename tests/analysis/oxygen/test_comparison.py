"""Per-state comparison of Fick extraction and curve unloading."""

from __future__ import annotations

import json
import math
import warnings

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analysis.errors import DataQualityWarning, InvalidParameter
from analysis.oxygen import (
    DEFAULT_CONDITIONS,
    StateConditions,
    StatePoint,
    o2_content_ml_dl,
    oxygen_comparison,
    saturation,
)
from analysis.records import to_json

POINTS = [
    StatePoint("rest", 350.0, hr_bpm=70.0, pct_vo2_peak=10.0),
    StatePoint("vt1", 1800.0, hr_bpm=130.0, pct_vo2_peak=50.0),
    StatePoint("vt2", 2800.0, hr_bpm=160.0, pct_vo2_peak=80.0),
    StatePoint("peak", 3500.0, hr_bpm=185.0, pct_vo2_peak=100.0),
]


@pytest.fixture(scope="module", params=["siggaard_andersen", "severinghaus"])
def result(request):
    return oxygen_comparison(POINTS, hb_g_dl=15.0, model=request.param)


def test_stringer_estimate_flagged_and_used(result):
    # Stringer 1997: at 100 % VO2max C(a-v)O2 = 16.22 mL/dL, Q = 3500 / 162.2 L/min.
    peak = result.state("peak")
    assert peak.q_estimated and peak.estimate and peak.q_method == "stringer1997"
    assert peak.avo2_ml_dl == pytest.approx(16.22, abs=1e-9)
    assert peak.q_l_min == pytest.approx(3500.0 / 162.2, rel=1e-9)
    assert peak.stroke_volume_ml == pytest.approx(1000.0 * peak.q_l_min / 185.0)
    assert any("ESTIMATE" in n for n in peak.notes)


def test_decomposition_parts_sum_to_total(result):
    # Shapley parts add up exactly (by construction) and the total equals the Fick a-vO2 difference.
    for s in result.states:
        u = s.unloading
        assert u is not None
        assert u.po2_fall + u.temperature + u.acid_base + u.dpg == pytest.approx(u.total, abs=1e-9)
        assert u.total == pytest.approx(s.avo2_ml_dl, abs=1e-6)


def test_rest_has_no_shift_and_exercise_shifts_right(result):
    # Rest compared with itself: no shift. Warmer, more acid blood unloads more at the same PO2
    # (Bohr and temperature effects, common practice), so the shift parts are positive at peak
    # and the venous PO2 needed is higher on the exercise curve than on the resting curve.
    rest, peak = result.state("rest"), result.state("peak")
    assert rest.unloading.curve_shift == pytest.approx(0.0, abs=1e-12)
    assert rest.pvo2_exercise_curve_mmhg == pytest.approx(rest.pvo2_resting_curve_mmhg, rel=1e-9)
    assert peak.unloading.temperature > 0 and peak.unloading.acid_base > 0
    assert peak.unloading.dpg == pytest.approx(0.0, abs=1e-12)  # DPG unchanged by default
    assert peak.pvo2_exercise_curve_mmhg > peak.pvo2_resting_curve_mmhg


def test_implied_venous_values_are_consistent(result):
    for s in result.states:
        kwargs = s.conditions.curve_kwargs(result.model)
        sv = saturation(s.pvo2_exercise_curve_mmhg, model=result.model, **kwargs)
        assert s.svo2 == pytest.approx(sv, abs=1e-9)
        cv = o2_content_ml_dl(saturation=sv, po2_mmhg=s.pvo2_exercise_curve_mmhg, hb_g_dl=15.0)
        assert cv == pytest.approx(s.cvo2_ml_dl, abs=1e-6)
        assert 0.0 < s.svo2 < s.sao2
        assert s.haldane_extra_co2_ml_dl > 0


def test_textbook_fick_case_with_measured_q():
    # Common practice: VO2 250 mL/min, Q 5 L/min -> a-vO2 5 mL/dL; with CaO2 ≈ 20 (Hb 15,
    # PaO2 95) CvO2 ≈ 15 mL/dL, mixed venous S ≈ 0.73-0.75 and PO2 ≈ 38-42 mmHg.
    r = oxygen_comparison([StatePoint("rest", 250.0, hr_bpm=70.0, q_l_min=5.0)], hb_g_dl=15.0)
    s = r.state("rest")
    assert not s.q_estimated and s.q_method == "measured"
    assert s.avo2_ml_dl == pytest.approx(5.0)
    assert s.cvo2_ml_dl == pytest.approx(s.cao2_ml_dl - 5.0)
    assert 0.72 <= s.svo2 <= 0.76
    assert 37.0 <= s.pvo2_exercise_curve_mmhg <= 43.0
    assert s.notes == []


def test_implausible_extraction_is_explained():
    # Q far too low for VO2: a-vO2 18 mL/dL with Hb 12 -> venous PO2 under 10 mmHg or impossible.
    r = oxygen_comparison([StatePoint("peak", 3600.0, q_l_min=20.0)], hb_g_dl=12.0)
    s = r.state("peak")
    assert s.avo2_ml_dl == pytest.approx(18.0)
    assert s.cvo2_ml_dl < 0 or s.pvo2_exercise_curve_mmhg < 10
    assert any("impossible" in n and "measured cardiac output" in n for n in s.notes)


def test_stringer_in_anaemia_points_at_the_estimate():
    # Stringer 1997 at 100 % VO2max assumes 16.22 mL/dL extraction; with Hb 11 g/dL arterial blood
    # holds only about 14.6 mL/dL (1.34 x 11 x 0.975 + 0.3), so the estimate cannot apply.
    r = oxygen_comparison([StatePoint("peak", 2000.0, pct_vo2_peak=100.0)], hb_g_dl=11.0)
    s = r.state("peak")
    assert s.cvo2_ml_dl < 0 and s.pvo2_exercise_curve_mmhg is None and s.unloading is None
    assert any("Stringer 1997 estimate was derived in healthy people" in n for n in s.notes)
    assert to_json(r)["states"][0]["unloading_ml_dl"] is None


def test_low_but_possible_venous_po2_is_flagged():
    # Measured Q low for VO2: a-vO2 19 mL/dL with Hb 15 (CaO2 ≈ 19.8) leaves under 1 mL/dL in
    # mixed venous blood, i.e. a venous PO2 below the mixed-venous floor of 15 mmHg (about
    # 15-20 mmHg at VO2max, from memory) even on the right-shifted peak curve.
    r = oxygen_comparison([StatePoint("peak", 3800.0, q_l_min=20.0)], hb_g_dl=15.0)
    s = r.state("peak")
    assert s.pvo2_exercise_curve_mmhg is not None and s.pvo2_exercise_curve_mmhg < 15.0
    assert any("below about 15 mmHg" in n and "mixed venous" in n and "femoral venous" in n for n in s.notes)
    assert any("exceeds what the curve allows" in n for n in s.notes)


def test_spo2_used_and_low_value_noted():
    # The low reading is a note on the state (a value), not a warning passed on.
    with warnings.catch_warnings():
        warnings.simplefilter("error", DataQualityWarning)
        r = oxygen_comparison([StatePoint("rest", 300.0, q_l_min=5.0, spo2_pct=88.0)], hb_g_dl=14.0)
    s = r.state("rest")
    assert s.sao2_source == "spo2" and s.sao2 == pytest.approx(0.88)
    assert any("below 90" in n for n in s.notes)


def test_edited_conditions_and_dpg_part():
    # Raised DPG on the peak curve (Siggaard-Andersen 1984 shifts right) appears as its own part.
    conds = {"peak": StateConditions(temperature_c=39.0, ph=7.2, pco2_mmhg=62.0, dpg_mmol_l=6.5, base_excess_mmol_l=-10.0)}
    r = oxygen_comparison(POINTS[-1:], hb_g_dl=15.0, conditions=conds)
    u = r.state("peak").unloading
    assert u.dpg > 0
    assert u.po2_fall + u.temperature + u.acid_base + u.dpg == pytest.approx(u.total, abs=1e-9)


def test_model_notes_say_what_is_not_applied():
    r = oxygen_comparison(POINTS, hb_g_dl=15.0, model="siggaard_andersen")
    # Notes name conditions, curves and states in the trade's words, never in code names.
    assert any(n.startswith("PCO2 not applied to the Siggaard-Andersen 1984 curve for") for n in r.notes)
    r2 = oxygen_comparison(POINTS, hb_g_dl=15.0, model="severinghaus")
    assert any(n.startswith("base excess not applied to the Severinghaus 1979 curve for") for n in r2.notes)
    assert not any("_" in n for n in r.notes + r2.notes)
    method = to_json(r)["decomposition_method"]
    assert "pH/CO2" in method and "2,3-BPG" in method and "_" not in method


def test_json_and_frame(result):
    data = to_json(result)
    text = json.dumps(data, allow_nan=False)
    assert '"estimate": true' in text
    assert "not a medical device" in data["caution"] and "licensed practice" in data["caution"]
    assert [s["name"] for s in data["states"]] == ["rest", "vt1", "vt2", "peak"]
    assert all(s["estimate"] is True and s["venous_values_estimated"] is True for s in data["states"])
    frame = result.to_frame()
    assert list(frame["state"]) == ["rest", "vt1", "vt2", "peak"]
    assert frame["avo2_ml_dl"].iloc[-1] == pytest.approx(16.22)
    assert not any(isinstance(v, float) and math.isnan(v) for v in data["states"][0].values())


def test_default_conditions_cover_the_four_states():
    assert set(DEFAULT_CONDITIONS) == {"rest", "vt1", "vt2", "peak"}
    temps = [DEFAULT_CONDITIONS[n].temperature_c for n in ("rest", "vt1", "vt2", "peak")]
    phs = [DEFAULT_CONDITIONS[n].resolved(hb_g_dl=15.0).ph for n in ("rest", "vt1", "vt2", "peak")]
    assert temps == sorted(temps) and phs == sorted(phs, reverse=True)


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda: oxygen_comparison([StatePoint("peak", 3000.0)], hb_g_dl=15.0), "pct_vo2_peak"),
        (lambda: oxygen_comparison(POINTS, hb_g_dl=1.0), "hb_g_dl"),
        (lambda: oxygen_comparison(POINTS, hb_g_dl=15.0, model="hill"), "model"),
        (lambda: oxygen_comparison([], hb_g_dl=15.0), "at least one"),
        (lambda: oxygen_comparison([StatePoint("cooldown", 800.0, q_l_min=8.0)], hb_g_dl=15.0), "state names"),
        (lambda: StatePoint("rest", 0.0), "vo2_ml_min"),
        (lambda: StatePoint("rest", 300.0, spo2_pct=0.97), "spo2_pct"),
        (lambda: StateConditions(ph=6.0), "ph"),
    ],
)
def test_refuses(call, match):
    with pytest.raises(InvalidParameter, match=match):
        call()


@settings(max_examples=40, deadline=None)
@given(
    vo2=st.floats(200.0, 5000.0),
    q=st.floats(4.0, 35.0),
    hb=st.floats(9.0, 18.0),
    temperature=st.floats(36.0, 40.5),
    ph=st.floats(7.0, 7.45),
    pco2=st.floats(35.0, 80.0),
    dpg=st.floats(3.0, 8.0),
    be=st.floats(-15.0, 3.0),
    model=st.sampled_from(["siggaard_andersen", "severinghaus"]),
)
def test_parts_always_sum_to_the_fick_difference(vo2, q, hb, temperature, ph, pco2, dpg, be, model):
    # Shapley parts add up by construction (Shapley 1953); the total is the Fick a-vO2 difference.
    conds = {"peak": StateConditions(temperature_c=temperature, ph=ph, pco2_mmhg=pco2, dpg_mmol_l=dpg, base_excess_mmol_l=be)}
    if model == "severinghaus":
        conds = {"peak": StateConditions(temperature_c=temperature, ph=ph, pco2_mmhg=pco2)}
    r = oxygen_comparison([StatePoint("peak", vo2, q_l_min=q)], hb_g_dl=hb, conditions=conds, model=model)
    s = r.state("peak")
    if s.unloading is None:
        assert s.cvo2_ml_dl <= 0 and any("impossible" in n for n in s.notes)
        return
    u = s.unloading
    assert u.po2_fall + u.temperature + u.acid_base + u.dpg == pytest.approx(s.avo2_ml_dl, abs=1e-6)
