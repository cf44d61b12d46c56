"""Threshold notes and reasons in plain words: what was looked for and why it was not accepted.

The series are hand-built (a level stretch, then a straight rise of a chosen size), so the size
each message must quote is known exactly. The acceptance sizes quoted (1 for VE/VO2 and
VE/VCO2, 1.5 mmHg for PETCO2, 3.5 standard errors) are Tidemark's own rules (``MIN_RISE``,
``TURN_MIN_T`` in analysis/thresholds/detect.py), not published values.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

from analysis.breaths import DEFAULT_AVERAGING, average_breaths
from analysis.thresholds import detect_thresholds
from analysis.thresholds import detect as D
from analysis.thresholds.segments import best_turn_up
from tests.analysis.thresholds.synthetic import ramp_test

#: A code word (snake_case identifier) or a module path: never in text a lab user reads.
CODE_WORD = re.compile(r"\b[a-z][a-z0-9]*_[a-z0-9_]+\b|\b(?:analysis|dashboard|store|tidemark)\.[a-z_]")

T = np.arange(0.0, 1201.0, 20.0)  # 61 averaged points, 20 s apart (the fit bin width)


def _ex() -> D._Ex:
    """Rows for _turn: only the time axis is read for a turn in a given series."""
    n = T.size
    ones = np.ones(n)
    return D._Ex(np.arange(n), T, 1000.0 * ones, 900.0 * ones, 30.0 * ones, {})


def _level_then_rise(level: float, rise: float, t_break_s: float = 600.0) -> np.ndarray:
    return level + np.where(T > t_break_s, (T - t_break_s) / (T[-1] - t_break_s) * rise, 0.0)


def test_small_rise_says_how_much_and_how_much_was_needed():
    # VE/VCO2 level at 28, then up by 0.5 to the end: half the 1.0 needed.
    reasons: list[str] = []
    y = _level_then_rise(28.0, 0.5)
    pick = D._turn("vt2", D.VE_VCO2_RISE, _ex(), y, "ve_vco2", "VE/VCO2", reasons)
    assert pick is None
    assert reasons == [
        "VE/VCO2 nadir-rise: VE/VCO2 rose by only 0.50 after its lowest point at 600 s (at least 1.00 needed)"
    ]


def test_falling_series_is_worded_as_a_fall():
    # PETCO2 level at 40 mmHg, then down by 1.0 mmHg (1.5 mmHg needed); _turn sees -PETCO2.
    reasons: list[str] = []
    y = -_level_then_rise(40.0, -1.0)
    assert D._turn("vt2", D.PETCO2_FALL, _ex(), y, "petco2_mmhg", "PETCO2", reasons, falling=True) is None
    assert reasons == [
        "PETCO2 fall: PETCO2 fell by only 1.0 mmHg after its highest point at 600 s (at least 1.5 mmHg needed)"
    ]


def test_noisy_rise_names_the_standard_errors_in_words():
    # A rise big enough (3.0) but buried in noise (seed 2: fitted rise 3.2, slope 2.2 standard
    # errors): only the noise part is quoted, with the fit's own slope-to-error ratio.
    rng = np.random.default_rng(2)
    y = _level_then_rise(25.0, 3.0) + 2.5 * rng.standard_normal(T.size)
    fit = best_turn_up(T, y, min_segment=4)
    assert fit is not None and fit.t_stat_after < D.TURN_MIN_T and fit.rise >= 1.0
    reasons: list[str] = []
    assert D._turn("vt1", D.EQUIVALENTS, _ex(), y, "ve_vo2", "VE/VO2", reasons) is None
    (reason,) = reasons
    assert reason.startswith(f"{D.EQUIVALENTS}: ")
    assert f"the rise after {fit.t_break:.0f} s is not clear of the noise" in reason
    assert f"its slope is {fit.t_stat_after:.1f} standard errors; at least 3.5 needed" in reason
    assert "rose by only" not in reason and "needs" not in reason


def test_accepted_turn_note_says_where_and_by_how_much():
    reasons: list[str] = []
    pick = D._turn("vt1", D.EQUIVALENTS, _ex(), _level_then_rise(22.0, 3.0), "ve_vo2", "VE/VO2", reasons)
    assert reasons == []
    assert pick is not None and pick.t_s == pytest.approx(600.0, abs=20.0)
    assert pick.note == f"VE/VO2 turns upward at {pick.t_s:.0f} s (rises 3.00 by the end)"


def test_too_few_points_says_how_many():
    reasons: list[str] = []
    y = np.full(T.size, np.nan)
    y[:5] = 30.0
    assert D._turn("vt1", D.PETO2_NADIR, _ex(), y, "peto2_mmhg", "PETO2", reasons) is None
    assert reasons == ["PETO2 nadir: only 5 averaged exercise points have PETO2 (at least 12 needed)"]


def test_flat_test_reasons_are_plain_words():
    # No threshold at all: every reason and agreement is readable text without code words.
    rng = np.random.default_rng(0)
    avg = pd.DataFrame(
        {
            "t_s": np.arange(0.0, 900.0, 10.0),
            "vo2_ml_min": 1500 + 20 * rng.standard_normal(90),
            "vco2_ml_min": 1300 + 20 * rng.standard_normal(90),
            "ve_l_min": 40 + 0.5 * rng.standard_normal(90),
        }
    )
    r = detect_thresholds(avg)
    # no end-tidal columns: three VT1 methods and two VT2 methods are tried
    assert r.agreement == {"vt1": "none of the 3 methods found a VT1", "vt2": "none of the 2 methods found a VT2"}
    texts = [*r.reasons, *r.agreement.values()]
    assert all(not CODE_WORD.search(s) for s in texts), texts
    assert not any("needs" in s or "->" in s for s in texts)


@pytest.mark.parametrize("seed", range(3))
def test_ramp_notes_are_plain_words(seed):
    # Planted VT1/VT2 (synthetic ramp, noise 1.0): notes of every pick and candidate.
    r = detect_thresholds(average_breaths(ramp_test(seed=seed, noise=1.0), DEFAULT_AVERAGING))
    picks = [p for p in (r.vt1, r.vt2, *r.vt1_candidates.values(), *r.vt2_candidates.values()) if p is not None]
    texts = [p.note for p in picks] + list(r.reasons) + list(r.agreement.values())
    assert all(not CODE_WORD.search(s) for s in texts), texts
    vs = r.vt1_candidates[D.VSLOPE]
    if vs is not None:  # the V-slope note reads as a sentence with both slopes
        assert vs.note.startswith("VCO2 against VO2 steepens from a slope of ")


def test_reviewer_note_says_who_where_and_why(avg, report):
    # a reviewer's VT1 at 450 s on the fixture ramp; the note names the nearest averaged point
    from analysis.thresholds import override_threshold

    new = override_threshold(report, avg, kind="vt1", t_s=450.0, reason="clear PETO2 nadir")
    row = avg.iloc[new.vt1.index]
    assert new.vt1.note == (
        f"set by the reviewer at 450 s (nearest averaged point: {row['t_s']:.0f} s, "
        f"VO2 {row['vo2_ml_min']:.0f} mL/min): clear PETO2 nadir"
    )
    assert not CODE_WORD.search(new.vt1.note)
