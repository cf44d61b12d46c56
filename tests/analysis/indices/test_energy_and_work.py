"""Weir energy expenditure, Frayn substrate oxidation, FATmax, METs, ΔVO2/ΔWR, breathing reserve."""

import numpy as np
import pytest

from analysis.errors import AnalysisError, InvalidParameter
from analysis.indices import (
    breathing_reserve,
    carbohydrate_oxidation_g_min,
    energy_expenditure_kcal_min,
    fat_max,
    fat_oxidation_g_min,
    mets,
    vo2_work_rate_slope,
)


def test_weir_worked_value():
    # Weir 1949 abbreviated equation, worked by hand: VO2 2.0 L/min, VCO2 1.8 L/min
    # EE = 3.941*2.0 + 1.106*1.8 = 7.882 + 1.9908 = 9.8728 kcal/min
    assert energy_expenditure_kcal_min(2000.0, 1800.0) == pytest.approx(9.8728, abs=1e-9)
    # resting example: 0.25 L/min O2, 0.20 L/min CO2 -> 0.98525 + 0.2212 = 1.20645 kcal/min
    # (about 1,737 kcal/day, a plausible resting expenditure — common practice)
    assert energy_expenditure_kcal_min(250.0, 200.0) == pytest.approx(1.20645)


def test_frayn_at_rer_limits():
    # Frayn 1983 (from memory): at RER 0.7 nearly all fat, at RER 1.0 no fat.
    # VO2 1.0, VCO2 0.7: CHO = 4.55*0.7 - 3.21 = -0.025 g/min (≈0); fat = 1.67*0.3 = 0.501 g/min
    assert carbohydrate_oxidation_g_min(1000.0, 700.0) == pytest.approx(-0.025)
    assert fat_oxidation_g_min(1000.0, 700.0) == pytest.approx(0.501)
    # VO2 = VCO2 = 1.0 L/min: fat 0; CHO = 4.55 - 3.21 = 1.34 g/min
    assert fat_oxidation_g_min(1000.0, 1000.0) == pytest.approx(0.0)
    assert carbohydrate_oxidation_g_min(1000.0, 1000.0) == pytest.approx(1.34)


def test_fat_max_picks_highest_fat_oxidation_below_rer_1():
    # fat = 1.67*(VO2-VCO2) in L/min: rows give 0.167, 0.2505, 0.1670, (RER>1 ignored)
    t = [0, 60, 120, 180]
    vo2 = [1000, 2000, 3000, 3500]
    vco2 = [900, 1850, 2900, 3800]
    fm = fat_max(t, vo2, vco2, vo2_peak_ml_min=3500)
    assert fm.position == 1
    assert fm.fat_g_min == pytest.approx(1.67 * 0.15)
    assert fm.pct_vo2_peak == pytest.approx(100 * 2000 / 3500)
    assert fm.t_s == 60


def test_fat_max_none_when_all_rer_above_1():
    assert fat_max([0, 1], [1000, 1000], [1100, 1200]) is None


def test_mets():
    # 1 MET = 3.5 mL/kg/min (common practice): 35 mL/kg/min = 10 METs
    assert mets(35.0) == pytest.approx(10.0)
    np.testing.assert_allclose(mets([3.5, 7.0]), [1.0, 2.0])


def test_vo2_work_rate_slope_exact_ramp_with_lag():
    # VO2 follows WR at 10 mL/min/W after a 60-s delay (ATS/ACCP 2003: ~10 mL/min/W healthy).
    t = np.arange(0, 600, 5.0)
    wr = 25.0 / 60.0 * t  # 25 W/min ramp
    vo2 = 800 + 10.0 * np.clip(wr - 25.0, 0, None)  # flat first 60 s, then 10 mL/min/W
    fit = vo2_work_rate_slope(t, vo2, wr, lag_s=60)
    assert fit.slope == pytest.approx(10.0, rel=1e-9)
    # without the lag the flat start drags the slope down
    assert vo2_work_rate_slope(t, vo2, wr, lag_s=0).slope < 10.0


def test_vo2_work_rate_slope_rejects_negative_lag_and_short_data():
    with pytest.raises(InvalidParameter, match="lag_s"):
        vo2_work_rate_slope([0, 1, 2, 3, 4], [1, 2, 3, 4, 5], [1, 2, 3, 4, 5], lag_s=-1)
    with pytest.raises(AnalysisError, match="ΔVO2/ΔWR"):
        vo2_work_rate_slope([0, 10, 20, 30, 40, 50], [1, 2, 3, 4, 5, 6], [1, 2, 3, 4, 5, 6], lag_s=30)


def test_breathing_reserve():
    # MVV ≈ FEV1 × 40 (common practice): FEV1 3.5 L -> MVV 140; VE peak 112 -> reserve 28 L/min, 20 %
    br = breathing_reserve(112.0, fev1_l=3.5)
    assert (br.mvv_l_min, br.mvv_source, br.reserve_l_min, br.reserve_pct) == (140.0, "fev1_x40", 28.0, 20.0)
    # a measured MVV takes precedence over FEV1
    br = breathing_reserve(100.0, mvv_l_min=160.0, fev1_l=3.5)
    assert br.mvv_source == "measured" and br.reserve_pct == pytest.approx(37.5)
    assert breathing_reserve(100.0) is None
    with pytest.raises(InvalidParameter, match="mvv_l_min"):
        breathing_reserve(100.0, mvv_l_min=-5)
