"""Reference checks of unit handling and cell reading."""

from __future__ import annotations

import math

import numpy as np
import pytest

from analysis.io._cells import detect_decimal, parse_numbers, parse_times
from analysis.io._units import factor, unit_code


def test_litre_to_millilitre():
    # 1 L = 1000 mL (SI; common practice for VO2 in L/min vs mL/min)
    assert factor("vo2_ml_min", "l_min") == 1000.0
    assert factor("ve_l_min", "ml_min") == 0.001
    assert factor("vt_l", "ml") == 0.001


def test_kpa_to_mmhg():
    # 1 mmHg = 133.322387415 Pa (SI definition of the conventional millimetre of mercury)
    assert factor("petco2_mmhg", "kpa") == pytest.approx(1000 / 133.322387415, rel=1e-12)
    assert factor("petco2_mmhg", "kpa") == pytest.approx(7.50062, abs=5e-6)  # handbook rounding of 1 kPa in mmHg
    assert 5.33 * factor("petco2_mmhg", "kpa") == pytest.approx(39.98, abs=0.01)


def test_speed_units():
    # 1 m/s = 3.6 km/h; 1 international mile = 1.609344 km (SI / 1959 agreement)
    assert factor("speed_kmh", "m_s") == pytest.approx(3.6)
    assert factor("speed_kmh", "mph") == pytest.approx(1.609344)


def test_time_units():
    # 1 min = 60 s; 1 h = 3600 s (SI)
    assert factor("t_s", "min") == 60.0
    t, missing, bad, fmt = parse_times(["0:00", "1:30", "10:00.5", "1:00:00", "-0:30", "2:75", "abc", ""], decimal=".")
    assert t[:5].tolist() == [0.0, 90.0, 600.5, 3600.0, -30.0]
    assert bad.tolist() == [False] * 5 + [True, True, False]
    assert missing.tolist() == [False] * 7 + [True]
    assert fmt == "mm:ss"
    t, _, bad, fmt = parse_times(["1:60:00", "0:59:59.9"], decimal=".")
    assert bad.tolist() == [True, False] and t[1] == pytest.approx(3599.9)
    t, _, bad, fmt = parse_times(["12", "30"], decimal=".", time_format="mm:ss")
    assert bad.all()


@pytest.mark.parametrize(
    ("text", "code"),
    [
        ("mL/min", "ml_min"),
        ("ml·min⁻¹", "ml_min"),
        ("L/min", "l_min"),
        ("(L/min, BTPS)", "l_min"),
        ("ml/kg/min", "per_kg"),
        ("bpm", "per_min"),
        ("1/min", "per_min"),
        ("W", "w"),
        ("km/h", "km_h"),
        ("%", "pct"),
        ("mmHg", "mmhg"),
        ("kPa", "kpa"),
        ("hh:mm:ss", "h:mm:ss"),
        ("mm:ss", "mm:ss"),
        ("beats", None),
    ],
)
def test_unit_code(text, code):
    assert unit_code(text) == code


def test_numbers_with_either_decimal_mark():
    v, missing, bad = parse_numbers(["1,5", "-2,25", "", "n/a", "x", "1e3", "inf"], decimal=",")
    assert v[:2].tolist() == [1.5, -2.25]
    assert missing.tolist() == [False, False, True, True, False, False, False]
    assert bad.tolist() == [False, False, False, False, True, False, True]
    assert v[5] == 1000.0 and math.isnan(v[6])
    v, _, bad = parse_numbers([1.5, 2, True, None, "3.5"], decimal=".")
    assert np.isnan(v[2]) and bad.tolist() == [False, False, True, False, False]


def test_detect_decimal():
    assert detect_decimal(["1,5", "2,5", "3"]) == ","
    assert detect_decimal(["1.5", "2,5", "3.25"]) == "."
    assert detect_decimal(["10", "20"]) == "."


def test_a_point_in_a_decimal_comma_file_is_not_guessed():
    # "2.345" could be 2345 (thousands point) or 2.345 (stray decimal point): refused (common practice: never guess)
    v, _, bad = parse_numbers(["2,5", "2.345", "2345"], decimal=",")
    assert v[0] == 2.5 and bad.tolist() == [False, True, False] and v[2] == 2345.0
