"""One blood per state: acid-base by the Van Slyke equation, arterial PO2 from the alveolar gas
equation at the test's barometric pressure, exercise conditions in arterial blood, no exercise
equation at rest, and a mixed-venous floor."""

from __future__ import annotations

import pytest

from analysis.oxygen import StateConditions, StatePoint, oxygen_comparison
from analysis.oxygen.acid_base import (
    base_excess_mmol_l,
    complete_blood_gas,
    pco2_from_ph_base_excess_mmhg,
    ph_from_pco2_base_excess,
)
from analysis.oxygen.comparison import MIXED_VENOUS_PO2_FLOOR_MMHG, RESTING_AVO2_ML_DL
from analysis.oxygen.states import DEFAULT_ARTERIAL_CONDITIONS, DEFAULT_CONDITIONS
from analysis.records import to_json

POINTS = [
    StatePoint("rest", 350.0, hr_bpm=70.0, pct_vo2_peak=10.0, rer=0.82),
    StatePoint("vt1", 1800.0, hr_bpm=130.0, pct_vo2_peak=50.0, rer=0.95),
    StatePoint("vt2", 2800.0, hr_bpm=160.0, pct_vo2_peak=80.0, rer=1.05),
    StatePoint("peak", 3500.0, hr_bpm=185.0, pct_vo2_peak=100.0, rer=1.15),
]


def test_van_slyke_gives_the_ph_that_pco2_and_base_excess_imply():
    # The project's Van Slyke equation (Siggaard-Andersen 1977, from memory) at Hb 15: PCO2 56 /
    # BE -5 and PCO2 62 / BE -10 imply pH 7.233 and 7.125 (the figures that showed the old
    # defaults, pH 7.28 and 7.20, described different blood from their PCO2 and base excess).
    assert ph_from_pco2_base_excess(pco2_mmhg=56.0, base_excess_mmol_l=-5.0, hb_g_dl=15.0) == pytest.approx(7.233, abs=5e-4)
    assert ph_from_pco2_base_excess(pco2_mmhg=62.0, base_excess_mmol_l=-10.0, hb_g_dl=15.0) == pytest.approx(7.125, abs=5e-4)


@pytest.mark.parametrize("missing", ["ph", "pco2_mmhg", "base_excess_mmol_l"])
def test_any_two_give_the_third(missing):
    # The three solved forms of one equation agree with each other (round trip).
    full = {"ph": 7.31, "pco2_mmhg": 52.0}
    full["base_excess_mmol_l"] = base_excess_mmol_l(ph=7.31, pco2_mmhg=52.0, hb_g_dl=13.0)
    given = {k: (None if k == missing else v) for k, v in full.items()}
    ph, pco2, be = complete_blood_gas(hb_g_dl=13.0, **given)
    assert (ph, pco2, be) == pytest.approx((full["ph"], full["pco2_mmhg"], full["base_excess_mmol_l"]), abs=1e-6)
    assert pco2_from_ph_base_excess_mmhg(ph=ph, base_excess_mmol_l=be, hb_g_dl=13.0) == pytest.approx(52.0, abs=1e-6)


def test_defaults_describe_one_blood():
    r = oxygen_comparison(POINTS, hb_g_dl=15.0)
    for s in r.states:
        c = s.conditions
        implied = ph_from_pco2_base_excess(pco2_mmhg=c.pco2_mmhg, base_excess_mmol_l=c.base_excess_mmol_l, hb_g_dl=15.0)
        assert c.ph == pytest.approx(implied, abs=1e-6)
        assert s.venous_blood == "mixed venous"
    assert not any("not self-consistent" in n for n in r.notes)
    assert r.state("peak").conditions.ph == pytest.approx(7.125, abs=5e-4)


def test_inconsistent_measured_gas_is_used_and_noted():
    conds = {"peak": StateConditions(temperature_c=39.0, ph=7.20, pco2_mmhg=62.0, base_excess_mmol_l=-10.0)}
    r = oxygen_comparison(POINTS[-1:], hb_g_dl=15.0, conditions=conds)
    assert r.state("peak").conditions.ph == 7.20
    assert any("not self-consistent" in n and "7.125" in n for n in r.notes)


def test_refuses_two_missing():
    from analysis.errors import InvalidParameter

    with pytest.raises(InvalidParameter, match="at least two"):
        StateConditions(ph=None, pco2_mmhg=None)


def test_arterial_po2_follows_barometric_pressure():
    # Alveolar gas equation (textbook): 0.2093 x (760 - 596) = 34.3 mmHg less inspired PO2 at
    # 596 mmHg (about 2,000 m), the same fall in PAO2 and PaO2 with PaCO2 and R unchanged.
    sea = oxygen_comparison(POINTS, hb_g_dl=15.0)
    high = oxygen_comparison(POINTS, hb_g_dl=15.0, pb_mmhg=596.0)
    for a, b in zip(sea.states, high.states, strict=True):
        assert a.pao2_source == "alveolar gas equation"
        assert a.pao2_mmhg - b.pao2_mmhg == pytest.approx(0.2093 * (760.0 - 596.0), abs=1e-6)
        assert b.sao2 < a.sao2 and b.cao2_ml_dl < a.cao2_ml_dl
    # rest: PAO2 = 0.2093 x 713 - 40 x (0.2093 + 0.7907 / 0.82) minus the 10 mmHg A-a gradient
    expected = 0.2093 * 713.0 - 40.0 * (0.2093 + 0.7907 / 0.82) - 10.0
    assert sea.state("rest").pao2_mmhg == pytest.approx(expected, abs=0.05)


def test_measured_pao2_wins():
    r = oxygen_comparison(POINTS, hb_g_dl=15.0, pao2_mmhg=90.0, pb_mmhg=596.0)
    assert {s.pao2_mmhg for s in r.states} == {90.0}
    assert {s.pao2_source for s in r.states} == {"measured"}


def test_exercise_conditions_reach_arterial_blood():
    # Dempsey & Wagner 1999 (from memory): warm, acid arterial blood at peak saturates less at the
    # same PaO2 (Bohr and temperature effects).
    r = oxygen_comparison(POINTS, hb_g_dl=15.0, pao2_mmhg=95.0)
    rest, peak = r.state("rest"), r.state("peak")
    assert peak.arterial_conditions.temperature_c == DEFAULT_ARTERIAL_CONDITIONS["peak"].temperature_c == 39.0
    assert peak.arterial_conditions.ph < 7.30
    assert peak.sao2 < rest.sao2 - 0.01


def test_no_exercise_equation_at_rest():
    r = oxygen_comparison(POINTS, hb_g_dl=15.0)
    rest = r.state("rest")
    assert rest.q_method == "resting_typical_avo2" and rest.q_estimated
    assert rest.avo2_ml_dl == pytest.approx(RESTING_AVO2_ML_DL)
    assert any("not used at rest" in n for n in rest.notes)
    assert rest.svo2 > 0.65  # common practice: resting mixed venous S about 0.75


def test_low_resting_svo2_is_flagged():
    # Measured resting Q of 2.5 L/min for VO2 300 mL/min with Hb 11: a-vO2 12 mL/dL of about 14.5,
    # a mixed venous saturation far below 0.55.
    r = oxygen_comparison([StatePoint("rest", 300.0, q_l_min=2.5)], hb_g_dl=11.0)
    rest = r.state("rest")
    assert rest.svo2 < 0.55
    assert any("below about 0.55" in n and "Consistent with" in n for n in rest.notes)


def test_floor_is_the_mixed_venous_one():
    # Mixed venous PO2 at VO2max about 15-20 mmHg (from memory); the femoral venous 10 mmHg is
    # not used for the Fick comparison.
    assert MIXED_VENOUS_PO2_FLOOR_MMHG == 15.0
    r = oxygen_comparison(POINTS, hb_g_dl=15.0)
    data = to_json(r)
    assert data["pvo2_floor_mmhg"] == 15.0 and data["venous_blood"] == "mixed venous"
    assert "femoral venous" in data["pvo2_floor_blood"]


def test_spo2_with_cohb_is_corrected_and_noted():
    # Oximeters read COHb as O2Hb (common practice): SpO2 97 % with 10 % COHb leaves
    # (0.97 - 0.10) / 0.90 = 0.967 of the free haemoglobin saturated.
    r = oxygen_comparison([StatePoint("rest", 300.0, q_l_min=5.0, spo2_pct=97.0)], hb_g_dl=15.0, cohb_fraction=0.10)
    rest = r.state("rest")
    assert rest.sao2 == pytest.approx(0.87 / 0.90)
    assert rest.cao2_ml_dl == pytest.approx(1.34 * 15.0 * 0.9 * rest.sao2 + 0.0031 * rest.pao2_mmhg)
    assert any("read carboxyhaemoglobin as oxyhaemoglobin" in n for n in rest.notes)


def test_default_tables_cover_states():
    assert set(DEFAULT_CONDITIONS) == set(DEFAULT_ARTERIAL_CONDITIONS) == {"rest", "vt1", "vt2", "peak"}
