"""Each interpretation limit at its cut point, with the source it follows named beside it."""

from __future__ import annotations

import numpy as np
import pytest

from analysis.errors import InvalidParameter
from analysis.indices.breathing_reserve import breathing_reserve
from analysis.interpretation.chronotropic import chronotropic_flag, chronotropic_index, chronotropic_response
from analysis.interpretation.gas_exchange import GasExchange, gas_exchange_flags, vd_vt_from_ve_vco2, ve_vco2_from_vd_vt
from analysis.interpretation.predicted import PredictedPeak, vo2peak_flag
from analysis.interpretation.response import (
    O2PulseTrajectory,
    dvo2_dwr_flag,
    heart_rate_recovery,
    hr_recovery_flag,
    o2_pulse_flag,
)
from analysis.interpretation.saturation import spo2_summary
from analysis.interpretation.ventilation import Ventilation, breathing_reserve_flag


def _spo2_test(rest_pct: float, low_pct: float) -> tuple[list[float], list[float], list[str]]:
    """3 min rest at rest_pct, 8 min exercise falling linearly to low_pct and held for 2 min."""
    t_rest = np.arange(0, 180, 3.0)
    t_ex = np.arange(180, 780, 3.0)
    fall = np.clip((t_ex - 180) / 360.0, 0, 1)
    spo2 = np.concatenate([np.full(t_rest.size, rest_pct), rest_pct - (rest_pct - low_pct) * fall])
    labels = ["rest"] * t_rest.size + ["exercise"] * t_ex.size
    return list(np.concatenate([t_rest, t_ex])), list(spo2), labels


# --- SpO2: desaturation at a fall >= 4 points or SpO2 <= 88 % (ATS/ACCP 2003, from memory) ---
def test_desaturation_at_a_fall_of_4_points_not_3_9():
    assert spo2_summary(*_spo2_test(97.0, 93.0)).desaturation  # fall 4.0
    r = spo2_summary(*_spo2_test(97.0, 93.1))
    assert r.fall_points == pytest.approx(3.9, abs=1e-6)
    assert not r.desaturation


def test_desaturation_at_88_percent_not_88_1():
    assert spo2_summary(*_spo2_test(91.0, 88.0)).desaturation  # fall 3, level 88
    assert not spo2_summary(*_spo2_test(91.0, 88.1)).desaturation


def test_one_low_breath_is_not_a_desaturation():
    t, s, lab = _spo2_test(97.0, 97.0)
    s[120] = 80.0  # one breath, a probe artefact
    r = spo2_summary(t, s, lab)
    # interpolated over 3 s either side: a triangle of area 17 x 3 in a 30-s window -> 1.7 points
    assert r.fall_points == pytest.approx(1.7, abs=1e-6) and not r.desaturation


def test_spo2_values_reported():
    r = spo2_summary(*_spo2_test(97.0, 91.0))
    assert r.spo2_rest_pct == pytest.approx(97.0)
    assert r.spo2_min_pct == pytest.approx(91.0, abs=1e-6)
    assert r.spo2_peak_pct == pytest.approx(91.0, abs=1e-6)
    with pytest.raises(InvalidParameter, match="spo2_pct"):
        spo2_summary([0, 1], [97, 120], ["exercise", "exercise"])


# --- Breathing reserve < 15 % of MVV or < 11 L/min (ATS/ACCP 2003, from memory) ---
def _vent(ve_peak: float, mvv: float) -> Ventilation:
    br = breathing_reserve(ve_peak, mvv_l_min=mvv)
    return Ventilation(br.reserve_l_min, br.reserve_pct, br.mvv_l_min, br.mvv_source, None, None, None, None)


def test_breathing_reserve_cut_points():
    assert breathing_reserve_flag(_vent(85.0, 100.0)) is None  # 15 % and 15 L/min: not below
    f = breathing_reserve_flag(_vent(85.1, 100.0))  # 14.9 %
    assert f is not None and f.code == "breathing_reserve_low" and f.value == pytest.approx(14.9)
    assert "ATS/ACCP 2003" in f.source
    assert breathing_reserve_flag(_vent(189.0, 200.0)) is not None  # 5.5 % and 11 L/min... 11 is not < 11 but 5.5 % is
    assert breathing_reserve_flag(_vent(59.0, 70.0)) is None  # 11 L/min = 15.7 %: neither below
    assert breathing_reserve_flag(_vent(59.1, 70.0)) is not None  # 10.9 L/min
    # FEV1 x 40 (ATS/ACCP 2003, from memory): FEV1 2 L -> MVV 80
    assert breathing_reserve(70.0, fev1_l=2.0).mvv_l_min == 80.0


# --- Chronotropic index < 0.80, < 0.62 on beta-blockers (Lauer 1996/1999; Khan 2005, from memory) ---
def test_chronotropic_index_equation_and_limits():
    assert chronotropic_index(hr_rest_bpm=70, hr_peak_bpm=150, hr_predicted_bpm=170) == pytest.approx(0.80)
    r = chronotropic_response(hr_rest_bpm=60, hr_peak_bpm=60 + 0.80 * (180 - 60), age_y=40, beta_blocker=False)
    assert r.hr_predicted_bpm == pytest.approx(180.0)  # Tanaka 2001: 208 - 0.7 * 40 (from memory)
    assert r.limit == 0.80 and chronotropic_flag(r, effort_adequate=True) is None
    low = chronotropic_response(hr_rest_bpm=60, hr_peak_bpm=155.9, age_y=40, beta_blocker=False)  # 0.799
    f = chronotropic_flag(low, effort_adequate=True)
    assert f is not None and f.code == "chronotropic_incompetence" and f.severity == "abnormal"
    assert "Lauer" in f.source and "Khan" in f.source
    assert chronotropic_flag(low, effort_adequate=False).severity == "caution"


def test_chronotropic_limit_on_beta_blockers_uses_brawner():
    # Brawner 2004 (from memory): 164 - 0.72 * 60 = 120.8
    pred = 164 - 0.72 * 60
    at = chronotropic_response(hr_rest_bpm=60, hr_peak_bpm=60 + 0.62 * (pred - 60), age_y=60, beta_blocker=True)
    assert at.prediction == "brawner2004" and at.hr_predicted_bpm == pytest.approx(120.8)
    assert at.limit == 0.62 and chronotropic_flag(at, effort_adequate=True) is None
    below = chronotropic_response(hr_rest_bpm=60, hr_peak_bpm=60 + 0.61 * (pred - 60), age_y=60, beta_blocker=True)
    assert chronotropic_flag(below, effort_adequate=True) is not None


# --- VD/VT: VE/VCO2 = 863 / (PaCO2 x (1 - VD/VT)) (ATS/ACCP 2003, from memory) ---
def test_dead_space_equation():
    assert ve_vco2_from_vd_vt(0.2, paco2_mmhg=40) == pytest.approx(26.97, abs=0.005)  # 863 / (40 x 0.8)
    assert vd_vt_from_ve_vco2(863 / 32, paco2_mmhg=40) == pytest.approx(0.2)
    with pytest.raises(InvalidParameter, match="ve_vco2"):
        vd_vt_from_ve_vco2(15.0, paco2_mmhg=40)  # would be a negative dead space


# --- VE/VCO2 slope >= 36.0: Arena class III-IV (Arena et al. 2007, checked); PETCO2 ---
def _gas(rest: float | None, vt1: float | None) -> GasExchange:
    rise = vt1 - rest if rest is not None and vt1 is not None else None
    return GasExchange(rest, vt1, rise, None, None, None, None)


def test_ve_vco2_slope_cut_point():
    assert not [f for f in gas_exchange_flags(_gas(None, None), ve_vco2_slope=35.99) if f.code == "ve_vco2_slope_high"]
    (f,) = gas_exchange_flags(_gas(None, None), ve_vco2_slope=36.0)
    assert f.code == "ve_vco2_slope_high" and f.source == "Arena et al. 2007"


def test_petco2_cut_points():
    codes = lambda g: {f.code for f in gas_exchange_flags(g, ve_vco2_slope=None)}  # noqa: E731
    assert codes(_gas(33.0, 36.0)) == set()  # rest 33 not below 33 (Arena 2008, from memory); rise 3 not below 3
    assert codes(_gas(32.9, 36.0)) == {"petco2_low"}  # rise 3.1
    assert codes(_gas(35.0, 37.9)) == {"petco2_rise_low"}  # rise 2.9 (Hansen et al. 2007, from memory)


# --- dVO2/dWR < 8.4 mL/min/W (lower limit about 8.4-8.6, from memory) ---
def test_dvo2_dwr_cut_point():
    assert dvo2_dwr_flag(8.4) is None
    f = dvo2_dwr_flag(8.39)
    assert f is not None and f.code == "dvo2_dwr_low" and "8.4" in f.limit
    assert dvo2_dwr_flag(None) is None


# --- HR recovery <= 12 beats/min after an upright active cool-down (Cole et al. 1999, from memory) ---
def test_hr_recovery_cut_point_and_posture():
    up = lambda v: heart_rate_recovery(v, cooldown_posture="upright active")  # noqa: E731
    assert hr_recovery_flag(up(12.1)) is None
    f = hr_recovery_flag(up(12.0))
    assert f is not None and f.severity == "abnormal" and "Cole" in f.source
    assert hr_recovery_flag(heart_rate_recovery(8.0, cooldown_posture="supine")) is None  # the limit does not apply
    unknown = hr_recovery_flag(heart_rate_recovery(8.0, cooldown_posture=None))
    assert unknown is not None and unknown.severity == "caution" and "not recorded" in unknown.text


# --- O2 pulse flattening (Belardinelli et al. 2003) ---
def test_o2_pulse_flattening_rule():
    assert o2_pulse_flag(O2PulseTrajectory(1.0, 0.0, True)).code == "o2_pulse_flattening"
    assert o2_pulse_flag(O2PulseTrajectory(1.0, 0.3, False)) is None


# --- Peak VO2 < 85 % of predicted (ATS/ACCP 2003, from memory) ---
def test_vo2peak_cut_point_names_the_reference_set():
    def pred(pct: float) -> PredictedPeak:
        return PredictedPeak("jones1985", "Jones et al. 1985 (from memory)", 3000.0, pct, None, None, None, None)

    assert vo2peak_flag(pred(85.0)) is None
    f = vo2peak_flag(pred(84.9))
    assert f is not None and "Jones et al. 1985" in f.text and "Jones et al. 1985" in f.source
