"""Oxygen content, the Fick principle and the Stringer 1997 estimate."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from analysis.errors import InvalidParameter
from analysis.oxygen import (
    avo2_difference_ml_dl,
    cardiac_output_l_min,
    o2_content_ml_dl,
    saturation_from_spo2,
    spo2_note,
    stringer_avo2_difference_ml_dl,
    stringer_cardiac_output_l_min,
    stroke_volume_ml,
)


class TestContent:
    def test_hand_solved(self):
        # Common practice: CaO2 = 1.34 x 15 x 0.98 + 0.0031 x 95 = 19.698 + 0.2945 = 19.9925 mL/dL.
        assert o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0) == pytest.approx(19.9925, abs=1e-9)

    def test_huefner_factor_configurable(self):
        # Common practice: k from 1.34 to 1.39 mL/g depending on the source.
        c139 = o2_content_ml_dl(saturation=1.0, po2_mmhg=0.0, hb_g_dl=10.0, huefner_ml_g=1.39)
        assert c139 == pytest.approx(13.9)

    def test_vectorised(self):
        out = o2_content_ml_dl(saturation=np.array([0.75, 0.98]), po2_mmhg=np.array([40.0, 100.0]), hb_g_dl=15.0)
        assert out == pytest.approx([1.34 * 15 * 0.75 + 0.124, 1.34 * 15 * 0.98 + 0.31])

    @pytest.mark.parametrize(
        ("kwargs", "match"),
        [
            ({"saturation": 97.0, "po2_mmhg": 95.0, "hb_g_dl": 15.0}, "not 97"),
            ({"saturation": 0.97, "po2_mmhg": -1.0, "hb_g_dl": 15.0}, "po2_mmhg"),
            ({"saturation": 0.97, "po2_mmhg": 95.0, "hb_g_dl": 150.0}, "hb_g_dl"),
            ({"saturation": 0.97, "po2_mmhg": 95.0, "hb_g_dl": 15.0, "huefner_ml_g": 1.5}, "huefner_ml_g"),
        ],
    )
    def test_refuses(self, kwargs, match):
        with pytest.raises(InvalidParameter, match=match):
            o2_content_ml_dl(**kwargs)


class TestSpO2:
    def test_normal_reading(self):
        assert saturation_from_spo2(97.0) == pytest.approx(0.97)

    def test_note_below_90(self):
        # Common practice: SpO2 below 90 % is a concern; the note is a value, not a warning.
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            assert saturation_from_spo2(86.0) == pytest.approx(0.86)
        assert "below 90 %" in spo2_note(86.0)
        assert spo2_note(90.0) is None

    def test_fraction_refused(self):
        with pytest.raises(InvalidParameter, match="spo2_pct"):
            saturation_from_spo2(0.97)


class TestFick:
    def test_textbook_example(self):
        # Common practice (textbook Fick example): VO2 250 mL/min, CaO2 20, CvO2 15 mL/dL -> Q 5 L/min.
        assert cardiac_output_l_min(vo2_ml_min=250.0, avo2_ml_dl=20.0 - 15.0) == pytest.approx(5.0)
        assert avo2_difference_ml_dl(vo2_ml_min=250.0, q_l_min=5.0) == pytest.approx(5.0)

    def test_stroke_volume(self):
        # Common practice: SV = Q / HR; 5 L/min at 70 beats/min -> 71.4 mL.
        assert stroke_volume_ml(q_l_min=5.0, hr_bpm=70.0) == pytest.approx(71.43, abs=0.01)

    @pytest.mark.parametrize(("pct", "expected"), [(0.0, 5.72), (100.0, 16.22), (50.0, 10.97)])
    def test_stringer_1997(self, pct, expected):
        # Stringer, Hansen, Wasserman 1997: C(a-v)O2 = 5.72 + 0.105 x %VO2max.
        assert stringer_avo2_difference_ml_dl(pct_vo2_peak=pct) == pytest.approx(expected, abs=1e-9)

    def test_stringer_cardiac_output(self):
        # Stringer 1997: Q = VO2 / C(a-v)O2; 3000 mL/min at peak -> 3000 / 162.2 = 18.50 L/min.
        assert stringer_cardiac_output_l_min(vo2_ml_min=3000.0, pct_vo2_peak=100.0) == pytest.approx(18.496, abs=1e-3)

    @pytest.mark.parametrize(
        ("call", "match"),
        [
            (lambda: cardiac_output_l_min(vo2_ml_min=250.0, avo2_ml_dl=0.0), "avo2_ml_dl"),
            (lambda: avo2_difference_ml_dl(vo2_ml_min=250.0, q_l_min=0.0), "q_l_min"),
            (lambda: stroke_volume_ml(q_l_min=5.0, hr_bpm=0.0), "hr_bpm"),
            (lambda: stringer_avo2_difference_ml_dl(pct_vo2_peak=-5.0), "pct_vo2_peak"),
            (lambda: avo2_difference_ml_dl(vo2_ml_min=-1.0, q_l_min=5.0), "vo2_ml_min"),
        ],
    )
    def test_refuses(self, call, match):
        with pytest.raises(InvalidParameter, match=match):
            call()
