"""Each number from its best estimate: one threshold value everywhere, maximality by RER, the
ventilatory class beside its slope, 30-s windows inside exercise."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from analysis.indices.windows import window_means
from analysis.io import read_session
from analysis.pipeline import analyze_session
from analysis.reference import ventilatory_class
from analysis.settings import AnalysisSettings, ThresholdOverride

ROOT = Path(__file__).resolve().parents[3]
DEMOS = sorted((ROOT / "demo_sessions").glob("*.session.csv"))


def _vo2_values_under(node, kind, out, *, inside=False):
    """Every ``vo2_ml_min`` reachable under a ``kind`` key (or an oxygen state named ``kind``)."""
    if isinstance(node, dict):
        here = inside or node.get("name") == kind
        for key, value in node.items():
            if key == "vo2_ml_min" and here and isinstance(value, (int, float)):
                out.append(value)
            _vo2_values_under(value, kind, out, inside=here or key == kind)
    elif isinstance(node, list):
        for value in node:
            _vo2_values_under(value, kind, out, inside=inside)
    return out


@pytest.fixture(scope="module", params=[p.name for p in DEMOS])
def demo_json(request) -> dict:
    # through the command line, as a user reads it
    out = subprocess.run(
        [sys.executable, "-m", "tidemark", "analyze", str(ROOT / "demo_sessions" / request.param), "--json"],
        capture_output=True, text=True, check=True, cwd=ROOT,
    )
    return json.loads(out.stdout)


def test_one_vo2_per_threshold_in_analyze_json(demo_json):
    for kind in ("vt1", "vt2"):
        values = _vo2_values_under(demo_json, kind, [])
        if demo_json[kind] is None:
            assert demo_json["thresholds"][kind] is None
            continue
        assert len(values) >= 2  # the result's vt1 and the threshold report's vt1 at least
        assert len(set(values)) == 1, (kind, values)
    zones = demo_json["zones"]["zones"]
    if demo_json["vt1"] is not None and zones:
        assert zones[0]["vo2_high_ml_min"] == demo_json["vt1"]["vo2_ml_min"] == zones[1]["vo2_low_ml_min"]


def test_the_clinical_demos_are_not_called_submaximal(demo_json):
    name = demo_json["subject"]["source_name"]
    verdict = demo_json["maximality"]["verdict"]
    if "submax" in name:
        # the screening test stopped before RER 1.10 (simulator note)
        assert verdict == "vo2peak_submaximal" and demo_json["rer_peak"] < 1.10
    else:
        assert demo_json["rer_peak"] >= 1.10 and verdict != "vo2peak_submaximal"
    if "rehab-baseline" in name:
        m = demo_json["maximality"]
        assert demo_json["subject"]["beta_blocker"] is True
        assert m["hr_criterion_applies"] is False and m["hr_criterion_met"] is None
        # Brawner et al. 2004 (from memory): 164 - 0.72 x 61 ≈ 120 beats/min
        assert m["hr_max_beta_blocker_bpm"] == pytest.approx(120.08)
        assert any("does not apply" in r for r in m["reasons"])


def test_class_beside_the_slope_it_came_from(demo_json):
    cls = demo_json["classes"]
    assert cls["ventilatory_slope_span"] == "whole_exercise"
    assert cls["ventilatory_slope"] == demo_json["indices"]["ve_vco2_slope_whole_exercise"]
    assert cls["ventilatory"] == ventilatory_class(cls["ventilatory_slope"])


@pytest.mark.parametrize(
    ("slope", "expected"),
    # Arena et al. 2007 cut points: I ≤ 29.9, II 30.0-35.9, III 36.0-44.9, IV ≥ 45.0
    [(20.0, "I"), (29.9, "I"), (30.0, "II"), (35.9, "II"), (36.0, "III"), (44.9, "III"), (45.0, "IV"), (60.0, "IV")],
)
def test_arena_cut_points(slope, expected):
    assert ventilatory_class(slope) == expected


def test_windows_lie_inside_exercise():
    t = np.arange(5.0, 100.0, 10.0)  # 10-s bins centred at 5 ... 95 s
    v = np.arange(t.size, dtype=float)
    w = window_means(t, v, window_s=30.0, inside=True)
    # the first and last rows cannot centre a whole 30-s window; the others hold 3 rows each
    assert np.isnan(w[0]) and np.isnan(w[-1])
    np.testing.assert_allclose(w[1:-1], v[1:-1])


def test_nadir_and_o2_pulse_from_30s_windows():
    path = ROOT / "demo_sessions" / "SEL-0425_2026-01-21_cycle-ramp.session.csv"
    r = analyze_session(read_session(path.read_bytes(), file_name=path.name))
    ex = r.averaged[r.averaged["phase"] == "exercise"]
    t = ex["t_s"].to_numpy(float)
    ve = window_means(t, ex["ve_l_min"].to_numpy(float), window_s=30.0, inside=True)
    vco2 = window_means(t, ex["vco2_ml_min"].to_numpy(float), window_s=30.0, inside=True)
    assert r.indices.ve_vco2_nadir == pytest.approx(np.nanmin(1000.0 * ve / vco2))
    # a single 10-s bin dips lower than any 30-s window
    assert np.nanmin(ex["ve_vco2"]) < r.indices.ve_vco2_nadir
    # O2 pulse at peak = VO2peak / peak HR (Wasserman et al., from memory)
    assert r.indices.o2_pulse_at_peak_ml_beat == pytest.approx(r.vo2_peak_ml_min / r.hr_peak_bpm)


def test_a_typed_time_that_snaps_says_so():
    path = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"
    session = read_session(path.read_bytes(), file_name=path.name)
    r = analyze_session(session, AnalysisSettings(vt1_override=ThresholdOverride(t_s=603.0, reason="check")))
    assert r.vt1 is not None and r.vt1.source == "manual" and r.vt1.t_s == 605.0
    assert r.vt1.notes == ("The typed time 603 s was placed at the nearest averaged point, 605 s "
                           f"(VO2 {r.vt1.vo2_ml_min:.0f} mL/min).",)
    on_a_row = analyze_session(session, AnalysisSettings(vt1_override=ThresholdOverride(t_s=605.0)))
    assert on_a_row.vt1 is not None and on_a_row.vt1.notes == ()
