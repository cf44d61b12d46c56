"""Curve-derived unloading between arterial blood and a venous PO2, resting and exercise curves."""

from __future__ import annotations

import numpy as np
import pytest

from analysis.errors import InvalidParameter
from analysis.oxygen import DEFAULT_CONDITIONS, StateConditions, arterial_content_ml_dl, curve_unloading_ml_dl


@pytest.mark.parametrize("model", ["siggaard_andersen", "severinghaus"])
def test_rest_extracts_about_a_quarter(model):
    # Common practice: at rest, venous PO2 ≈ 40 mmHg, about a quarter of arterial O2 is extracted.
    cao2, sao2, source, _ = arterial_content_ml_dl(hb_g_dl=15.0, model=model)
    assert source == "curve" and 0.96 <= sao2 <= 0.98
    unload = curve_unloading_ml_dl(40.0, conditions=DEFAULT_CONDITIONS["rest"], hb_g_dl=15.0, model=model)
    assert 0.2 <= unload / cao2 <= 0.3


@pytest.mark.parametrize("model", ["siggaard_andersen", "severinghaus"])
def test_exercise_curve_releases_more_at_the_same_venous_po2(model):
    # Bohr and temperature effects (common practice): the right-shifted curve gives up more O2.
    pv = np.array([15.0, 20.0, 30.0, 40.0])
    rest = curve_unloading_ml_dl(pv, conditions=DEFAULT_CONDITIONS["rest"], hb_g_dl=15.0, model=model)
    peak = curve_unloading_ml_dl(pv, conditions=DEFAULT_CONDITIONS["peak"], hb_g_dl=15.0, model=model)
    assert np.all(peak > rest)
    assert np.all(np.diff(rest) < 0)  # lower venous PO2, more unloading


def test_unloading_is_arterial_minus_venous_content():
    # Hand-solvable: venous blood at the arterial PO2 and conditions gives up nothing; at PO2 0, everything.
    cao2, _, _, _ = arterial_content_ml_dl(hb_g_dl=14.0, pao2_mmhg=95.0)
    assert curve_unloading_ml_dl(95.0, conditions=StateConditions(), hb_g_dl=14.0) == pytest.approx(0.0, abs=1e-12)
    assert curve_unloading_ml_dl(0.0, conditions=StateConditions(), hb_g_dl=14.0) == pytest.approx(cao2)


def test_spo2_path():
    cao2, sao2, source, notes = arterial_content_ml_dl(hb_g_dl=15.0, spo2_pct=95.0)
    # Common practice: 1.34 x 15 x 0.95 + 0.0031 x 95.
    assert source == "spo2" and cao2 == pytest.approx(1.34 * 15 * 0.95 + 0.0031 * 95) and notes == ()
    # Common practice: SpO2 below 90 % is a concern; the note is returned as a value.
    _, _, _, low = arterial_content_ml_dl(hb_g_dl=15.0, spo2_pct=85.0)
    assert len(low) == 1 and "below 90 %" in low[0]


def test_refuses():
    with pytest.raises(InvalidParameter, match="po2_mmhg"):
        curve_unloading_ml_dl(-2.0, conditions=StateConditions(), hb_g_dl=15.0)
    with pytest.raises(InvalidParameter, match="model"):
        curve_unloading_ml_dl(30.0, conditions=StateConditions(), hb_g_dl=15.0, model="hill")
