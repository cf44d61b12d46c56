"""Inspired air to mitochondria: published check values, the cascade's round trip, an
independent Bohr integration, the CO2 side and the model's assumptions."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from analysis.errors import InvalidParameter
from analysis.oxygen import o2_content_ml_dl, po2_at_saturation, saturation
from analysis.oxygen.alveolar import alveolar_po2_mmhg, arterial_po2_mmhg, barometric_pressure_mmhg
from analysis.oxygen.cascade import ASSUMPTIONS, cascade_lines, oxygen_cascade, solve_forward
from analysis.oxygen.co2_carriage import co2_carriage, resting_hyperventilation
from analysis.oxygen.dyshaemoglobin import functional_saturation
from analysis.oxygen.scenarios import SCENARIO_CODES, limiting_statement, sensitivity, what_if
from analysis.oxygen.states import DEFAULT_ARTERIAL_CONDITIONS, DEFAULT_CONDITIONS

ARTERIAL, CAPILLARY = DEFAULT_ARTERIAL_CONDITIONS["peak"], DEFAULT_CONDITIONS["peak"]


# --- published and textbook check values ---------------------------------------------------


def test_alveolar_gas_equation_textbook_values():
    # Alveolar gas equation with the FIO2 correction term (textbook): PB 760, PaCO2 40, R 0.8
    # -> 101.3 mmHg; PB 596 (about 2,000 m) -> 67.0 mmHg.
    assert alveolar_po2_mmhg(pb_mmhg=760.0, paco2_mmhg=40.0, rer=0.8) == pytest.approx(101.3, abs=0.05)
    assert alveolar_po2_mmhg(pb_mmhg=596.0, paco2_mmhg=40.0, rer=0.8) == pytest.approx(67.0, abs=0.05)
    # With R = 1 the correction vanishes: PAO2 = PIO2 - PaCO2 (textbook identity).
    assert alveolar_po2_mmhg(pb_mmhg=760.0, rer=1.0) == pytest.approx(0.2093 * 713.0 - 40.0, abs=1e-9)
    assert arterial_po2_mmhg(pao2_alveolar_mmhg=101.3, aa_gradient_mmhg=10.0) == pytest.approx(91.3)


def test_standard_atmosphere_at_2000_m():
    # U.S. Standard Atmosphere 1976: 2,000 m -> 79.5 kPa = 596 mmHg (the PB used in the textbook
    # alveolar-gas example above).
    assert barometric_pressure_mmhg(altitude_m=0.0) == pytest.approx(760.0)
    assert barometric_pressure_mmhg(altitude_m=2000.0) == pytest.approx(596.3, abs=0.2)


def test_content_with_carboxyhaemoglobin():
    # 1.34 x 15 x (1 - 0.20) x 0.98 + 0.0031 x 95 = 16.05 mL/dL (content equation, common
    # practice; functional saturation of the haemoglobin free to carry O2).
    assert o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0, cohb_fraction=0.20) == pytest.approx(16.05, abs=0.005)
    with pytest.raises(InvalidParameter, match="cohb_fraction"):
        o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0, cohb_fraction=20.0)


@pytest.mark.parametrize(("po2", "s"), [(20.0, 0.3198), (30.0, 0.5738), (50.0, 0.8499), (80.0, 0.9573), (150.0, 0.9932)])
def test_severinghaus_eq1_worked_values(po2, s):
    # Severinghaus 1979, Eq 1 (values computed from the equation, references.md).
    assert saturation(po2, model="severinghaus") == pytest.approx(s, abs=5e-5)


def test_severinghaus_eq2_worked_value():
    # Severinghaus 1979, Eq 2: S 0.90 -> 57.98 mmHg.
    assert po2_at_saturation(0.90, model="severinghaus") == pytest.approx(57.98, abs=0.005)


def test_more_alveolar_po2_adds_little_content():
    # Raising PAO2 (taken as PaO2) from 100 to 110 mmHg with Hb 15 g/dL (Severinghaus 1979 Eq 1,
    # 1.34 mL/g): S 0.9775 -> 0.9829, content 19.96 -> 20.10 mL/dL.
    before = o2_content_ml_dl(saturation=saturation(100.0), po2_mmhg=100.0, hb_g_dl=15.0)
    after = o2_content_ml_dl(saturation=saturation(110.0), po2_mmhg=110.0, hb_g_dl=15.0)
    assert before == pytest.approx(19.96, abs=0.005) and after == pytest.approx(20.10, abs=0.005)


def test_carbon_monoxide_shifts_the_remaining_curve_left():
    # Roughton & Darling 1944 (from memory): CO bound to some haem raises the O2 affinity of the
    # rest, so at a low PO2 the free haemoglobin is MORE saturated (holds on to its O2).
    s0 = functional_saturation(30.0)
    s20 = functional_saturation(30.0, cohb_fraction=0.20)
    assert s20 > s0 + 0.05
    assert functional_saturation(30.0, cohb_fraction=0.0) == pytest.approx(saturation(30.0), abs=1e-12)
    # Both sites saturate fully at high PO2.
    assert functional_saturation(600.0, cohb_fraction=0.2) == pytest.approx(1.0, abs=0.002)


# --- the cascade ----------------------------------------------------------------------------


@pytest.fixture(scope="module")
def cascade():
    return oxygen_cascade(vo2_peak_ml_min=3500.0, hb_g_dl=15.0, arterial=ARTERIAL, capillary=CAPILLARY, rer=1.15)


@pytest.mark.parametrize(
    "kwargs",
    [
        {},
        {"q_l_min": 25.0},
        {"q_l_min": 25.0, "model": "severinghaus"},
        {"cohb_fraction": 0.08, "methb_fraction": 0.02},
        {"pb_mmhg": 600.0, "fio2": 0.3},
        {"p50_standard_mmhg": 30.0},
        {"pao2_mmhg": 80.0, "sao2": 0.93},
    ],
)
def test_round_trip_returns_the_measured_vo2peak(kwargs):
    # Solving the cascade backward (DmO2 from VO2peak) then forward with the same inputs must
    # give VO2peak back (issue 15, item 3).
    c = oxygen_cascade(vo2_peak_ml_min=3200.0, hb_g_dl=14.0, arterial=ARTERIAL, capillary=CAPILLARY, **kwargs)
    forward = solve_forward(c.inputs, dmo2_ml_min_mmhg=c.dmo2_ml_min_mmhg)
    assert forward.vo2_ml_min == pytest.approx(3200.0, rel=1e-9)
    assert forward.pvo2_mmhg == pytest.approx(c.point.pvo2_mmhg, rel=1e-9)
    assert 0.0 < forward.svo2 < forward.sao2 <= 1.0


def test_fick_holds_at_the_solution(cascade):
    p = cascade.point
    # Fick (common practice): VO2 = 10 Q (CaO2 - CvO2)
    assert 10.0 * cascade.inputs.q_l_min * (p.cao2_ml_dl - p.cvo2_ml_dl) == pytest.approx(3500.0, rel=1e-9)
    # Stringer 1997 at 100 % VO2max: a-vO2 16.22 mL/dL when Q is estimated
    assert cascade.q_estimated and p.cao2_ml_dl - p.cvo2_ml_dl == pytest.approx(16.22, abs=1e-6)
    # Diffusion: VO2 = DmO2 x mean capillary PO2 (Wagner 1996)
    assert cascade.dmo2_ml_min_mmhg * p.mean_capillary_po2_mmhg == pytest.approx(3500.0, rel=1e-6)
    assert p.pvo2_mmhg < p.mean_capillary_po2_mmhg < p.pao2_mmhg + 40.0


def test_bohr_integration_against_an_independent_ode(cascade):
    # Independent check of the tabulated Bohr integral: integrate 10 Q dC/dx = -DmO2 P(C) along
    # the capillary with scipy's ODE solver, P(C) by root finding on the exact curve.
    i, dmo2 = cascade.inputs, cascade.dmo2_ml_min_mmhg
    cap = i.capillary
    capacity = 1.34 * i.hb_g_dl

    def po2_of(c: float) -> float:
        return brentq(
            lambda p: capacity * saturation(p, model=i.model, ph=cap.ph, temperature_c=cap.temperature_c,
                                            base_excess_mmol_l=cap.base_excess_mmol_l) + 0.0031 * p - c,
            1e-6, 2000.0, xtol=1e-10,
        )

    sol = solve_ivp(lambda _x, c: [-dmo2 * po2_of(c[0]) / (10.0 * i.q_l_min)], (0.0, 1.0), [cascade.point.cao2_ml_dl],
                    rtol=1e-9, atol=1e-9)
    cv = float(sol.y[0, -1])
    assert cv == pytest.approx(cascade.point.cvo2_ml_dl, abs=2e-3)


def test_the_two_lines_meet_at_the_solution(cascade):
    lines = cascade_lines(cascade.inputs, dmo2_ml_min_mmhg=cascade.dmo2_ml_min_mmhg)
    assert lines.meeting_vo2_ml_min == pytest.approx(3500.0, rel=1e-9)
    pv = np.array(lines.pvo2_mmhg)
    gap = np.array(lines.convective_vo2_ml_min) - np.array(lines.diffusive_vo2_ml_min)
    crossing = float(np.interp(0.0, -gap, pv))  # convective falls, diffusive rises with venous PO2
    assert crossing == pytest.approx(lines.meeting_pvo2_mmhg, abs=0.5)
    assert np.all(np.diff(lines.convective_vo2_ml_min) < 0) and np.all(np.diff(lines.diffusive_vo2_ml_min) > 0)


def test_estimated_q_is_raised_to_the_mixed_venous_floor():
    # Hb 11: CaO2 about 14.4 mL/dL cannot give the 16.22 mL/dL Stringer extraction; the cascade
    # uses the least Q keeping mixed venous PO2 at 15 mmHg and says so.
    c = oxygen_cascade(vo2_peak_ml_min=2000.0, hb_g_dl=11.0, arterial=ARTERIAL, capillary=CAPILLARY)
    assert c.q_method == "stringer1997_raised_to_venous_floor" and c.q_estimated
    assert c.point.pvo2_mmhg == pytest.approx(15.0, abs=0.01)
    assert any("15 mmHg" in n for n in c.notes)


def test_measured_q_too_small_is_refused():
    with pytest.raises(InvalidParameter, match="q_l_min"):
        oxygen_cascade(vo2_peak_ml_min=4000.0, hb_g_dl=15.0, arterial=ARTERIAL, capillary=CAPILLARY, q_l_min=15.0)


# --- scenarios and sensitivities -------------------------------------------------------------


def test_scenarios_are_complete_and_the_baseline_is_the_measured_vo2peak(cascade):
    rows = what_if(cascade)
    assert [r.scenario for r in rows] == list(SCENARIO_CODES)
    base = rows[0]
    assert base.vo2_peak_ml_min == pytest.approx(3500.0, rel=1e-9) and base.change_pct == pytest.approx(0.0, abs=1e-7)
    assert all(r.note for r in rows)


def test_scenario_directions(cascade):
    # Physiological directions (issue 15, "Done means"): less Hb or COHb lowers VO2peak; 10 %
    # COHb costs more than 10 % less Hb (left shift on top of lost capacity); 2,000 m costs a few
    # to about 15 %; FIO2 30 % adds under 8 %; +10 % Hb adds under 10 %.
    w = {r.scenario: r.change_pct for r in what_if(cascade)}
    assert w["hb_minus_20pct"] < w["hb_minus_10pct"] < 0
    assert w["cohb_10pct"] < w["hb_minus_10pct"]
    assert -15.0 <= w["altitude_2000m"] <= -2.0
    assert 0.0 < w["fio2_30pct"] < 8.0
    assert 0.0 < w["hb_plus_10pct"] < 10.0
    assert 0.0 < w["q_plus_10pct"] < 10.0 and 0.0 < w["dmo2_plus_10pct"] < 10.0
    assert w["p50_18mmhg"] < 0.0  # a high-affinity haemoglobin unloads less in the capillary


def test_sensitivity_ranked_and_worded(cascade):
    rows = sensitivity(cascade)
    assert {r.determinant for r in rows} == {"ventilation", "hb", "q", "dmo2", "p50"}
    assert [r.rank for r in rows] == [1, 2, 3, 4, 5]
    sizes = [abs(r.change_pct) for r in rows]
    assert sizes == sorted(sizes, reverse=True)
    assert all(r.change_pct > 0 for r in rows)  # each rise helps in this model
    text = limiting_statement(rows)
    assert "consistent with" in text and "not a diagnosis" in text and rows[0].label in text
    assert len(ASSUMPTIONS) >= 4


def test_sensitivity_follows_the_weakest_step():
    # Wagner 1996 (from memory): both lines always matter; for the same VO2peak a high Q leaves
    # diffusion as the tighter step (DmO2 ranks above Q), a low Q the reverse.
    c = oxygen_cascade(vo2_peak_ml_min=3500.0, hb_g_dl=15.0, arterial=ARTERIAL, capillary=CAPILLARY, q_l_min=30.0)
    rows = {r.determinant: r.change_pct for r in sensitivity(c)}
    assert rows["dmo2"] > rows["q"]
    c2 = oxygen_cascade(vo2_peak_ml_min=3500.0, hb_g_dl=15.0, arterial=ARTERIAL, capillary=CAPILLARY, q_l_min=19.0)
    rows2 = {r.determinant: r.change_pct for r in sensitivity(c2)}
    assert rows2["q"] > rows2["dmo2"]


# --- CO2 side ---------------------------------------------------------------------------------


def test_co2_carriage_at_rest_in_textbook_ranges():
    # Textbook shares of the a-v CO2 difference at rest (from memory): dissolved about 5-15 %,
    # carbamino about 15-35 %, bicarbonate about 55-75 %; a-v CO2 difference about 3-5 mL/dL.
    c = co2_carriage(state="rest", hb_g_dl=15.0, arterial=DEFAULT_ARTERIAL_CONDITIONS["rest"],
                     venous=DEFAULT_CONDITIONS["rest"], sao2=0.975, svo2=0.75)
    assert 3.0 <= c.avco2_ml_dl <= 5.0
    assert 0.05 <= c.fraction("dissolved") <= 0.15
    assert 0.15 <= c.fraction("carbamino") <= 0.35
    assert 0.55 <= c.fraction("bicarbonate") <= 0.75
    assert c.dissolved_ml_dl + c.carbamino_ml_dl + c.bicarbonate_ml_dl == pytest.approx(c.avco2_ml_dl, abs=1e-12)
    # Haldane part about a third to a half of the CO2 exchanged (from memory).
    assert 0.25 <= c.fraction("haldane") <= 0.55


def test_co2_difference_grows_with_exercise():
    rest = co2_carriage(state="rest", hb_g_dl=15.0, arterial=DEFAULT_ARTERIAL_CONDITIONS["rest"],
                        venous=DEFAULT_CONDITIONS["rest"], sao2=0.975, svo2=0.75)
    peak = co2_carriage(state="peak", hb_g_dl=15.0, arterial=ARTERIAL, venous=CAPILLARY, sao2=0.96, svo2=0.2)
    assert peak.avco2_ml_dl > 2.0 * rest.avco2_ml_dl
    assert peak.haldane_ml_dl > rest.haldane_ml_dl


def test_resting_hyperventilation_gains_little_and_shifts_left():
    # PaCO2 40 -> 30: PAO2 up by 10 x (0.2093 + 0.7907 / 0.8) = 12.0 mmHg (alveolar gas
    # equation), but content by only a few tenths of a mL/dL; pH up, P50 down (Bohr effect).
    h = resting_hyperventilation(hb_g_dl=15.0)
    assert h.pao2_alveolar_after_mmhg - h.pao2_alveolar_before_mmhg == pytest.approx(11.98, abs=0.01)
    assert 0.0 < h.cao2_gain_ml_dl < 0.5
    assert h.ph_after > h.ph_before + 0.05
    assert h.p50_after_mmhg < h.p50_before_mmhg - 1.0
    assert "left shift" in h.note


def test_capillary_conditions_must_be_known():
    with pytest.raises(InvalidParameter):
        oxygen_cascade(vo2_peak_ml_min=0.0, hb_g_dl=15.0, arterial=ARTERIAL, capillary=CAPILLARY)
    with pytest.raises(InvalidParameter, match="dmo2"):
        solve_forward(replace(oxygen_cascade(vo2_peak_ml_min=3000.0, hb_g_dl=15.0, arterial=ARTERIAL,
                                             capillary=CAPILLARY).inputs), dmo2_ml_min_mmhg=-1.0)


def test_standard_p50_is_solved_once_per_model_and_equals_the_curve_p50():
    from analysis.oxygen.cascade import _model_p50
    from analysis.oxygen.curves import p50

    _model_p50.cache_clear()
    # Siggaard-Andersen et al. 1984: standard P50 26.8 mmHg (the curves module's doctest)
    assert _model_p50("siggaard_andersen") == p50(model="siggaard_andersen") == pytest.approx(26.8, abs=0.05)
    assert _model_p50("severinghaus") == p50(model="severinghaus")
    _model_p50("siggaard_andersen")
    assert _model_p50.cache_info().hits == 1 and _model_p50.cache_info().misses == 2
