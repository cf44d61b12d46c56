"""Column mapping: guessing from generic spellings, explicit choices, JSON profiles."""

from __future__ import annotations

import json

import pytest

from analysis.errors import InvalidParameter
from analysis.io import ColumnMapping, ProfileError, guess_mapping, import_bytes, load_profile, save_profile
from analysis.io.mapping import split_header

# Generic spellings of trade terms (common practice in exercise physiology texts) -> expected column.
SPELLINGS = [
    ("Time", "t_s"),
    ("t", "t_s"),
    ("Time (s)", "t_s"),
    ("Elapsed time", "t_s"),
    ("VO2", "vo2_ml_min"),
    ("V'O2", "vo2_ml_min"),
    ("V\u0307O2", "vo2_ml_min"),
    ("VO\u2082", "vo2_ml_min"),
    ("VO2 (mL/min)", "vo2_ml_min"),
    ("VO2 L/min", "vo2_ml_min"),
    ("Oxygen uptake", "vo2_ml_min"),
    ("VCO2", "vco2_ml_min"),
    ("V'CO2 (L/min, STPD)", "vco2_ml_min"),
    ("CO2 output", "vco2_ml_min"),
    ("VE", "ve_l_min"),
    ("V'E (BTPS)", "ve_l_min"),
    ("Minute ventilation", "ve_l_min"),
    ("HR", "hr_bpm"),
    ("Heart rate", "hr_bpm"),
    ("HR (bpm)", "hr_bpm"),
    ("Load", "work_w"),
    ("Watts", "work_w"),
    ("Power (W)", "work_w"),
    ("Work rate", "work_w"),
    ("Speed", "speed_kmh"),
    ("Speed (km/h)", "speed_kmh"),
    ("Grade", "grade_pct"),
    ("Incline (%)", "grade_pct"),
    ("RR", "rf_bpm"),
    ("BF", "rf_bpm"),
    ("Rf", "rf_bpm"),
    ("Respiratory rate", "rf_bpm"),
    ("VT", "vt_l"),
    ("Tidal volume (L)", "vt_l"),
    ("PetO2", "peto2_mmhg"),
    ("PETCO2", "petco2_mmhg"),
    ("PETCO2 (mmHg)", "petco2_mmhg"),
    ("End-tidal CO2", "petco2_mmhg"),
    ("SpO2", "spo2_pct"),
    ("SpO2 (%)", "spo2_pct"),
    ("Phase", "phase"),
    ("Marker", "marker"),
    ("Event", "marker"),
    ("Comment", "marker"),
    ("vo2_ml_min", "vo2_ml_min"),
]

NOT_VO2 = ["VO2/kg", "VO2 (ml/kg/min)", "VO2 mL/kg/min", "VO2 rel", "VO2 (% pred)", "VO2/HR", "VE/VO2", "HR (%)", "Load (%)"]


@pytest.mark.parametrize(("header", "expected"), SPELLINGS)
def test_generic_spellings_are_recognised(header, expected):
    assert guess_mapping([header]).columns == {header: expected}


@pytest.mark.parametrize("header", NOT_VO2)
def test_per_kg_ratio_and_percent_columns_are_not_guessed(header):
    assert guess_mapping([header]).columns == {}


def test_unit_hints_recorded():
    m = guess_mapping(["Time (min)", "VO2 (L/min)", "VCO2 ml/min", "VE", "PETCO2 (kPa)", "Speed (m/s)", "VT (mL)"])
    assert m.units == {
        "t_s": "min",
        "vo2_ml_min": "l_min",
        "vco2_ml_min": "ml_min",
        "petco2_mmhg": "kpa",
        "speed_kmh": "m_s",
        "vt_l": "ml",
    }


def test_unit_row_used_as_hint():
    m = guess_mapping(["Time", "VO2", "VCO2"], unit_row=["s", "L/min", "L/min"])
    assert m.units == {"t_s": "s", "vo2_ml_min": "l_min", "vco2_ml_min": "l_min"}


def test_first_of_two_candidates_wins():
    m = guess_mapping(["VO2", "VO2 (L/min)", "HR", "Pulse"])
    assert m.mapped() == {"vo2_ml_min": "VO2", "hr_bpm": "HR"}


def test_split_header_keeps_non_units():
    assert split_header("VO2 (% pred)") == ("vo2(%pred)", None)
    assert split_header("Heart rate (1/min)") == ("heartrate", "per_min")


def test_explicit_mapping_overrides_guess_and_ignore():
    data = b"Time,VO2,VO2 abs,VCO2,VE,HR\n0,5,300,250,10,80\n3,5,310,260,11,81\n"
    mapping = ColumnMapping({"VO2 abs": "vo2_ml_min", "HR": "ignore"})
    out = import_bytes(data, file_name="x.csv", mapping=mapping)
    assert out.session.breaths["vo2_ml_min"].tolist() == [300.0, 310.0]
    assert "hr_bpm" not in out.session.breaths.columns
    assert out.mapping.columns["HR"] == "ignore"


def test_guess_rest_false_uses_only_the_mapping():
    data = b"A,B,C,D,HR\n0,300,250,10,80\n"
    mapping = ColumnMapping({"A": "t_s", "B": "vo2_ml_min", "C": "vco2_ml_min", "D": "ve_l_min"}, guess_rest=False)
    out = import_bytes(data, file_name="x.csv", mapping=mapping)
    assert "hr_bpm" not in out.session.breaths.columns


class TestProfiles:
    def test_round_trip(self, tmp_path):
        m = ColumnMapping({"Zeit": "t_s", "O2": "vo2_l_min", "CO2": "vco2_ml_min", "Vent": "ve_l_min", "Notes": "ignore"}, {"t_s": "mm:ss"})
        path = save_profile(m, tmp_path / "cart.json")
        back = load_profile(path)
        assert back == m
        assert ColumnMapping.from_dict(json.loads(json.dumps(m.to_dict()))) == m
        assert back.units == {"vo2_ml_min": "l_min", "t_s": "mm:ss"}

    def test_outcome_mapping_reused(self, tmp_path):
        data = b"Zeit;Sauerstoff;Kohlendioxid;Ventilation\n0:00;1,5;1,2;40\n0:03;1,6;1,3;41\n"
        first = import_bytes(
            data,
            file_name="a.csv",
            mapping=ColumnMapping({"Zeit": "t_s", "Sauerstoff": "vo2_ml_min", "Kohlendioxid": "vco2_ml_min", "Ventilation": "ve_l_min"}),
            gas_unit="l_min",
        )
        save_profile(first.mapping, tmp_path / "p.json")
        again = import_bytes(data, file_name="b.csv", mapping=load_profile(tmp_path / "p.json"))
        assert again.session.breaths.equals(first.session.breaths)

    def test_bad_profiles(self, tmp_path):
        with pytest.raises(ProfileError, match="does not exist"):
            load_profile(tmp_path / "missing.json")
        (tmp_path / "bad.json").write_text("{not json")
        with pytest.raises(ProfileError, match="cannot be read"):
            load_profile(tmp_path / "bad.json")
        (tmp_path / "wrong.json").write_text(json.dumps({"columns": {"A": "nonsense"}}))
        with pytest.raises(InvalidParameter, match="column mapping target"):
            load_profile(tmp_path / "wrong.json")
        with pytest.raises(InvalidParameter, match="kind"):
            ColumnMapping.from_dict({"kind": "something else"})
