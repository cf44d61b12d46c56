"""Oscillatory ventilation on planted signals; ramp lag correction; patterns wording."""

from __future__ import annotations

import numpy as np
import pytest

from analysis.interpretation.lag import _TAU_GRID_S, _fit_every_tau, _lagged, lag_corrected_load, lag_correction
from analysis.interpretation.oscillation import EOV_AMPLITUDE_FRACTION, exercise_oscillation
from analysis.interpretation.patterns import PATTERN_CAUTION, PATTERN_STATEMENT, pattern_summary


def _ve(swing_fraction: float, *, covered_share: float = 1.0, period_s: float = 60.0, noise: float = 0.0):
    rng = np.random.default_rng(1)
    t = np.arange(0, 600, 2.0)
    trend = 20 + 0.06 * t
    # peak-to-trough swing = 2 x half swing
    osc = np.where(t < covered_share * 600, 0.5 * swing_fraction * np.sin(2 * np.pi * t / period_s), 0.0)
    return t, trend * (1 + osc) * (1 + noise * rng.standard_normal(t.size)), np.full(t.size, "exercise")


def test_planted_oscillation_period_and_amplitude():
    r = exercise_oscillation(*_ve(0.40, period_s=50.0))
    assert r.present
    assert r.period_s == pytest.approx(50.0, abs=2.0)
    # 15-s means damp a 50-s swing to sinc(15/50) = 0.86 of it (Leite/Corrà swing measured on smoothed VE)
    assert r.amplitude_pct == pytest.approx(40.0 * np.sinc(15 / 50), rel=0.1)
    assert len(r.series_t_s) == len(r.series_ve_l_min) == len(r.series_trend_l_min) > 100


def test_swing_below_15_percent_is_not_counted():
    # Leite et al. 2003 / Corrà et al. 2006 (from memory): swing >= 15 % of the mean
    assert not exercise_oscillation(*_ve(0.10)).present
    assert EOV_AMPLITUDE_FRACTION == 0.15


def test_oscillation_over_less_than_60_percent_of_exercise_is_not_present():
    # the same swing over 40 % of exercise: counted cycles, but not >= 60 % (from memory)
    short = exercise_oscillation(*_ve(0.40, covered_share=0.4))
    assert short.cycles >= 3 and not short.present and short.fraction_of_exercise < 0.6
    assert exercise_oscillation(*_ve(0.40, covered_share=0.8)).present


def test_plain_noise_is_not_oscillation():
    assert not exercise_oscillation(*_ve(0.0, noise=0.08)).present


def test_lag_corrected_load_whipp():
    # Whipp et al. 1981 (from memory): steady-state equivalent = WR - ramp rate x MRT
    assert lag_corrected_load(200.0, ramp_rate_per_min=30.0, mean_response_time_s=40.0) == pytest.approx(180.0)


def test_lag_correction_recovers_a_planted_response_time():
    import pandas as pd

    t = np.arange(0, 900, 10.0)
    phase = np.where(t < 180, "warmup", "exercise")
    work = np.where(t < 180, 20.0, 20 + 25.0 * (t - 180) / 60)  # 25 W/min ramp
    mrt = 45.0
    # first-order response to a ramp from steady state, closed form (Whipp et al. 1981, from memory):
    # x = W0 + r (t - t0) - r tau (1 - exp(-(t - t0) / tau)); 10 mL/min/W
    since = np.maximum(t - 180, 0.0)
    lagged_w = 20 + 25.0 / 60 * (since - mrt * (1 - np.exp(-since / mrt)))
    vo2 = 500.0 + 10.0 * lagged_w
    avg = pd.DataFrame({"t_s": t, "vo2_ml_min": vo2, "work_w": work})
    lag, notes = lag_correction(avg, phases_avg=phase, vt1_t_s=600.0, vt1_load=195.0, vt2_load=None, mode="cycle")
    assert notes == ()
    assert lag.mean_response_time_s == pytest.approx(45.0, abs=0.5)
    assert lag.ramp_rate_per_min == pytest.approx(25.0, rel=0.01)
    assert lag.vt1_corrected == pytest.approx(195.0 - 25.0 * 45.0 / 60.0, abs=0.3)  # 176.25 W
    # a 2-min warm-up not yet steady when the ramp starts: rest (no load recorded) until 60 s, then
    # VO2 rises from 300 towards 700 mL/min with the same tau (28 mL/min still missing at the ramp)
    unsteady = avg.assign(
        vo2_ml_min=np.where(t < 60, 300.0, vo2 - 400.0 * np.exp(-(t - 60.0) / mrt)), work_w=np.where(t < 60, np.nan, work)
    )
    lag2, _ = lag_correction(unsteady, phases_avg=phase, vt1_t_s=600.0, vt1_load=195.0, vt2_load=None, mode="cycle")
    assert lag2.mean_response_time_s == pytest.approx(45.0, abs=1.0)
    steps = avg.assign(work_w=np.where(t < 180, 20.0, 20 + 25.0 * ((t - 180) // 60)))
    none, why = lag_correction(steps, phases_avg=phase, vt1_t_s=600.0, vt1_load=195.0, vt2_load=None, mode="cycle")
    assert none is None and "not a ramp" in why[0]


def test_every_tau_fit_matches_numpy_lstsq_column_by_column():
    # reference: numpy.linalg.lstsq on each design [1, x_j, fade_j] (a general-purpose solver)
    rng = np.random.default_rng(7)
    t = np.arange(0.0, 500.0, 7.5)
    load = np.where(t < 90, 30.0, 30.0 + 0.4 * (t - 90))
    x = _lagged(t, load, _TAU_GRID_S)
    fade = np.exp(-(t[:, None] - t[0]) / _TAU_GRID_S[None, :])
    y = 500.0 + 9.0 * x[:, 70] + 120.0 * fade[:, 70] + 25.0 * rng.standard_normal(t.size)
    y[5] = np.nan
    keep = np.isfinite(y) & (np.arange(t.size) != 20)
    sse, gain, resid = _fit_every_tau(y, x, fade, keep=keep)
    for j in (0, 70, 200, _TAU_GRID_S.size - 1):
        design = np.column_stack([np.ones_like(t), x[:, j], fade[:, j]])
        coef, *_ = np.linalg.lstsq(design[keep], y[keep], rcond=None)
        assert gain[j] == pytest.approx(coef[1], rel=1e-9)
        assert sse[j] == pytest.approx(((y[keep] - design[keep] @ coef) ** 2).sum(), rel=1e-9)
        np.testing.assert_allclose(resid[keep, j], y[keep] - design[keep] @ coef, rtol=1e-9, atol=1e-9)
    assert np.isnan(resid[5]).all()
    # the planted tau (37 s) is found within the noise: best 39.5 s, gain 9.18 against 9
    assert _TAU_GRID_S[int(np.argmin(sse))] == pytest.approx(37.0, abs=5.0)
    assert gain[int(np.argmin(sse))] == pytest.approx(9.0, rel=0.05)


def test_patterns_are_worded_consistent_with_and_carry_the_caution():
    s = pattern_summary(["oscillatory_ventilation", "vo2peak_low"], effort_submaximal=False)
    assert [p.code for p in s.patterns] == ["cardiovascular_limitation"]
    assert s.patterns[0].text.startswith("Consistent with cardiovascular limitation")
    assert "diagnos" not in s.patterns[0].text.lower()
    assert "not a diagnosis" in s.caution and s.caution == PATTERN_CAUTION
    assert s.statement == PATTERN_STATEMENT
    assert "ATS/ACCP" in s.statement and "Balady" in s.statement and "EACPR/AHA" in s.statement
    assert [p.code for p in pattern_summary(["vo2peak_low"], effort_submaximal=False).patterns] == ["deconditioning"]
    assert [p.code for p in pattern_summary([], effort_submaximal=True).patterns] == ["submaximal_effort"]
    assert pattern_summary([], effort_submaximal=False).patterns == ()
