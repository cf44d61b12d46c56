"""detect_thresholds on small synthetic ramps with planted thresholds (tests/.../synthetic.py)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis.breaths import DEFAULT_AVERAGING, AveragingSpec, average_breaths
from analysis.errors import InvalidParameter
from analysis.thresholds import CONSENSUS, VT1_METHODS, VT2_METHODS, detect_thresholds
from tests.analysis.thresholds.synthetic import ramp_test


def report_for(**kwargs):
    return detect_thresholds(average_breaths(ramp_test(**kwargs), DEFAULT_AVERAGING))


def test_noise_free_all_methods_agree():
    # Planted VT1 1700 and VT2 2600 mL/min in the synthetic ramp (two-line relations).
    r = report_for(noise=0.0)
    assert r.vt1.method == CONSENSUS and r.vt1.source == "auto"
    assert r.vt1.vo2_ml_min == pytest.approx(1700.0, abs=60.0)
    assert r.vt2.vo2_ml_min == pytest.approx(2600.0, abs=60.0)
    assert r.vt1.confidence == "high" and r.vt2.confidence == "high"
    assert set(r.vt1_candidates) == set(VT1_METHODS)
    assert set(r.vt2_candidates) == set(VT2_METHODS)
    assert all(p is not None for p in r.vt1_candidates.values())
    assert r.agreement["vt1"].startswith("4 of 4 methods agree within")
    assert r.vslope is not None and r.vslope.valid
    # the V-slope chart's lines: lower slope 0.95 and upper 1.35 were planted
    assert r.vslope.slope_below == pytest.approx(0.95, abs=0.05)
    assert r.vslope.slope_above == pytest.approx(1.35, abs=0.1)


@pytest.mark.parametrize("seed", range(5))
def test_low_noise_within_tolerance(seed):
    # noise 0.5 of this generator is 3 % per breath on VO2/VCO2 (independent): VT1 within
    # 200 mL/min and VT2 within 150 mL/min (measured worst 87 and 105 over 10 seeds).
    r = report_for(seed=seed, noise=0.5)
    assert abs(r.vt1.vo2_ml_min - 1700.0) <= 200.0
    assert abs(r.vt2.vo2_ml_min - 2600.0) <= 150.0
    assert r.vt1.vo2_ml_min < r.vt2.vo2_ml_min
    avg_t = r.vt1.t_s
    assert 0 <= r.vt1.index and np.isfinite(avg_t)


@pytest.mark.parametrize("seed", range(5))
def test_no_rcp_gives_no_vt2(seed):
    r = report_for(seed=seed, noise=0.5, vt2_vo2=None)
    assert r.vt2 is None
    assert any(s.startswith("VT2 not found") for s in r.reasons)
    assert abs(r.vt1.vo2_ml_min - 1700.0) <= 200.0


def test_without_end_tidal_columns_fewer_methods():
    b = ramp_test(noise=0.0).drop(columns=["peto2_mmhg", "petco2_mmhg"])
    r = detect_thresholds(average_breaths(b))
    assert "PETO2 nadir" not in r.vt1_candidates and "PETCO2 fall" not in r.vt2_candidates
    assert r.vt1.vo2_ml_min == pytest.approx(1700.0, abs=80.0)
    assert r.vt2.vo2_ml_min == pytest.approx(2600.0, abs=80.0)


def test_same_result_for_finer_averaging():
    # 5 s bins are merged into the same 20 s fit bins as 10 s bins
    b = ramp_test(noise=0.0)
    a = detect_thresholds(average_breaths(b, AveragingSpec("time_bin", 5)))
    c = detect_thresholds(average_breaths(b, AveragingSpec("time_bin", 10)))
    assert a.vt1.vo2_ml_min == pytest.approx(c.vt1.vo2_ml_min, abs=40.0)
    assert a.vt2.vo2_ml_min == pytest.approx(c.vt2.vo2_ml_min, abs=40.0)


def test_index_points_into_the_averaged_frame():
    avg = average_breaths(ramp_test(noise=0.0))
    r = detect_thresholds(avg)
    for p in (r.vt1, r.vt2, *r.vt1_candidates.values()):
        assert abs(avg["t_s"].iloc[p.index] - p.t_s) <= 15.0


def test_too_short_is_none_with_reason():
    avg = average_breaths(ramp_test(noise=0.0)).iloc[:8]
    r = detect_thresholds(avg)
    assert r.vt1 is None and r.vt2 is None
    assert "no threshold was sought" in r.reasons[0]


def test_flat_test_finds_nothing():
    t = np.arange(0.0, 900.0, 10.0)
    rng = np.random.default_rng(0)
    avg = pd.DataFrame(
        {
            "t_s": t,
            "vo2_ml_min": 1500 + 20 * rng.standard_normal(t.size),
            "vco2_ml_min": 1300 + 20 * rng.standard_normal(t.size),
            "ve_l_min": 40 + 0.5 * rng.standard_normal(t.size),
        }
    )
    r = detect_thresholds(avg)
    assert r.vt1 is None and r.vt2 is None
    assert any("VT1 not found" in s for s in r.reasons)


def test_phases_argument_and_validation():
    avg = average_breaths(ramp_test(noise=0.0))
    ph = avg["phase"].copy()
    r = detect_thresholds(avg.drop(columns="phase"), phases=ph)
    assert r.vt1.vo2_ml_min == pytest.approx(1700.0, abs=60.0)
    with pytest.raises(InvalidParameter, match="phases"):
        detect_thresholds(avg, phases=ph.iloc[:5])


def test_missing_column():
    avg = average_breaths(ramp_test(noise=0.0)).drop(columns="ve_l_min")
    with pytest.raises(InvalidParameter, match="ve_l_min"):
        detect_thresholds(avg)


def test_json_form_is_plain():
    from analysis.records import to_json

    r = report_for(noise=0.0)
    d = to_json(r)
    assert d["vt1"]["method"] == "consensus"
    assert set(d["vt1_candidates"]) == set(VT1_METHODS)
    assert isinstance(d["vslope"]["vo2_break_ml_min"], float)
