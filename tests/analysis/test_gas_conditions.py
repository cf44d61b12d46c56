"""Gas-law factors between BTPS, STPD and ATPS, against published factors and handbook values."""

from __future__ import annotations

import math

import pytest

from analysis.errors import InvalidParameter
from analysis.gas_conditions import (
    BODY_PH2O_MMHG,
    saturation_vapour_pressure_mmhg,
    volume_factor,
)


def test_stpd_to_btps_at_37_c_and_760_mmhg():
    # gas laws: (310.15 / 273.15) * 760 / (760 - 47) = 1.2103, the factor tabulated for converting
    # VO2-type STPD volumes to BTPS (ATS/ACCP 2003 conventions: 37 °C, PH2O 47 mmHg)
    assert volume_factor("stpd", "btps", barometric_mmhg=760.0) == pytest.approx(1.2103, abs=5e-5)
    assert volume_factor("btps", "stpd", barometric_mmhg=760.0) == pytest.approx(1 / 1.2103, abs=5e-5)


def test_atps_at_22_c_to_btps():
    # gas laws: (310.15 / 295.15) * (760 - PH2O(22 °C)) / (760 - 47) = 1.0909 with PH2O(22 °C) = 19.8 mmHg
    # (the tabulated ATPS->BTPS factor at 22 °C and 760 mmHg)
    assert volume_factor("atps", "btps", barometric_mmhg=760.0, ambient_c=22.0) == pytest.approx(1.0909, abs=5e-5)


def test_hand_computed_factor_at_altitude():
    # gas laws by hand: PB 630 mmHg (about 1,500 m), STPD -> BTPS = (310.15/273.15) * 760 / (630 - 47)
    expected = (310.15 / 273.15) * 760.0 / (630.0 - 47.0)
    assert volume_factor("stpd", "btps", barometric_mmhg=630.0) == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(1.4802, abs=1e-4)


@pytest.mark.parametrize(
    ("temperature_c", "handbook_mmhg"),
    # water vapour at saturation, handbook steam-table values (CRC Handbook, from memory):
    # 0 °C 4.58, 20 °C 17.54, 22 °C 19.83, 25 °C 23.76, 37 °C 47.07 mmHg
    [(0.0, 4.58), (20.0, 17.54), (22.0, 19.83), (25.0, 23.76), (37.0, 47.07)],
)
def test_buck_1981_against_handbook_vapour_pressures(temperature_c, handbook_mmhg):
    # Buck 1981 (e_w over water) is within about 0.1 % of tabulated values from 0 to 50 °C
    assert saturation_vapour_pressure_mmhg(temperature_c) == pytest.approx(handbook_mmhg, rel=2e-3)


def test_btps_uses_the_conventional_47_mmhg():
    # BTPS is defined with PH2O 47 mmHg at 37 °C (ATS/ACCP 2003); Buck's formula gives 47.10 mmHg
    assert BODY_PH2O_MMHG == 47.0
    assert saturation_vapour_pressure_mmhg(37.0) == pytest.approx(47.10, abs=0.01)


def test_same_condition_is_one_and_round_trips_are_exact():
    assert volume_factor("btps", "btps", barometric_mmhg=700.0) == 1.0
    there = volume_factor("atps", "stpd", barometric_mmhg=720.0, ambient_c=18.0)
    back = volume_factor("stpd", "atps", barometric_mmhg=720.0, ambient_c=18.0)
    assert there * back == pytest.approx(1.0, rel=1e-12)
    # ATPS -> STPD equals ATPS -> BTPS -> STPD (the factors compose)
    via = volume_factor("atps", "btps", barometric_mmhg=720.0, ambient_c=18.0) * volume_factor(
        "btps", "stpd", barometric_mmhg=720.0
    )
    assert there == pytest.approx(via, rel=1e-12)


def test_condition_names_in_any_case():
    assert volume_factor("STPD", " BTPS ", barometric_mmhg=760.0) == pytest.approx(1.2103, abs=5e-5)


@pytest.mark.parametrize(
    ("kwargs", "name"),
    [
        ({"from_condition": "ntp", "to_condition": "btps", "barometric_mmhg": 760.0}, "from_condition"),
        ({"from_condition": "btps", "to_condition": "", "barometric_mmhg": 760.0}, "to_condition"),
        ({"from_condition": "stpd", "to_condition": "btps", "barometric_mmhg": -760.0}, "barometric_mmhg"),
        ({"from_condition": "stpd", "to_condition": "btps", "barometric_mmhg": math.nan}, "barometric_mmhg"),
        ({"from_condition": "stpd", "to_condition": "btps", "barometric_mmhg": 101.3}, "barometric_mmhg"),  # kPa
        ({"from_condition": "atps", "to_condition": "btps", "barometric_mmhg": 760.0}, "ambient_c"),
        ({"from_condition": "atps", "to_condition": "btps", "barometric_mmhg": 760.0, "ambient_c": 295.0}, "temperature_c"),
        ({"from_condition": "atps", "to_condition": "btps", "barometric_mmhg": 760.0, "ambient_c": math.nan}, "temperature_c"),
    ],
)
def test_out_of_range_is_refused(kwargs, name):
    with pytest.raises(InvalidParameter, match=name):
        volume_factor(**kwargs)
