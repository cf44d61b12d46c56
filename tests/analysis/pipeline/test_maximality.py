"""Peak values and maximality verdicts on hand-built ramps (exact values, no noise)."""

import numpy as np
import pandas as pd
import pytest

from analysis.errors import AnalysisError, InvalidParameter
from analysis.maximality import assess_maximality, peak_hr_bpm, peak_rer, peak_values, plateau_test, window_means


def ramp(*, plateau_s=0.0, rer_end=1.15, hr_end=185.0, end_s=600.0, load="work_w", late_fraction=0.0):
    """10-s averaged ramp: 25 W/min, VO2 = 800 + 10 mL/min/W (ATS/ACCP 2003, common practice),
    VO2 rising at ``late_fraction`` of that pace over the last ``plateau_s`` seconds."""
    t = np.arange(5.0, end_s, 10.0)
    work = 25.0 / 60.0 * t
    t_flat = end_s - plateau_s
    vo2 = 800.0 + 10.0 * 25.0 / 60.0 * (np.minimum(t, t_flat) + late_fraction * np.clip(t - t_flat, 0, None))
    rer = np.linspace(0.85, rer_end, t.size)
    hr = np.linspace(90.0, hr_end, t.size)
    df = pd.DataFrame({"t_s": t, "vo2_ml_min": vo2, "vco2_ml_min": vo2 * rer, "ve_l_min": vo2 * rer / 1000 * 27, "hr_bpm": hr})
    if load == "work_w":
        df["work_w"] = work
    elif load == "speed_kmh":
        df["speed_kmh"] = 6 + t / 60.0
    return df


def test_peak_values_at_highest_vo2():
    df = ramp()
    # window 0: the highest averaged row itself
    p0 = peak_values(df, body_mass_kg=70.0, window_s=0)
    assert p0.index == df.index[-1]
    assert p0.vo2_ml_min == pytest.approx(800 + 10 * 25 / 60 * 595)
    # default 30-s window lying wholly inside exercise: the last whole window is centred on the
    # row at 585 s and holds the rows at 575, 585 and 595 s (a window at the last row, 595 s,
    # would hold only 585 and 595 s, 20 s of data)
    p = peak_values(df, body_mass_kg=70.0)
    assert p.index == df.index[-2]
    assert p.t_s == 585.0
    assert p.vo2_ml_min == pytest.approx(800 + 10 * 25 / 60 * 585)
    assert p.vo2_ml_kg_min == pytest.approx(p.vo2_ml_min / 70)
    assert p.pct_vo2_peak == pytest.approx(100.0)
    assert peak_rer(df, window_s=0) == pytest.approx(1.15)
    assert peak_hr_bpm(df) == pytest.approx(185.0)


def test_window_means_by_hand():
    t = np.array([0.0, 10.0, 20.0, 30.0])
    v = np.array([1.0, 2.0, np.nan, 4.0])
    # window 20 s: each row with its neighbours within ±10 s, NaN ignored
    np.testing.assert_allclose(window_means(t, v, window_s=20.0), [1.5, 1.5, 3.0, 4.0])
    np.testing.assert_allclose(window_means(t, v, window_s=0.0), v)


def test_peak_window_damps_a_single_high_row():
    df = ramp()
    df.loc[30, "vo2_ml_min"] += 3000.0  # one spuriously high averaged row mid-test
    assert peak_values(df, body_mass_kg=None, window_s=0).index == 30
    assert peak_values(df, body_mass_kg=None).index == df.index[-2]  # last whole window


def test_peak_values_without_exercise():
    with pytest.raises(AnalysisError, match="No exercise data"):
        peak_values(ramp().iloc[0:0], body_mass_kg=70.0)


def test_plateau_found_when_vo2_flat_despite_more_work():
    # Taylor et al. 1955 (from memory): rise < 150 mL/min despite more work = plateau
    pt = plateau_test(ramp(plateau_s=120))
    assert pt.plateau is True
    assert pt.vo2_rise_ml_min == pytest.approx(0.0)
    assert pt.load_column == "work_w" and pt.load_rise == pytest.approx(25.0)


def test_no_plateau_when_vo2_still_rising():
    # 25 W/min * 10 mL/min/W = 250 mL/min per minute > 150 (common practice ramp)
    pt = plateau_test(ramp())
    assert pt.plateau is False
    assert pt.vo2_rise_ml_min == pytest.approx(250.0)


def test_flat_vo2_without_more_work_is_not_a_plateau():
    df = ramp(plateau_s=120)
    df["work_w"] = 200.0
    assert plateau_test(df).plateau is False


def test_treadmill_speed_counts_as_more_work():
    assert plateau_test(ramp(plateau_s=120, load="speed_kmh")).plateau is True


def test_too_short_to_test():
    assert plateau_test(ramp(end_s=60)).plateau is None


def test_slow_ramp_rise_below_150_is_not_a_plateau():
    # 25 W/min ramp scaled to 0.4: 100 mL/min per minute all the way (< 150, but not below half
    # the expected rise) — Taylor's 150 mL/min was ~half the expected step (our ramp adaptation)
    df = ramp()
    df["vo2_ml_min"] = 800 + 0.4 * (df["vo2_ml_min"] - 800)
    pt = plateau_test(df)
    assert pt.plateau is False
    assert pt.vo2_rise_ml_min == pytest.approx(100.0)
    assert pt.expected_rise_ml_min == pytest.approx(100.0)


def test_threshold_is_a_setting():
    # last 120 s rise at 40 % of the 250 mL/min per minute pace: 100 mL/min over the last minute
    df = ramp(plateau_s=120, late_fraction=0.4)
    assert plateau_test(df).vo2_rise_ml_min == pytest.approx(100.0)
    assert plateau_test(df).plateau is True
    assert plateau_test(df, threshold_ml_min=80).plateau is False
    with pytest.raises(InvalidParameter, match="threshold_ml_min"):
        plateau_test(ramp(), threshold_ml_min=0)


def test_verdict_plateau():
    rep = assess_maximality(ramp(plateau_s=120), age_y=30)
    assert rep.verdict == "vo2max_plateau"
    assert rep.label.startswith("VO2max")


def test_verdict_secondary_criteria():
    # RER 1.15 ≥ 1.10; HR 185 / (208 - 0.7*30 = 187, Tanaka 2001) = 98.9 % ≥ 90 % (common practice)
    rep = assess_maximality(ramp(), age_y=30)
    assert rep.verdict == "vo2peak_criteria_met"
    assert rep.hr_max_predicted_bpm == pytest.approx(187.0)
    assert rep.hr_pct_predicted == pytest.approx(100 * 185 / 187)
    assert rep.rer_criterion_met and rep.hr_criterion_met


def test_verdict_submaximal_names_rer_and_hr():
    # RER below 1.10 decides; HR below 90 % is named beside it as information
    rep = assess_maximality(ramp(rer_end=1.02, hr_end=150.0), age_y=30)
    assert rep.verdict == "vo2peak_submaximal"
    assert rep.rer_criterion_met is False and rep.hr_criterion_met is False
    assert any("RER 1.02 is below 1.10" in r for r in rep.reasons)
    assert any("Peak HR 150" in r and "< 90 %" in r for r in rep.reasons)


def test_hr_criterion_skipped_without_age():
    rep = assess_maximality(ramp(), age_y=None)
    assert rep.hr_criterion_met is None
    assert rep.verdict == "vo2peak_criteria_met"
    assert any("age unknown" in r for r in rep.reasons)


def test_low_heart_rate_does_not_make_a_test_submaximal():
    # RER 1.15 ≥ 1.10 decides (Balady et al. 2010, from memory); HR 150 is 80 % of 187 (Tanaka)
    # and is reported as information only
    rep = assess_maximality(ramp(hr_end=150.0), age_y=30)
    assert rep.verdict == "vo2peak_criteria_met"
    assert rep.hr_criterion_met is False and rep.rer_criterion_met is True
    assert any("information only" in r for r in rep.reasons)


def test_beta_blocker_makes_the_hr_criterion_not_applicable():
    # Brawner et al. 2004 (equation from memory): HRmax = 164 - 0.72 x age; age 61 -> 120.08
    rep = assess_maximality(ramp(hr_end=112.0), age_y=61, beta_blocker=True)
    assert rep.hr_criterion_applies is False and rep.hr_criterion_met is None
    assert rep.hr_max_beta_blocker_bpm == pytest.approx(120.08)
    assert rep.verdict == "vo2peak_criteria_met"
    assert any("does not apply" in r and "beta-blocker" in r and "Brawner" in r for r in rep.reasons)
    no = assess_maximality(ramp(hr_end=112.0), age_y=61, beta_blocker=False)
    assert no.hr_criterion_applies is True and no.hr_max_beta_blocker_bpm is None


def test_brawner_at_61_years():
    from analysis.reference.heart_rate import brawner_hr_max_bpm

    # Brawner et al. 2004, from memory: 164 - 0.72 x 61 = 120.1, about 120 beats/min
    assert brawner_hr_max_bpm(age_y=61) == pytest.approx(120.0, abs=0.5)
    assert brawner_hr_max_bpm(age_y=40) == pytest.approx(164 - 28.8)
    with pytest.raises(InvalidParameter, match="age_y"):
        brawner_hr_max_bpm(age_y=200)
