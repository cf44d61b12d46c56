"""Dissociation curves against published worked values and against each other."""

from __future__ import annotations

import math

import numpy as np
import pytest

from analysis.errors import InvalidParameter, TidemarkError
from analysis.oxygen import MODELS, p50, po2_at_saturation, saturation

SA = "siggaard_andersen"


class TestSeveringhausEq1:
    # Severinghaus 1979, Eq 1 worked values (J Appl Physiol 46:599), as listed in references.md.
    @pytest.mark.parametrize(
        ("po2", "expected"),
        [(26.8, 0.499), (40.0, 0.750), (60.0, 0.906), (100.0, 0.977)],
    )
    def test_worked_values(self, po2, expected):
        assert saturation(po2) == pytest.approx(expected, abs=0.0011)

    def test_scalar_in_float_out_and_array_in_array_out(self):
        assert isinstance(saturation(40.0), float)
        out = saturation(np.array([26.8, 40.0]))
        assert isinstance(out, np.ndarray) and out.shape == (2,)
        assert saturation([[40.0, 60.0]]).shape == (1, 2)

    def test_zero_po2_is_zero_saturation(self):
        # Common practice: no oxygen, no oxyhaemoglobin.
        for model in ("severinghaus", SA):
            assert saturation(0.0, model=model) == 0.0

    def test_eq2_inverts_eq1_within_published_fit(self):
        # Severinghaus 1979: Eq 1 fits the standard curve within ±0.0055 S; Eq 2 is his separate
        # inverse fit. Round trip S -> PO2 (Eq 2) -> S (Eq 1): we find at most 0.0054 (near S 0.31).
        s = np.linspace(0.01, 0.99, 981)
        assert np.max(np.abs(saturation(po2_at_saturation(s)) - s)) < 0.0055

    def test_eq2_at_half_saturation(self):
        # Severinghaus 1979 Eq 2 at S = 0.5: ln PO2 = 3.32 - 1/36 - 0.17/64 (hand-solvable).
        assert po2_at_saturation(0.5) == pytest.approx(math.exp(3.32 - 1 / 36 - 0.17 / 64), rel=1e-9)


class TestSiggaardAndersen:
    def test_agrees_with_severinghaus_10_to_150_mmhg(self):
        # references.md (Siggaard-Andersen 1984): independent fit of the same standard curve,
        # within about 0.003 S of Severinghaus Eq 1 from 10 to 150 mmHg; we find 0.0026.
        po2 = np.linspace(10.0, 150.0, 1401)
        diff = np.abs(saturation(po2) - saturation(po2, model=SA))
        assert diff.max() < 0.003

    def test_exact_inverse(self):
        s = np.linspace(0.001, 0.999, 999)
        for cond in ({}, {"ph": 7.1, "temperature_c": 40.0, "dpg_mmol_l": 7.0, "base_excess_mmol_l": -12.0}):
            back = saturation(po2_at_saturation(s, model=SA, **cond), model=SA, **cond)
            assert np.max(np.abs(back - s)) < 1e-10


class TestP50:
    @pytest.mark.parametrize("model", ["severinghaus", SA])
    def test_standard_p50(self, model):
        # Severinghaus 1979 and Siggaard-Andersen 1984: P50 ≈ 26.8 mmHg at 37 °C, pH 7.40.
        assert p50(model=model) == pytest.approx(26.8, abs=0.1)

    @pytest.mark.parametrize(
        ("condition", "value", "low", "high"),
        [
            # pH 7.2: Bohr shift right. Severinghaus Eq 4 gives d ln P/d pH ≈ -1.2 at P50, so
            # ln P50 rises by about 0.24 (P50 ≈ 34); Siggaard-Andersen a = 1.04 (7.4 - pH) agrees.
            ("ph", 7.20, 32.5, 35.5),
            # 39 °C: anaerobic coefficient ≈ 0.071 per °C at P50 (Severinghaus Eq 3), i.e. ≈ 31.
            ("temperature_c", 39.0, 30.0, 32.0),
            # Alkalosis and cooling shift left (direction: Bohr effect and Eq 3, common practice).
            ("ph", 7.60, 20.0, 22.0),
            ("temperature_c", 35.0, 22.5, 24.0),
        ],
    )
    def test_shift_direction_and_size(self, condition, value, low, high):
        for model in ("severinghaus", SA):
            assert low < p50(model=model, **{condition: value}) < high

    @pytest.mark.parametrize(("condition", "value"), [("ph", 7.20), ("temperature_c", 39.0), ("ph", 7.6)])
    def test_two_models_shift_by_the_same_amount(self, condition, value):
        # The two published models agree on the size of the shift in ln P50: we find 0.6 % (pH 7.2),
        # 1.8 % (39 °C); stated tolerance 5 % of the shift.
        shift = {m: math.log(p50(model=m, **{condition: value}) / p50(model=m)) for m in ("severinghaus", SA)}
        assert shift["severinghaus"] == pytest.approx(shift[SA], rel=0.05)

    def test_raised_dpg_shifts_right_siggaard_andersen(self):
        # Siggaard-Andersen 1984: a = ... + 0.07 (DPG - 5) moves x0 = ln P50 (kPa) by 0.07 per
        # mmol/L, and h = 3.5 + a steepens the curve as well, so ln P50 moves by 0.07-0.09.
        per_mmol = math.log(p50(model=SA, dpg_mmol_l=7.0) / p50(model=SA)) / 2.0
        assert 0.07 <= per_mmol <= 0.09
        assert p50(model=SA, dpg_mmol_l=3.0) < p50(model=SA)

    def test_raised_dpg_refused_by_severinghaus(self):
        with pytest.raises(InvalidParameter, match="siggaard_andersen"):
            p50(dpg_mmol_l=7.0)

    def test_severinghaus_co2_effect_at_constant_ph(self):
        # Kelman-style coefficient (from memory): log10 P50 rises by 0.06 log10(PCO2/40).
        expected = p50() * (60.0 / 40.0) ** 0.06
        assert p50(pco2_mmhg=60.0) == pytest.approx(expected, rel=1e-9)


class TestHill:
    @pytest.mark.parametrize(("p50_mmhg", "n"), [(26.8, 2.7), (18.0, 2.2), (40.0, 3.0)])
    def test_half_saturation_at_own_p50(self, p50_mmhg, n):
        # Common practice: a Hill curve is half-saturated at its own P50.
        assert saturation(p50_mmhg, model="hill", p50_mmhg=p50_mmhg, hill_n=n) == pytest.approx(0.5, abs=1e-12)
        assert p50(model="hill", p50_mmhg=p50_mmhg, hill_n=n) == pytest.approx(p50_mmhg, rel=1e-12)

    def test_default_n(self):
        # Hill coefficient 2.7 (common practice): S(2 x P50) = 2^2.7 / (1 + 2^2.7).
        assert saturation(53.6, model="hill", p50_mmhg=26.8) == pytest.approx(2**2.7 / (1 + 2**2.7), rel=1e-12)

    def test_left_shifted_blood_holds_more_oxygen_at_venous_po2(self):
        # Carbon monoxide / stored blood scenario (common practice): lower P50 -> higher S at 30 mmHg.
        assert saturation(30.0, model="hill", p50_mmhg=18.0) > saturation(30.0, model="hill", p50_mmhg=26.8)


class TestPhysiologicalAnchors:
    @pytest.mark.parametrize("model", ["severinghaus", SA])
    def test_arterial_and_venous(self, model):
        # Common practice: arterial PO2 ~100 -> S 0.97-0.98; mixed venous PO2 40 -> S ≈ 0.75,
        # 45 -> about 0.8; about a quarter of the arterial oxygen extracted at rest.
        sa = saturation(100.0, model=model)
        assert 0.97 <= sa <= 0.98
        assert saturation(40.0, model=model) == pytest.approx(0.75, abs=0.01)
        assert 0.75 <= saturation(45.0, model=model) <= 0.82
        extraction = (sa - saturation(40.0, model=model)) / sa
        assert 0.2 <= extraction <= 0.3


class TestInvalidInput:
    @pytest.mark.parametrize(
        ("kwargs", "match"),
        [
            ({"po2_mmhg": -1.0}, "po2_mmhg"),
            ({"po2_mmhg": float("nan")}, "po2_mmhg"),
            ({"po2_mmhg": "abc"}, "po2_mmhg"),
            ({"po2_mmhg": [40.0, -5.0]}, "every element"),
            ({"po2_mmhg": 40.0, "ph": 6.5}, "ph"),
            ({"po2_mmhg": 40.0, "ph": 7.9}, "ph"),
            ({"po2_mmhg": 40.0, "temperature_c": 50.0}, "temperature_c"),
            ({"po2_mmhg": 40.0, "temperature_c": 15.0}, "temperature_c"),
            ({"po2_mmhg": 40.0, "model": "kelman"}, "model"),
            ({"po2_mmhg": 40.0, "base_excess_mmol_l": -5.0}, "siggaard_andersen"),
            ({"po2_mmhg": 40.0, "model": SA, "pco2_mmhg": 60.0}, "base_excess"),
            ({"po2_mmhg": 40.0, "model": "hill"}, "p50_mmhg"),
            ({"po2_mmhg": 40.0, "model": "hill", "p50_mmhg": 26.8, "ph": 7.2}, "shift p50_mmhg"),
            ({"po2_mmhg": 40.0, "model": "hill", "p50_mmhg": 26.8, "hill_n": 9.0}, "hill_n"),
            ({"po2_mmhg": 40.0, "p50_mmhg": 26.8}, "model='hill'"),
        ],
    )
    def test_saturation_refuses(self, kwargs, match):
        with pytest.raises(InvalidParameter, match=match):
            saturation(**kwargs)

    @pytest.mark.parametrize("s", [0.0, 1.0, -0.2, 75.0, float("nan")])
    def test_inverse_refuses_saturation_outside_open_interval(self, s):
        for model in MODELS:
            extra = {"p50_mmhg": 26.8} if model == "hill" else {}
            with pytest.raises(InvalidParameter, match="strictly between 0 and 1"):
                po2_at_saturation(s, model=model, **extra)

    def test_errors_are_tidemark_errors(self):
        with pytest.raises(TidemarkError):
            p50(ph=8.5)
