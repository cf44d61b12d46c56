"""Flags against the simulator's ground truth (analysis.simulation kinds; truth in truth_* metadata).

The issue's gates: a heart-failure test with sustained oscillation gets ``oscillatory_ventilation``;
a ventilation-limited lung test (SpO2 fall 4-9 points, MVV or FEV1 given) gets ``desaturation``
and ``breathing_reserve_low``; healthy athletes and recreational tests get none of these three
in at least 95 % of seeds. benchmarks/eval_thresholds.py --flags runs the larger suite (with
the foreign exports); the measured rates are in docs/interpretation.md.
"""

from __future__ import annotations

import pytest

from analysis.pipeline import analyze_session
from analysis.simulation import simulate_case

THREE = {"oscillatory_ventilation", "desaturation", "breathing_reserve_low"}
NOISE = (0.5, 1.0, 2.0)


def _codes(kind: str, seed: int, noise: float) -> set[str]:
    result = analyze_session(simulate_case(kind, seed, noise=noise), with_oxygen=False)
    return {f.code for f in result.flags}


@pytest.mark.slow
def test_hf_oscillation_gets_oscillatory_ventilation():
    hits = [("oscillatory_ventilation" in _codes("hf_oscillation", seed, noise)) for seed in range(8) for noise in NOISE]
    assert sum(hits) >= 0.9 * len(hits)  # measured 58/60 over 20 seeds (docs/interpretation.md)


@pytest.mark.slow
def test_lung_limited_gets_desaturation_and_low_breathing_reserve():
    for seed in range(8):
        for noise in NOISE:
            codes = _codes("lung_limited", seed, noise)
            assert {"desaturation", "breathing_reserve_low"} <= codes, (seed, noise, codes)


@pytest.mark.slow
@pytest.mark.parametrize("kind", ["athlete", "recreational"])
def test_healthy_tests_get_none_of_the_three_in_95_percent(kind):
    clean = [not (_codes(kind, seed, noise) & THREE) for seed in range(20) for noise in NOISE]
    assert sum(clean) >= 0.95 * len(clean), f"{kind}: {len(clean) - sum(clean)} of {len(clean)} flagged"


def test_flags_reach_the_json_and_read_back():
    from analysis.records import to_json
    from analysis.results import results_from_json

    result = analyze_session(simulate_case("lung_limited", 0, noise=1.0), with_oxygen=False)
    data = to_json(result)
    assert {f["code"] for f in data["flags"]} >= {"desaturation", "breathing_reserve_low"}
    for f in data["flags"]:
        assert set(f) >= {"code", "severity", "text", "value", "limit", "source", "sport_relevant"}
    back = results_from_json(data)
    assert back.interpretation == result.interpretation
    assert data["interpretation"]["patterns"]["caution"].startswith("Patterns are read from the flags")
