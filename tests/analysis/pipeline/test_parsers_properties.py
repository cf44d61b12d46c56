"""Property tests (hypothesis) for the small parsers of this area: averaging option text,
settings JSON and formula-safe CSV cells."""

import json

from hypothesis import given, settings as hsettings
from hypothesis import strategies as st

from analysis.breaths import AveragingSpec
from analysis.errors import InvalidParameter
from analysis.exports import FORMULA_TRIGGERS, safe_csv_cell
from analysis.settings import AnalysisSettings, MetadataOverrides, ThresholdOverride
from tidemark.commands.analyze import parse_averaging


@given(st.text(max_size=40))
def test_parse_averaging_accepts_or_names_the_option(text):
    try:
        spec = parse_averaging(text)
    except InvalidParameter as exc:
        assert exc.name in ("--averaging", "method", "size")
    else:
        assert isinstance(spec, AveragingSpec)


@given(st.integers(min_value=3, max_value=60))
def test_parse_averaging_round_trips_time_bins(size):
    try:
        spec = AveragingSpec("time_bin", size)
    except InvalidParameter:
        return  # outside the averaging module's own limits
    assert parse_averaging(f"time_bin:{size}") == spec


@given(st.text(max_size=30))
def test_safe_csv_cell_never_starts_a_formula_and_keeps_the_text(text):
    out = safe_csv_cell(text)
    assert not out.startswith(FORMULA_TRIGGERS)
    assert out == text or (out == "'" + text and text.startswith(FORMULA_TRIGGERS))


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_safe_csv_cell_keeps_numbers_as_numbers(x):
    assert float(safe_csv_cell(x)) == x


@hsettings(max_examples=60)
@given(
    excluded=st.lists(st.integers(min_value=1, max_value=5000), max_size=20),
    restored=st.lists(st.integers(min_value=1, max_value=5000), max_size=20),
    k=st.floats(min_value=1, max_value=10),
    window=st.sampled_from([5, 7, 9, 11, 21]),
    t_s=st.one_of(st.none(), st.floats(min_value=0, max_value=3000)),
    mass=st.one_of(st.none(), st.floats(min_value=20, max_value=300)),
    plateau=st.floats(min_value=10, max_value=1000),
)
def test_settings_json_round_trip(excluded, restored, k, window, t_s, mass, plateau):
    s = AnalysisSettings(
        excluded_rows=excluded,
        restored_rows=restored,
        outlier_k_sd=k,
        outlier_window_breaths=window,
        vt1_override=ThresholdOverride(t_s=t_s) if t_s is not None else None,
        metadata=MetadataOverrides(body_mass_kg=mass),
        plateau_threshold_ml_min=plateau,
    )
    assert AnalysisSettings.from_dict(json.loads(json.dumps(s.to_dict()))) == s
    assert list(s.excluded_rows) == sorted(set(excluded))
