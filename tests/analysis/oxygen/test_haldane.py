"""Whole-blood CO2 content (Douglas 1988) and the Haldane factor (Loeppky 1983)."""

from __future__ import annotations

import pytest

from analysis.errors import InvalidParameter
from analysis.oxygen import blood_co2_content_ml_dl, haldane_extra_co2_ml_dl, haldane_factor
from analysis.oxygen.acid_base import ph_from_pco2_base_excess
from analysis.oxygen.haldane import plasma_co2_content_ml_dl

KPA = 7.50062  # mmHg per kPa


def test_plasma_content_matches_independent_implementation():
    # Douglas 1988 plasma content with Kelman 1967 s and pK' at 5 kPa, pH 7.40, 37 °C:
    # 54.8038 mL/dL in an independent open-source implementation's test (R package "co2ntent").
    assert plasma_co2_content_ml_dl(pco2_mmhg=5 * KPA, ph=7.4) == pytest.approx(54.8038, abs=0.01)


def test_whole_blood_ratio_matches_independent_implementation():
    # Douglas 1988: Cb/Cp = 1 - 0.0289 Hb / ((3.352 - 0.456 SO2)(8.142 - pH)); Hb 10, SO2 0.9,
    # pH 7.4 -> 0.867593 (same independent test), hand-checkable: 1 - 0.289/(2.9416 x 0.742).
    cb = blood_co2_content_ml_dl(pco2_mmhg=5 * KPA, ph=7.4, hb_g_dl=10.0, so2=0.9)
    assert cb == pytest.approx(0.867593 * 54.803778, rel=1e-4)


def test_van_slyke_normal_blood():
    # Common practice: PCO2 40 mmHg and base excess 0 give pH ≈ 7.40 (HCO3 ≈ 24-25 mmol/L).
    assert ph_from_pco2_base_excess(pco2_mmhg=40.0, base_excess_mmol_l=0.0, hb_g_dl=15.0) == pytest.approx(7.40, abs=0.01)
    # Metabolic acidosis lowers pH at the same PCO2 (direction, common practice).
    assert ph_from_pco2_base_excess(pco2_mmhg=40.0, base_excess_mmol_l=-10.0, hb_g_dl=15.0) < 7.30


@pytest.mark.parametrize("pco2", [40.0, 46.0, 55.0])
@pytest.mark.parametrize("hb", [12.0, 15.0, 17.0])
@pytest.mark.parametrize("so2_venous", [0.75, 0.4, 0.2])
def test_haldane_factor_against_loeppky_1983(pco2, hb, so2_venous):
    # Loeppky, Luft, Fletcher 1983: in vivo Haldane factor in exercising healthy subjects
    # 0.28 ± 0.03 vol% CCO2 per vol% HbO2. Stated tolerance: the model must fall within
    # mean ± 1 SD (0.25-0.31); we find 0.279-0.302 over these PCO2, Hb and venous saturations.
    factor = haldane_factor(pco2_mmhg=pco2, so2_arterial=0.97, so2_venous=so2_venous, hb_g_dl=hb)
    assert 0.25 <= factor <= 0.31


def test_extra_co2_grows_with_desaturation():
    # Haldane effect (common practice): the more oxygen given up, the more CO2 blood carries.
    rest = haldane_extra_co2_ml_dl(pco2_mmhg=46.0, so2_arterial=0.97, so2_venous=0.75, hb_g_dl=15.0)
    peak = haldane_extra_co2_ml_dl(pco2_mmhg=46.0, so2_arterial=0.97, so2_venous=0.20, hb_g_dl=15.0)
    assert 0 < rest < peak
    # Consistent with the factor: extra ≈ factor x 1.34 x Hb x ΔS.
    assert rest == pytest.approx(0.28 * 1.34 * 15.0 * 0.22, rel=0.1)


def test_haldane_refuses():
    with pytest.raises(InvalidParameter, match="below the arterial saturation"):
        haldane_factor(pco2_mmhg=46.0, so2_arterial=0.7, so2_venous=0.9, hb_g_dl=15.0)
    with pytest.raises(InvalidParameter, match="not 97"):
        haldane_extra_co2_ml_dl(pco2_mmhg=46.0, so2_arterial=97.0, so2_venous=0.75, hb_g_dl=15.0)
    with pytest.raises(InvalidParameter, match="pco2_mmhg"):
        blood_co2_content_ml_dl(pco2_mmhg=0.0, ph=7.4, hb_g_dl=15.0, so2=0.9)
