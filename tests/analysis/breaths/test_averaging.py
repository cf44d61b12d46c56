"""Averaging specs and average_breaths: hand-solvable cases and every invalid spec."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analysis.breaths import DEFAULT_AVERAGING, AveragingSpec, average_breaths
from analysis.errors import InvalidParameter


def frame(t, vo2, *, phase=None, **extra) -> pd.DataFrame:
    t = np.asarray(t, dtype=float)
    data = {"t_s": t, "vo2_ml_min": np.asarray(vo2, dtype=float), "vco2_ml_min": np.full(t.size, 900.0), "ve_l_min": np.full(t.size, 30.0)}
    data.update(extra)
    if phase is not None:
        data["phase"] = phase
    return pd.DataFrame(data)


ALL_SPECS = [AveragingSpec("breaths", 5), AveragingSpec("time_bin", 10), AveragingSpec("rolling_time", 30), AveragingSpec("middle_of_n", 7)]


class TestSpec:
    @pytest.mark.parametrize(
        "spec, label",
        [
            (AveragingSpec("breaths", 15), "15-breath rolling mean"),
            (AveragingSpec("time_bin", 10), "10 s bins"),
            (AveragingSpec("rolling_time", 30), "30 s rolling window"),
            (AveragingSpec("middle_of_n", 7), "middle 5 of 7 breaths"),
            (AveragingSpec("time_bin", 7.5), "7.5 s bins"),
        ],
    )
    def test_labels(self, spec, label):
        assert spec.label == label

    @pytest.mark.parametrize("spec", ALL_SPECS)
    def test_dict_round_trip(self, spec):
        assert AveragingSpec.from_dict(spec.to_dict()) == spec

    def test_default_is_valid(self):
        assert DEFAULT_AVERAGING.label == "10 s bins"

    def test_frozen(self):
        with pytest.raises(AttributeError):
            DEFAULT_AVERAGING.size = 5  # type: ignore[misc]

    @pytest.mark.parametrize(
        "method, size, match",
        [
            ("median", 10, "method"),
            ("breaths", 1, "size"),
            ("breaths", 7.5, "size"),
            ("breaths", 500, "size"),
            ("time_bin", 0, "size"),
            ("time_bin", -10, "size"),
            ("time_bin", float("nan"), "size"),
            ("time_bin", "10", "size"),
            ("time_bin", True, "size"),
            ("rolling_time", 1, "size"),
            ("middle_of_n", 6, "odd whole number"),
            ("middle_of_n", 1, "size"),
        ],
    )
    def test_invalid(self, method, size, match):
        with pytest.raises(InvalidParameter, match=match):
            AveragingSpec(method, size)

    def test_from_dict_invalid(self):
        with pytest.raises(InvalidParameter, match="averaging"):
            AveragingSpec.from_dict({"method": "time_bin"})


class TestAverage:
    @pytest.mark.parametrize("spec", ALL_SPECS)
    def test_constant_stays_constant(self, spec):
        t = np.cumsum(np.random.default_rng(1).uniform(1.5, 4.0, 200))
        out = average_breaths(frame(t, np.full(t.size, 1234.0)), spec)
        assert len(out) > 0
        assert np.allclose(out["vo2_ml_min"], 1234.0)
        assert np.allclose(out["ve_l_min"], 30.0)

    def test_bins_of_linear_series(self):
        # one breath per second, VO2 = 1000 + 10 t; 10 s bins [0,10), [10,20), ... hold
        # t = 0..9, 10..19: means 1045, 1145, ... at centres 5, 15, ... (hand-solved)
        t = np.arange(0.0, 60.0)
        out = average_breaths(frame(t, 1000.0 + 10.0 * t), AveragingSpec("time_bin", 10))
        assert out["t_s"].tolist() == [5.0, 15.0, 25.0, 35.0, 45.0, 55.0]
        assert out["vo2_ml_min"].tolist() == pytest.approx([1045.0, 1145.0, 1245.0, 1345.0, 1445.0, 1545.0])
        assert out["n_breaths"].tolist() == [10] * 6

    def test_rolling_time_on_linear_series_is_unbiased(self):
        # A centred window on a straight line returns the line's value at the centre.
        t = np.arange(0.0, 100.0)
        out = average_breaths(frame(t, 500.0 + 3.0 * t), AveragingSpec("rolling_time", 20))
        assert out["vo2_ml_min"].to_numpy() == pytest.approx(500.0 + 3.0 * out["t_s"].to_numpy())
        assert out["t_s"].min() == 10.0 and out["t_s"].max() == 89.0  # full windows only
        assert (out["n_breaths"] == 21).all()

    def test_breath_window(self):
        t = np.arange(10.0)
        out = average_breaths(frame(t, np.arange(10.0) * 100.0), AveragingSpec("breaths", 3))
        assert out["vo2_ml_min"].tolist() == pytest.approx([100.0 * k for k in range(1, 9)])
        assert out["t_s"].tolist() == pytest.approx(list(range(1, 9)))

    def test_middle_of_n_hand_solved(self):
        # window of 5: [1, 100, 3, 4, 5] -> drop 1 and 100 -> mean(3, 4, 5) = 4
        vals = [1.0, 100.0, 3.0, 4.0, 5.0, 6.0]
        out = average_breaths(frame(np.arange(6.0), vals), AveragingSpec("middle_of_n", 5))
        # second window [100, 3, 4, 5, 6] -> drop 3 and 100 -> mean(4, 5, 6) = 5
        assert out["vo2_ml_min"].tolist() == pytest.approx([4.0, 5.0])
        assert out["t_s"].tolist() == pytest.approx([2.0, 3.0])

    def test_phase_mode_carried(self):
        t = np.arange(0.0, 20.0)
        phase = ["rest"] * 7 + ["exercise"] * 13
        out = average_breaths(frame(t, np.ones(20), phase=phase), AveragingSpec("time_bin", 10))
        assert out["phase"].tolist() == ["rest", "exercise"]

    def test_missing_values_ignored(self):
        t = np.arange(0.0, 10.0)
        hr = np.array([100.0, np.nan, 102.0, np.nan, 104.0, np.nan, np.nan, np.nan, np.nan, np.nan])
        out = average_breaths(frame(t, np.ones(10), hr_bpm=hr), AveragingSpec("time_bin", 5))
        assert out["hr_bpm"].iloc[0] == pytest.approx(102.0)
        assert np.isnan(out["hr_bpm"].iloc[1])

    def test_empty(self):
        out = average_breaths(frame([], []), AveragingSpec("time_bin", 10))
        assert len(out) == 0 and "vo2_ml_min" in out.columns

    def test_input_not_changed(self):
        b = frame(np.arange(30.0), np.arange(30.0))
        before = b.copy()
        average_breaths(b, AveragingSpec("middle_of_n", 5))
        pd.testing.assert_frame_equal(b, before)

    def test_unsorted_rejected(self):
        with pytest.raises(InvalidParameter, match="sorted"):
            average_breaths(frame([0.0, 5.0, 3.0], [1, 2, 3]), AveragingSpec("time_bin", 10))

    def test_spec_type_checked(self):
        with pytest.raises(InvalidParameter, match="spec"):
            average_breaths(frame([0.0], [1.0]), {"method": "time_bin", "size": 10})  # type: ignore[arg-type]


# ---------------------------------------------------------------- properties (hypothesis)

@settings(max_examples=60, deadline=None)
@given(
    gaps=st.lists(st.floats(0.5, 8.0), min_size=1, max_size=120),
    values=st.lists(st.floats(100.0, 5000.0), min_size=120, max_size=120),
    spec=st.sampled_from(ALL_SPECS + [AveragingSpec("time_bin", 3.5), AveragingSpec("breaths", 2)]),
)
def test_means_stay_within_the_data_and_breaths_are_counted(gaps, values, spec):
    t = np.cumsum(gaps)
    v = np.asarray(values[: t.size])
    out = average_breaths(frame(t, v), spec)
    if len(out):
        assert out["vo2_ml_min"].min() >= v.min() - 1e-9
        assert out["vo2_ml_min"].max() <= v.max() + 1e-9
        assert out["t_s"].is_monotonic_increasing
        assert t.min() - spec.size <= out["t_s"].min() and out["t_s"].max() <= t.max() + spec.size
    if spec.method == "time_bin":
        assert int(out["n_breaths"].sum()) == t.size  # every breath in exactly one bin


@pytest.mark.parametrize(
    "spec",
    [AveragingSpec("time_bin", 10), AveragingSpec("rolling_time", 30), AveragingSpec("breaths", 7), AveragingSpec("middle_of_n", 5)],
)
def test_phase_labels_stand_in_for_the_phase_column(spec):
    # handing the labels in gives the very frame that a phase column of the same labels gives
    rng = np.random.default_rng(11)
    n = 180
    b = pd.DataFrame(
        {
            "t_s": np.cumsum(rng.uniform(1.5, 3.5, n)),
            "vo2_ml_min": rng.normal(1500.0, 60.0, n),
            "vco2_ml_min": rng.normal(1400.0, 60.0, n),
            "ve_l_min": rng.normal(45.0, 3.0, n),
        }
    )
    labels = np.array(["rest"] * 40 + ["exercise"] * 110 + ["recovery"] * 30, dtype=object)
    expected = average_breaths(b.assign(phase=labels), spec)
    got = average_breaths(b, spec, phase_labels=labels)
    pd.testing.assert_frame_equal(got, expected, check_exact=True)
    assert set(got["phase"]) == {"rest", "exercise", "recovery"}


def test_phase_labels_of_the_wrong_length_are_refused():
    b = pd.DataFrame({"t_s": [1.0, 2.0, 3.0], "vo2_ml_min": [1.0, 2.0, 3.0]})
    with pytest.raises(InvalidParameter, match="phase_labels"):
        average_breaths(b, AveragingSpec("breaths", 2), phase_labels=np.array(["rest", "rest"], dtype=object))
