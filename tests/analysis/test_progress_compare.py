"""Two tests of one person: comparability warnings, values at the same load or time, and the
typical errors of each population (figures recalled are marked "from memory" beside them)."""

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest

from analysis.errors import InvalidParameter
from analysis.progress import TYPICAL_ERRORS, TestRecord, progress_table
from analysis.progress_compare import (
    ISO_TYPICAL_ERRORS,
    TYPICAL_ERRORS_BY_POPULATION,
    ProtocolFacts,
    comparability_warnings,
    iso_comparison,
    protocol_facts,
    suggested_population,
)
from tests.support import result_with


def _results(mode="cycle", protocol="ramp", rate=10.0, steps=False):
    load = "work_w" if mode == "cycle" else "speed_kmh"
    return ProtocolFacts(mode, protocol, None if steps else rate, None if steps else load, steps)


def test_same_protocol_gives_no_warning():
    assert comparability_warnings(_results(rate=10.0), _results(rate=10.5)) == ()  # 5 % apart: within 10 %


def test_ramp_rates_more_than_ten_percent_apart_are_named():
    (w,) = comparability_warnings(_results(rate=10.0), _results(rate=12.0), a_label="baseline", b_label="week 12")
    assert w.startswith("Ramp rates differ: 10 W/min in baseline, 12 W/min in week 12")
    assert "Buchfuhrer" in w


def test_mode_and_protocol_text_differences():
    out = comparability_warnings(_results("cycle", "ramp 20"), _results("treadmill", "Bruce"), a_label="A", b_label="B")
    assert out[0].startswith("Different modes: A on a cycle, B on a treadmill")
    assert out[1] == "Different protocols recorded: 'ramp 20' (A) and 'Bruce' (B)."
    assert len(out) == 2  # ramp rates of different modes are not compared


def test_ramp_against_steps():
    (w,) = comparability_warnings(_results(protocol="x"), _results(protocol="x", steps=True), a_label="A", b_label="B")
    assert w.startswith("Different protocols: A is a ramp, B rises in steps")


def _cycle(t_end_s, ramp_w_min, hr_offset, *, ve_factor=1.0):
    t = np.arange(0.0, t_end_s + 1, 10.0)
    work = 20.0 + ramp_w_min * t / 60.0
    return pd.DataFrame({
        "t_s": 180.0 + t, "phase": "exercise", "work_w": work,
        "hr_bpm": 70.0 + hr_offset + 0.5 * work, "vo2_ml_min": 500.0 + 10.0 * work,
        "vco2_ml_min": 450.0 + 11.0 * work, "ve_l_min": ve_factor * (15.0 + 0.25 * work),
    })


def test_iso_work_rate_values_at_the_highest_common_load():
    # baseline reaches 20 + 20 x 10 = 220 W; follow-up 20 + 25 x 10 = 270 W: compared at 220 W
    base, follow = _cycle(600, 20.0, 0.0), _cycle(600, 25.0, -8.0, ve_factor=0.9)
    iso = iso_comparison(base, follow, population="healthy")
    assert iso.basis == "work_rate" and iso.level == pytest.approx(220.0) and iso.level_unit == "W"
    v = {x.column: x for x in iso.values}
    assert v["hr_bpm"].value_a == pytest.approx(70 + 110.0) and v["hr_bpm"].value_b == pytest.approx(62 + 110.0)
    assert v["hr_bpm"].change == pytest.approx(-8.0)
    # band: 1.96 x sqrt(2) x 2 % x 180 = 9.98 beats/min (Hopkins 2000, from memory): -8 is within it
    assert v["hr_bpm"].beyond_typical_error is False
    assert v["vo2_ml_min"].change == pytest.approx(0.0, abs=1e-9)
    assert v["ve_l_min"].value_a == pytest.approx(15 + 55.0) and v["ve_l_min"].change_pct == pytest.approx(-10.0)
    assert v["ve_l_min"].beyond_typical_error is False  # 10 % < 1.96 x sqrt(2) x 6 % = 16.6 %
    assert v["rer"].value_a == pytest.approx((450 + 2420) / (500 + 2200))
    # with patients' larger typical errors the same HR change is further inside the band
    pat = {x.column: x for x in iso_comparison(base, follow, population="patients").values}
    assert pat["hr_bpm"].typical_error_pct == 4.0 and "from memory" in pat["hr_bpm"].source
    # a larger HR fall is beyond the healthy band (12 > 9.98)
    big = {x.column: x for x in iso_comparison(base, _cycle(600, 25.0, -12.0)).values}
    assert big["hr_bpm"].beyond_typical_error is True


def test_isotime_without_work_rate_in_both():
    base = _cycle(600, 20.0, 0.0).drop(columns="work_w")
    follow = _cycle(480, 20.0, -5.0)
    iso = iso_comparison(base, follow)
    assert iso.basis == "time" and iso.level == pytest.approx(480.0)
    hr = next(x for x in iso.values if x.column == "hr_bpm")
    assert hr.value_a == pytest.approx(70 + 0.5 * (20 + 20 * 8)) and hr.change == pytest.approx(-5.0)


def test_population_typical_errors_carry_their_sources():
    for population, errors in TYPICAL_ERRORS_BY_POPULATION.items():
        assert set(errors) == set(TYPICAL_ERRORS), population
        for te in errors.values():
            assert "from memory" in te.provenance
    for population, errors in ISO_TYPICAL_ERRORS.items():
        for te in errors.values():
            assert "from memory" in te.provenance, population
    # patients' typical errors are larger, so a change must be larger to leave the band
    assert all(TYPICAL_ERRORS_BY_POPULATION["patients"][k].pct > TYPICAL_ERRORS[k].pct for k in TYPICAL_ERRORS)
    records = [TestRecord(1, "2026-01-01", result_with(vo2_peak_ml_min=1000.0)), TestRecord(2, "2026-03-01", result_with(vo2_peak_ml_min=1140.0))]
    healthy = progress_table(records, metrics=["vo2_peak_ml_min"])
    patients = progress_table(records, metrics=["vo2_peak_ml_min"], typical_errors=TYPICAL_ERRORS_BY_POPULATION["patients"])
    # +14 %: beyond 1.96 x sqrt(2) x 4 % = 11.1 % (healthy), within 1.96 x sqrt(2) x 6 % = 16.6 % (patients)
    assert bool(healthy.iloc[1]["beyond_typical_error"]) is True
    assert bool(patients.iloc[1]["beyond_typical_error"]) is False
    assert patients.iloc[1]["band_high"] == pytest.approx(1000 * (1 + 1.96 * math.sqrt(2) * 0.06))


def test_suggested_population_and_refusals():
    assert suggested_population([[], ["vo2peak_low"]]) == ("patients", "a test carries the flag(s) vo2peak_low")
    assert suggested_population([["desaturation"]])[0] == "healthy"
    with pytest.raises(InvalidParameter, match="population"):
        iso_comparison(_cycle(300, 20, 0), _cycle(300, 20, 0), population="elderly")
    assert iso_comparison(_cycle(300, 20, 0).iloc[0:0], _cycle(300, 20, 0)) is None


def test_protocol_facts_of_simulated_tests():
    from analysis.pipeline import analyze_session
    from analysis.simulation import simulate_case

    ramp = protocol_facts(analyze_session(simulate_case("recreational", 0, noise=0.0, clean=True), with_oxygen=False))
    assert ramp.mode == "cycle" and ramp.load == "work_w" and not ramp.steps
    assert ramp.ramp_rate_per_min == pytest.approx(21.9, rel=0.02)  # the simulated protocol's ramp (analysis.simulation)
    steps = protocol_facts(analyze_session(simulate_case("cycle_steps", 0, noise=0.5), with_oxygen=False))
    assert steps.steps and steps.ramp_rate_per_min is None
    (w,) = comparability_warnings(ramp, dataclasses.replace(steps, protocol=None), a_label="A", b_label="B")
    assert w.startswith("Different protocols: A is a ramp, B rises in steps")
