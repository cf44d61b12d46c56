"""90 % intervals of thresholds: the profile rule, V-slope's interval, picks, "not determinable".

The profile rule (Hudson 1966; Lerman 1980, from memory) keeps every break position whose
error is within ``F(0.90; 1, n - p)`` residual variances of the best, times the inflation
measured on the simulator. Coverage on the simulator is measured in test_ground_truth.py and
docs/thresholds.md.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy import stats

from analysis.breaths import DEFAULT_AVERAGING, average_breaths
from analysis.records import to_json
from analysis.thresholds import detect_thresholds, vslope_fit
from analysis.thresholds import detect as D
from analysis.thresholds import uncertainty as U
from tests.analysis.thresholds.synthetic import ramp_test
from tests.analysis.thresholds.test_vslope import planted


class TestProfileAccept:
    def test_margin_is_the_f_quantile(self):
        # F(0.90; 1, 20) from scipy.stats (an independent implementation of the F quantile)
        crit = stats.f.ppf(0.90, 1, 20)
        sse_min = 10.0
        edge = sse_min * (1 + crit / 20)
        profile = np.array([edge * 1.001, edge * 0.999, sse_min, np.inf])
        keep = U.profile_accept(profile, n_points=24, n_params=4, inflation=1.0)
        assert keep.tolist() == [False, True, True, False]

    def test_inflation_widens(self):
        profile = np.array([30.0, 13.0, 11.0, 10.0, 11.0, 13.0, 30.0])
        narrow = U.profile_accept(profile, n_points=24, n_params=4, inflation=1.0)
        wide = U.profile_accept(profile, n_points=24, n_params=4, inflation=4.0)
        assert narrow.sum() < wide.sum()
        assert np.all(wide[narrow])

    def test_no_finite_profile_or_no_dof(self):
        assert U.profile_accept(np.array([np.inf, np.inf]), n_points=24, n_params=4) is None
        assert U.profile_accept(np.array([1.0, 2.0]), n_points=4, n_params=4) is None

    def test_hull(self):
        assert U.hull(np.array([3.0, np.nan, 1.0]), including=5.0) == (1.0, 5.0)
        assert U.hull(np.array([np.nan])) is None


class TestVSlopeInterval:
    def test_holds_the_planted_break_and_the_estimate(self):
        # Beaver 1986 two-line shape, break at 2000 mL/min, 40 mL/min noise
        for seed in range(5):
            vo2, vco2 = planted(80, noise_sd=40.0, seed=seed)
            fit = vslope_fit(vo2, vco2)
            lo, hi = fit.ci90_vo2_ml_min
            assert lo <= fit.vo2_break_ml_min <= hi
            assert lo <= 2000.0 <= hi
            assert hi - lo < 800.0

    def test_narrower_with_less_noise(self):
        widths = []
        for sd in (10.0, 40.0, 120.0):
            fit = vslope_fit(*planted(80, noise_sd=sd, seed=1))
            widths.append(fit.ci90_vo2_ml_min[1] - fit.ci90_vo2_ml_min[0])
        assert widths[0] < widths[1] < widths[2]

    def test_no_interval_when_the_fit_is_rejected(self):
        vo2 = np.linspace(800.0, 3000.0, 60)
        assert vslope_fit(vo2, 1.0 * vo2).ci90_vo2_ml_min is None


class TestPicks:
    def test_every_pick_has_an_interval_holding_it(self):
        r = detect_thresholds(average_breaths(ramp_test(seed=1, noise=0.5), DEFAULT_AVERAGING))
        picks = [r.vt1, r.vt2, *r.vt1_candidates.values(), *r.vt2_candidates.values()]
        for p in picks:
            if p is None:
                continue
            lo, hi = p.ci90_vo2_ml_min
            t_lo, t_hi = p.ci90_t_s
            assert lo <= p.vo2_ml_min <= hi, p.method
            assert t_lo <= p.t_s <= t_hi, p.method
            assert p.determinable and p.reason == ""

    def test_planted_thresholds_inside_the_intervals(self):
        # synthetic ramp: VT1 1700 and VT2 2600 mL/min planted; 5 seeds at noise 1
        for seed in range(5):
            r = detect_thresholds(average_breaths(ramp_test(seed=seed, noise=1.0), DEFAULT_AVERAGING))
            # seed 4: V-slope alone (1575) against a PETO2 nadir at 2429 mL/min: not determinable,
            # the pick and its interval kept aside
            vt1 = r.vt1 or r.vt1_undetermined
            assert (r.vt1 is None) == (seed == 4)
            assert vt1.ci90_vo2_ml_min[0] <= 1700.0 <= vt1.ci90_vo2_ml_min[1]
            # seed 0: VT2 read at 1917 mL/min, only 333 mL/min (13 % of the VO2 range) above VT1:
            # not determinable, its interval kept aside (it still holds the planted 2600)
            vt2 = r.vt2 or r.vt2_undetermined
            assert (r.vt2 is None) == (seed == 0)
            assert vt2.ci90_vo2_ml_min[0] <= 2600.0 <= vt2.ci90_vo2_ml_min[1]

    def test_too_wide_is_not_determinable_and_not_reported(self, monkeypatch):
        monkeypatch.setattr(D, "MAX_CI_FRACTION", 0.001)
        r = detect_thresholds(average_breaths(ramp_test(seed=1, noise=0.5), DEFAULT_AVERAGING))
        assert r.vt1 is None and r.vt1_auto is None
        u = r.vt1_undetermined
        assert u is not None and not u.determinable
        assert "90 % interval runs from" in u.reason and "no value is reported" in u.reason
        assert any(x.startswith("VT1 not determinable: ") for x in r.reasons)
        d = to_json(r)
        assert d["vt1"] is None and d["vt1_undetermined"]["determinable"] is False

    def test_interval_in_the_json(self):
        r = detect_thresholds(average_breaths(ramp_test(seed=1, noise=0.5), DEFAULT_AVERAGING))
        d = to_json(r)["vt1"]
        assert len(d["ci90_vo2_ml_min"]) == 2 and len(d["ci90_t_s"]) == 2
        assert d["determinable"] is True

    def test_manual_pick_has_no_interval(self):
        from analysis.thresholds import override_threshold

        avg = average_breaths(ramp_test(seed=1, noise=0.5), DEFAULT_AVERAGING)
        r = override_threshold(detect_thresholds(avg), avg, kind="vt1", t_s=600.0)
        assert r.vt1.source == "manual" and r.vt1.ci90_vo2_ml_min is None and r.vt1.determinable
        assert dataclasses.asdict(r.vt1)["ci90_t_s"] is None
