"""Maximality reasons read true at their limits: numbers never rounded onto the limit they miss,
and a VO2 rise too large for a plateau is not called "still rising" when it is below 150 mL/min.

Ramps from test_maximality.ramp: 25 W/min at 10 mL/min per W (ATS/ACCP 2003, common practice),
so the earlier ramp predicts about 250 mL/min of VO2 rise per minute. Limits: RER 1.10 and HR 90 %
of 208 - 0.7 x age (Tanaka et al. 2001; common practice as secondary criteria).
"""

import pytest

from analysis.maximality import assess_maximality, plateau_test
from tests.analysis.pipeline.test_maximality import ramp


def test_rer_just_below_the_limit_is_not_shown_as_the_limit():
    df = ramp()
    df["vco2_ml_min"] = df["vo2_ml_min"] * 1.097  # constant RER 1.097
    rep = assess_maximality(df, age_y=30)
    assert rep.rer_criterion_met is False
    assert "Peak RER 1.097 is below 1.10, the RER criterion of maximal effort." in rep.reasons
    assert rep.verdict == "vo2peak_submaximal"


def test_hr_just_below_the_limit_is_not_shown_as_the_limit():
    # predicted 208 - 0.7 x 30 = 187 (Tanaka 2001); 89.7 % of it is 167.7 beats/min
    rep = assess_maximality(ramp(hr_end=0.897 * 187.0), age_y=30)
    assert rep.hr_criterion_met is False and rep.hr_pct_predicted == pytest.approx(89.7)
    assert any(r.startswith("Peak HR 168 beats/min is 89.7 % of predicted 187 (< 90 %); information only") for r in rep.reasons)


def test_rer_well_below_keeps_two_decimals():
    rep = assess_maximality(ramp(rer_end=1.02, hr_end=150.0), age_y=30)
    assert any("Peak RER 1.02 is below 1.10" in r for r in rep.reasons)


def test_rise_below_150_but_not_below_half_the_ramp_is_explained():
    # VO2 rises at 55 % of the ramp's pace over the last 2 min: 137.5 mL/min in the last minute,
    # below 150 but more than half the ~249 mL/min the earlier ramp predicts.
    p = plateau_test(ramp(plateau_s=120, late_fraction=0.55))
    assert p.plateau is False and p.vo2_rise_ml_min == pytest.approx(137.5)
    assert p.note == (
        f"VO2 rose 138 mL/min over the last minute, not clearly less than the {p.expected_rise_ml_min:.0f} mL/min "
        "the earlier ramp predicts for that minute (a plateau needs under half of it, beyond the "
        "breath-to-breath noise): no plateau."
    )
    assert "still rising" not in p.note


def test_rise_above_150_is_still_rising():
    p = plateau_test(ramp())
    assert p.plateau is False and p.vo2_rise_ml_min == pytest.approx(250.0)
    assert p.note.startswith("VO2 was still rising at the end (250 mL/min over the last minute; a plateau needs")
