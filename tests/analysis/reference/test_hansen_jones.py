"""Hansen 1984 and Jones 1985 predictions for stated persons.

The coefficients are recalled (from memory), not looked up; the expected values below are
computed by hand from those recalled equations, so they check the code, not the paper.
"""

from __future__ import annotations

import pytest

from analysis.errors import InvalidParameter, OutsideDerivationRange
from analysis.interpretation.predicted import predicted_peak
from analysis.reference.hansen1984 import hansen1984_hr_max_bpm, hansen1984_vo2max_ml_min, ideal_body_mass_kg
from analysis.reference.jones1985 import jones1985_hr_max_bpm, jones1985_vo2max_ml_min


def test_hansen_1984_man_below_ideal_weight():
    # Hansen, Sue & Wasserman 1984 (from memory): men wt x (50.72 - 0.372 age)
    # 40 y, 80 kg, 180 cm: ideal 0.79 x 180 - 60.7 = 81.5 kg > 80 -> 80 x 35.84 = 2867.2 mL/min
    assert ideal_body_mass_kg(height_cm=180, sex="male") == pytest.approx(81.5)
    assert hansen1984_vo2max_ml_min(age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="cycle") == pytest.approx(2867.2)


def test_hansen_1984_obese_man_uses_ideal_weight():
    # 50 y, 110 kg, 175 cm: ideal 0.79 x 175 - 60.7 = 77.55 kg -> 77.55 x (50.72 - 18.6) = 2490.906
    assert hansen1984_vo2max_ml_min(age_y=50, sex="male", body_mass_kg=110, height_cm=175, mode="cycle") == pytest.approx(
        2490.906
    )


def test_hansen_1984_woman():
    # women (wt + 43) x (22.78 - 0.17 age) (from memory); 60 y, 60 kg, 165 cm:
    # ideal 0.65 x 165 - 42.8 = 64.45 > 60 -> (60 + 43) x (22.78 - 10.2) = 1295.74 mL/min
    assert hansen1984_vo2max_ml_min(age_y=60, sex="female", body_mass_kg=60, height_cm=165, mode="cycle") == pytest.approx(
        1295.74
    )
    assert hansen1984_hr_max_bpm(age_y=60) == pytest.approx(171.0)  # 210 - 0.65 x 60 (from memory)


def test_jones_1985_persons():
    # Jones et al. 1985 (from memory): L/min = 0.046 height - 0.021 age - 0.62 sex(f 1) - 4.31
    assert jones1985_vo2max_ml_min(age_y=40, sex="male", height_cm=180, mode="cycle") == pytest.approx(3130.0)
    # woman 30 y, 165 cm: 7.59 - 0.63 - 0.62 - 4.31 = 2.03 L/min
    assert jones1985_vo2max_ml_min(age_y=30, sex="female", height_cm=165, mode="cycle") == pytest.approx(2030.0)
    assert jones1985_hr_max_bpm(age_y=30) == pytest.approx(180.4)  # 202 - 0.72 x 30 (from memory)


@pytest.mark.parametrize("age", [33.9, 74.1])
def test_hansen_refuses_ages_outside_its_derivation(age):
    with pytest.raises(OutsideDerivationRange, match="34–74 years"):
        hansen1984_vo2max_ml_min(age_y=age, sex="male", body_mass_kg=80, height_cm=180, mode="cycle")


@pytest.mark.parametrize("age", [14.0, 72.0])
def test_jones_refuses_ages_outside_its_derivation(age):
    with pytest.raises(OutsideDerivationRange, match="15–71 years"):
        jones1985_vo2max_ml_min(age_y=age, sex="male", height_cm=180, mode="cycle")


def test_treadmill_is_refused_by_the_cycle_sets():
    with pytest.raises(OutsideDerivationRange, match="cycle"):
        jones1985_vo2max_ml_min(age_y=40, sex="male", height_cm=180, mode="treadmill")
    with pytest.raises(OutsideDerivationRange, match="cycle"):
        hansen1984_vo2max_ml_min(age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="run")


def test_predicted_peak_names_the_set_and_refuses_with_a_note():
    ok = predicted_peak("jones1985", age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="cycle",
                        vo2_peak_ml_min=2504.0, hr_peak_bpm=173.2, o2_pulse_peak_ml_beat=15.0)
    assert ok.reference_name.startswith("Jones et al. 1985")
    assert ok.pct_vo2_peak == pytest.approx(80.0)
    assert ok.hr_max_bpm == pytest.approx(173.2) and ok.pct_hr_max == pytest.approx(100.0)
    assert ok.o2_pulse_ml_beat == pytest.approx(3130.0 / 173.2)  # predicted VO2 / predicted HR
    old = predicted_peak("jones1985", age_y=80, sex="male", body_mass_kg=80, height_cm=180, mode="cycle",
                         vo2_peak_ml_min=2000.0, hr_peak_bpm=140.0, o2_pulse_peak_ml_beat=14.0)
    assert old.vo2_peak_ml_min is None and old.pct_vo2_peak is None and old.hr_max_bpm is None
    assert "15–71 years" in old.note
    with pytest.raises(InvalidParameter, match="reference_set"):
        predicted_peak("no-such-set", age_y=40, sex="male", body_mass_kg=80, height_cm=180, mode="cycle",
                       vo2_peak_ml_min=2000.0, hr_peak_bpm=None, o2_pulse_peak_ml_beat=None)
