"""Readings the methods contradict: VE steepening against VCO2 alone is no VT2; a lone VT1 that
another method contradicts, or a VT1 on the rise at VT2, is not determinable (synthetic ramps,
tests/.../synthetic.py, and one simulated short ramp)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from analysis.breaths import DEFAULT_AVERAGING, average_breaths
from analysis.thresholds import detect_thresholds
from analysis.thresholds.detect import (
    CONTRADICTION_WINDOWS,
    EQUIVALENTS,
    PETO2_NADIR,
    VE_VCO2_BREAK,
    VSLOPE,
    _contradicted,
)
from analysis.thresholds.results import ThresholdPick
from tests.analysis.thresholds.synthetic import ramp_test


def _without_petco2_fall(**kwargs):
    """A ramp whose VE steepens against VCO2 at ``vt2_vo2`` while PETCO2 stays level (the
    end-tidal columns of the same ramp without a compensation point)."""
    b = ramp_test(**kwargs)
    ref = ramp_test(**{**kwargs, "vt2_vo2": None})
    b["petco2_mmhg"] = ref["petco2_mmhg"]
    b["peto2_mmhg"] = ref["peto2_mmhg"]
    return b


@pytest.mark.parametrize(("vt2", "factor"), [(2900.0, 1.3), (2800.0, 1.25), (2700.0, 1.2)])
def test_ve_steepening_alone_is_not_taken_for_vt2(vt2, factor):
    # noise-free: the breakpoint is found where it was planted, VE/VCO2 rises < 1 unit (its
    # minimum size) and PETCO2 does not fall, so no VT2 is reported, and the reason says why
    r = detect_thresholds(average_breaths(_without_petco2_fall(noise=0.0, vt2_vo2=vt2, rc_factor=factor), DEFAULT_AVERAGING))
    assert r.vt2_candidates[VE_VCO2_BREAK].vo2_ml_min == pytest.approx(vt2, abs=40.0)
    assert r.vt2 is None
    assert any("not taken as respiratory compensation" in x for x in r.reasons)
    assert r.vt1.vo2_ml_min == pytest.approx(1700.0, abs=60.0)


def test_the_same_steepening_with_petco2_falling_is_vt2():
    r = detect_thresholds(average_breaths(ramp_test(noise=0.0, vt2_vo2=2800.0, rc_factor=1.25), DEFAULT_AVERAGING))
    assert r.vt2 is not None
    assert r.vt2.vo2_ml_min == pytest.approx(2800.0, abs=60.0)


def _pick(method: str, vo2: float, t_s: float) -> ThresholdPick:
    return ThresholdPick("vt1", t_s, vo2, method, "auto", "moderate", "", 0, ci90_vo2_ml_min=(vo2 - 100, vo2 + 100))


def test_a_lone_vt1_contradicted_by_another_method_is_set_aside():
    lone = ThresholdPick("vt1", 500.0, 1500.0, "consensus", "auto", "low", "found by one method only", 3)
    assert CONTRADICTION_WINDOWS == 1.5
    window = CONTRADICTION_WINDOWS * 100.0  # agreement window 100 mL/min -> 150 mL/min
    cands = {VSLOPE: _pick(VSLOPE, 1500.0, 500.0), PETO2_NADIR: _pick(PETO2_NADIR, 1750.0, 560.0), EQUIVALENTS: None}
    used, aside = _contradicted(lone, cands, 200.0, window)
    assert used is None and aside is not None and not aside.determinable
    assert aside.vo2_ml_min == 1500.0
    assert "contradicted by another method (PETO2 nadir 1750 mL/min)" in aside.reason
    # a pick within 1.5 windows (149 mL/min away) does not contradict it
    cands[PETO2_NADIR] = _pick(PETO2_NADIR, 1649.0, 560.0)
    assert _contradicted(lone, cands, 200.0, window) == (lone, None)
    # nor does one inside the on-transient (before 200 s)
    cands[PETO2_NADIR] = _pick(PETO2_NADIR, 1000.0, 150.0)
    assert _contradicted(lone, cands, 200.0, window) == (lone, None)


def test_vt1_on_the_rise_at_vt2_is_not_determinable():
    # a short steep ramp at noise 2 (planted VT1 1644, VT2 2160 mL/min): V-slope and excess CO2
    # read 2272 / 2234 mL/min at 600 s, 5 s before the VT2 reading (PETCO2 fall, 2276 at 605 s);
    # read again below VT2 no method finds a break, so VT1 is not reported
    import warnings

    from analysis.pipeline import analyze_session
    from analysis.simulation import simulate_case

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = analyze_session(simulate_case("short_ramp", 7, noise=2.0)).thresholds
    assert r.vt1 is None
    u = r.vt1_undetermined
    assert u is not None and not u.determinable
    # their weighted mean, excess CO2 beside V-slope at 0.4 of its weight (2255 at full weight)
    assert u.vo2_ml_min == pytest.approx(2263.0, abs=5.0)
    assert "on the rise that VT2 marks" in u.reason and "no method found a break" in u.reason
    assert r.vt2 is not None and r.vt2.vo2_ml_min == pytest.approx(2276.0, abs=5.0)


def test_consensus_intervals_are_scaled_for_their_confidence():
    from analysis.thresholds.detect import CONFIDENCE_WIDTH, CONSENSUS, _calibrated

    # measured with the floors below on the 450 suite tests + 144 demo runs (docs/thresholds.md)
    assert CONFIDENCE_WIDTH == {
        "vt1": {"low": 2.0, "moderate": 0.85, "high": 0.45},
        "vt2": {"low": 2.0, "moderate": 1.0, "high": 0.55},
    }
    low = ThresholdPick("vt1", 500.0, 1500.0, CONSENSUS, "auto", "low", "", 3, ci90_vo2_ml_min=(1400.0, 1550.0), ci90_t_s=(480.0, 530.0))
    got = _calibrated(low)
    assert got.ci90_vo2_ml_min == pytest.approx((1300.0, 1600.0))  # each side x2 around 1500
    assert got.ci90_t_s == pytest.approx((460.0, 560.0))
    high = ThresholdPick("vt2", 800.0, 2600.0, CONSENSUS, "auto", "high", "", 9, ci90_vo2_ml_min=(2400.0, 2700.0), ci90_t_s=None)
    got = _calibrated(high)
    assert got.ci90_vo2_ml_min == pytest.approx((2490.0, 2655.0)) and got.ci90_t_s is None  # x0.55
    # a single method's own pick and a reviewer's pick keep theirs
    own = _pick(VSLOPE, 1500.0, 500.0)
    assert _calibrated(own) is own and _calibrated(None) is None


def test_consensus_intervals_reach_the_grid_of_bins_and_stages():
    from analysis.thresholds.detect import CONSENSUS, MIN_HALF_WIDTH_BINS, MIN_HALF_WIDTH_STAGES, _calibrated

    assert MIN_HALF_WIDTH_BINS == {"vt1": 1.5, "vt2": 0.0} and MIN_HALF_WIDTH_STAGES == 0.5
    tight = ThresholdPick("vt1", 800.0, 2600.0, CONSENSUS, "auto", "high", "", 9, ci90_vo2_ml_min=(2590.0, 2620.0), ci90_t_s=(795.0, 805.0))
    # 20 s fit bins on a ramp gaining 2 mL/min per s: at least 1.5 x 20 = 30 s, 60 mL/min each side
    got = _calibrated(tight, bin_s=20.0, stage_s=10.0, vo2_per_s=2.0)
    assert got.ci90_t_s == pytest.approx((770.0, 830.0))
    assert got.ci90_vo2_ml_min == pytest.approx((2540.0, 2660.0))
    # 2-minute stages: half a stage (60 s) each side, 120 mL/min
    got = _calibrated(tight, bin_s=20.0, stage_s=120.0, vo2_per_s=2.0)
    assert got.ci90_t_s == pytest.approx((740.0, 860.0))
    assert got.ci90_vo2_ml_min == pytest.approx((2480.0, 2720.0))
    # VT2 keeps the grid of the stages only (x0.55 gives 797.25-802.75 s; half a 10 s stage: 5 s)
    vt2 = replace(tight, kind="vt2")
    assert _calibrated(vt2, bin_s=20.0, stage_s=10.0, vo2_per_s=2.0).ci90_t_s == pytest.approx((795.0, 805.0))
    assert _calibrated(vt2, bin_s=20.0, stage_s=120.0, vo2_per_s=2.0).ci90_t_s == pytest.approx((740.0, 860.0))
    # a side already wider than the floor keeps its width (x0.45 of 200 = 90 s after the pick)
    wide = replace(tight, ci90_vo2_ml_min=None, ci90_t_s=(790.0, 1000.0))
    assert _calibrated(wide, bin_s=20.0, vo2_per_s=2.0).ci90_t_s == pytest.approx((770.0, 890.0))


def test_stage_length_from_the_load():
    import pandas as pd

    from analysis.thresholds.detect import _stage_s

    t = np.arange(0.0, 600.0, 10.0)
    labels = np.full(t.size, "exercise")
    ramp = pd.DataFrame({"t_s": t, "work_w": 50 + t / 6})
    assert _stage_s(ramp, labels) == pytest.approx(10.0)
    steps = pd.DataFrame({"t_s": t, "work_w": 50 + 25 * np.floor(t / 120)})
    assert _stage_s(steps, labels) == pytest.approx(120.0)
    assert _stage_s(pd.DataFrame({"t_s": t}), labels) == 0.0


def test_a_vt2_just_above_vt1_is_not_determinable():
    from analysis.thresholds.detect import CONSENSUS, MIN_VT_GAP_FRACTION, _too_close

    assert MIN_VT_GAP_FRACTION == 0.14
    vt1 = ThresholdPick("vt1", 500.0, 1000.0, CONSENSUS, "auto", "high", "", 3)
    close = ThresholdPick("vt2", 600.0, 1130.0, CONSENSUS, "auto", "moderate", "", 5)
    # 130 mL/min above VT1 in a test whose VO2 spans 1000 mL/min: 13 % < 14 %
    kept, aside = _too_close(vt1, close, 1000.0)
    assert kept is None and aside is not None and not aside.determinable
    assert aside.vo2_ml_min == 1130.0
    assert "only 130 mL/min above VT1 (1000 mL/min), 13 % of the test's VO2 range" in aside.reason
    assert "isocapnic buffering" in aside.reason
    far = replace(close, vo2_ml_min=1150.0)  # 15 %
    assert _too_close(vt1, far, 1000.0) == (far, None)


def test_vslope_lines_hold_seven_points_each():
    from analysis.thresholds.detect import VSLOPE_MIN_SEGMENT

    assert VSLOPE_MIN_SEGMENT == 7
    avg = average_breaths(ramp_test(seed=3, noise=2.0), DEFAULT_AVERAGING).reset_index(drop=True)
    fit = detect_thresholds(avg).vslope
    assert fit is not None and fit.valid
    assert fit.n_below >= 7 and fit.n_above >= 7


def test_excess_co2_beside_vslope_counts_less():
    from analysis.thresholds.detect import (
        EXCESS_CO2,
        PETO2_NADIR,
        RELIABILITY,
        SAME_SIGNALS_SHARE,
        _consensus,
        _Ex,
    )

    assert SAME_SIGNALS_SHARE == 0.4
    t = np.arange(0.0, 600.0, 20.0)
    vo2 = 500.0 + 5.0 * t  # a VO2 range of 2950 mL/min: picks within 295 mL/min agree
    ex = _Ex(np.arange(t.size), t, vo2, 0.9 * vo2, vo2 / 40.0, {})
    picks = {VSLOPE: _pick(VSLOPE, 1500.0, 200.0), EXCESS_CO2: _pick(EXCESS_CO2, 1600.0, 220.0)}
    got, _ = _consensus("vt1", picks, ex)
    # same signals: 0.76 x 1500 + 0.4 x 0.60 x 1600, over 0.76 + 0.24 (not 1544 mL/min)
    w_vs, w_ex = RELIABILITY[VSLOPE], SAME_SIGNALS_SHARE * RELIABILITY[EXCESS_CO2]
    assert got.vo2_ml_min == pytest.approx((w_vs * 1500.0 + w_ex * 1600.0) / (w_vs + w_ex))
    assert got.vo2_ml_min == pytest.approx(1524.0)
    assert got.confidence == "moderate"
    # beside another method it keeps its full weight
    picks = {PETO2_NADIR: _pick(PETO2_NADIR, 1500.0, 200.0), EXCESS_CO2: _pick(EXCESS_CO2, 1600.0, 220.0)}
    got, _ = _consensus("vt1", picks, ex)
    w_p = RELIABILITY[PETO2_NADIR]
    assert got.vo2_ml_min == pytest.approx((w_p * 1500.0 + RELIABILITY[EXCESS_CO2] * 1600.0) / (w_p + RELIABILITY[EXCESS_CO2]))
