"""point_values reads one averaged row (common practice: RER = VCO2/VO2, % peak = VO2/VO2peak)."""

import pandas as pd
import pytest

from analysis.errors import InvalidParameter
from analysis.indices import point_values
from analysis.records import to_json


def _avg():
    return pd.DataFrame(
        {
            "t_s": [300.0, 330.0],
            "vo2_ml_min": [2000.0, 2400.0],
            "vco2_ml_min": [1900.0, 2500.0],
            "ve_l_min": [50.0, 70.0],
            "hr_bpm": [140.0, float("nan")],
            "work_w": [150.0, 175.0],
        },
        index=[10, 11],
    )


def test_values_at_row():
    p = point_values(_avg(), 10, vo2_peak_ml_min=4000.0, body_mass_kg=80.0)
    assert p.t_s == 300.0
    assert p.vo2_ml_kg_min == pytest.approx(25.0)
    assert p.pct_vo2_peak == pytest.approx(50.0)
    assert p.rer == pytest.approx(0.95)
    assert (p.hr_bpm, p.work_w, p.speed_kmh, p.ve_l_min) == (140.0, 150.0, None, 50.0)
    assert to_json(p)["index"] == 10 and to_json(p)["time_s"] == p.t_s


def test_missing_values_are_none():
    p = point_values(_avg(), 11, vo2_peak_ml_min=None, body_mass_kg=None)
    assert p.hr_bpm is None and p.vo2_ml_kg_min is None and p.pct_vo2_peak is None


def test_unknown_row():
    with pytest.raises(InvalidParameter, match="index"):
        point_values(_avg(), 99, vo2_peak_ml_min=1.0, body_mass_kg=1.0)
