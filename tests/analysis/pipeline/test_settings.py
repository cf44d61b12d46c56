"""AnalysisSettings: JSON round trip, versioning and one standard message per bad value."""

import json

import pytest

from analysis.breaths import AveragingSpec
from analysis.errors import InvalidParameter
from analysis.settings import SETTINGS_VERSION, AnalysisSettings, MetadataOverrides, ThresholdOverride


def test_default_round_trip():
    d = AnalysisSettings().to_dict()
    assert d["version"] == SETTINGS_VERSION
    assert AnalysisSettings.from_dict(json.loads(json.dumps(d))) == AnalysisSettings()


def test_full_round_trip():
    s = AnalysisSettings(
        averaging=AveragingSpec("breaths", 15),
        outlier_window_breaths=11,
        outlier_k_sd=3.5,
        excluded_rows=(9, 4, 4),
        restored_rows=(7,),
        vt1_override=ThresholdOverride(t_s=420.0, reason="review"),
        vt2_override=ThresholdOverride(vo2_ml_min=3100.0),
        plateau_threshold_ml_min=100.0,
        metadata=MetadataOverrides(body_mass_kg=70, sex="F", mode="bike"),
        oxygen={"pao2_mmhg": 90.0},
    )
    assert s.excluded_rows == (4, 9)
    assert s.metadata.sex == "female" and s.metadata.mode == "cycle"
    back = AnalysisSettings.from_dict(json.loads(json.dumps(s.to_dict())))
    assert back == s


def test_missing_keys_take_defaults():
    s = AnalysisSettings.from_dict({"averaging": {"method": "time_bin", "size": 15}})
    assert s.averaging == AveragingSpec("time_bin", 15) and s.outlier_k_sd == 3.0


@pytest.mark.parametrize(
    "data, name",
    [
        ({"version": SETTINGS_VERSION + 1}, "version"),
        ({"colour": "red"}, "settings"),
        ({"excluded_rows": [0]}, "excluded_rows"),
        ({"excluded_rows": [2.5]}, "excluded_rows"),
        ({"excluded_rows": "12"}, "excluded_rows"),
        ({"outliers": {"window_breaths": 8}}, "outlier_window_breaths"),
        ({"outliers": {"k_sd": 0.2}}, "outlier_k_sd"),
        ({"vt1_override": {"t_s": 10, "vo2_ml_min": 900}}, "override"),
        ({"vt1_override": {"when": 10}}, "override"),
        ({"plateau_threshold_ml_min": -1}, "plateau_threshold_ml_min"),
        ({"metadata": {"body_mass_kg": 5}}, "body_mass_kg"),
        ({"metadata": {"sex": "x"}}, "sex"),
        ({"metadata": {"eye_colour": "x"}}, "metadata"),
    ],
)
def test_invalid_values_name_the_parameter(data, name):
    with pytest.raises(InvalidParameter, match=name):
        AnalysisSettings.from_dict(data)


def test_metadata_apply_replaces_only_set_values():
    meta = {"body_mass_kg": 80.0, "age_y": 40.0}
    assert MetadataOverrides(age_y=41).apply(meta) == {"body_mass_kg": 80.0, "age_y": 41.0}
