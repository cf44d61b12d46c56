"""FRIEND, Tanaka, Weber and Arena classes against the published equations and cut points."""

import pytest

from analysis.errors import InvalidParameter
from analysis.reference import (
    friend_vo2max_ml_kg_min,
    pct_predicted,
    tanaka_hr_max_bpm,
    ventilatory_class,
    weber_class,
)


class TestFriend:
    def test_man_on_treadmill_by_hand(self):
        # de Souza e Silva et al. 2018 (FRIEND), published equation, computed by hand for a
        # 50-year-old man, 90.7185 kg = 200 lb, 177.8 cm = 70 in, treadmill:
        # 45.2 - 0.35*50 - 10.9*1 - 0.15*200 + 0.68*70 - 0.46*1 = 45.2-17.5-10.9-30+47.6-0.46 = 33.94
        v = friend_vo2max_ml_kg_min(age_y=50, sex="male", body_mass_kg=90.718474, height_cm=177.8, mode="treadmill")
        assert v == pytest.approx(33.94, abs=1e-4)

    def test_woman_on_cycle_by_hand(self):
        # FRIEND, by hand: 30-year-old woman, 132 lb (59.874 kg), 64 in (162.56 cm), cycle:
        # 45.2 - 10.5 - 21.8 - 19.8 + 43.52 - 0.92 = 35.70
        v = friend_vo2max_ml_kg_min(age_y=30, sex="f", body_mass_kg=132 / 2.2046226218, height_cm=162.56, mode="cycle")
        assert v == pytest.approx(35.70, abs=1e-4)

    def test_mode_and_sex_terms(self):
        # the published coefficients: cycle is 0.46 lower than treadmill, female 10.9 lower than male
        kw = dict(age_y=40, body_mass_kg=70, height_cm=170)
        tm = friend_vo2max_ml_kg_min(sex="male", mode="treadmill", **kw)
        assert tm - friend_vo2max_ml_kg_min(sex="male", mode="cycle", **kw) == pytest.approx(0.46)
        assert tm - friend_vo2max_ml_kg_min(sex="female", mode="treadmill", **kw) == pytest.approx(10.9)

    @pytest.mark.parametrize(
        "kw, name",
        [
            (dict(sex="x"), "sex"),
            (dict(mode="rowing"), "mode"),
            (dict(age_y=-3), "age_y"),
            (dict(body_mass_kg=float("nan")), "body_mass_kg"),
            (dict(height_cm="tall"), "height_cm"),
        ],
    )
    def test_invalid(self, kw, name):
        base = dict(age_y=40, sex="male", body_mass_kg=70, height_cm=170, mode="cycle")
        base.update(kw)
        with pytest.raises(InvalidParameter, match=name):
            friend_vo2max_ml_kg_min(**base)

    def test_pct_predicted(self):
        assert pct_predicted(30.0, 40.0) == 75.0
        with pytest.raises(InvalidParameter):
            pct_predicted(30.0, 0.0)


def test_tanaka():
    # Tanaka et al. 2001 (from memory): 208 - 0.7*age; age 20 -> 194, age 60 -> 166
    assert tanaka_hr_max_bpm(age_y=20) == pytest.approx(194.0)
    assert tanaka_hr_max_bpm(age_y=60) == pytest.approx(166.0)


@pytest.mark.parametrize(
    "slope, cls",
    # Arena et al. 2007 (checked): I ≤ 29.9, II 30.0-35.9, III 36.0-44.9, IV ≥ 45.0
    [(20.0, "I"), (29.9, "I"), (30.0, "II"), (35.9, "II"), (36.0, "III"), (44.9, "III"), (45.0, "IV"), (60.0, "IV")],
)
def test_arena_ventilatory_class_at_cut_points(slope, cls):
    assert ventilatory_class(slope) == cls


@pytest.mark.parametrize(
    "vo2, cls",
    # Weber & Janicki 1985 (from memory): A > 20, B 16-20, C 10-16, D < 10 mL/kg/min
    [(20.1, "A"), (20.0, "B"), (16.0, "B"), (15.9, "C"), (10.0, "C"), (9.9, "D"), (0.0, "D")],
)
def test_weber_class_at_boundaries(vo2, cls):
    assert weber_class(vo2) == cls


def test_class_inputs_validated():
    with pytest.raises(InvalidParameter, match="ve_vco2_slope"):
        ventilatory_class(float("nan"))
    with pytest.raises(InvalidParameter, match="vo2_peak_ml_kg_min"):
        weber_class(-1)
