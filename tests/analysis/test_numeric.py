"""Loosely typed values read as finite numbers (common practice: NaN and
infinities are "no value", never a number to show or store)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from analysis.numeric import finite_or_none


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (2.5, 2.5),
        ("2.5", 2.5),
        (" 7 ", 7.0),
        (3, 3.0),
        (np.float32(1.5), 1.5),
        (np.int64(4), 4.0),
        (None, None),
        ("n/a", None),
        ("", None),
        (math.nan, None),
        (math.inf, None),
        (-math.inf, None),
        (np.nan, None),
        ([1.0], None),
    ],
)
def test_finite_or_none_reads_numbers_and_refuses_the_rest(value: object, expected: float | None) -> None:
    got = finite_or_none(value)
    assert got == expected
    assert got is None or type(got) is float


def test_column_mean_leaves_out_missing_values_and_unselected_rows() -> None:
    import pandas as pd

    from analysis.numeric import column_mean

    frame = pd.DataFrame({"hr_bpm": [60.0, np.nan, 70.0, 150.0], "work_w": [np.nan, np.nan, np.nan, 200.0]})
    rest = np.array([True, True, True, False])
    assert column_mean(frame, "hr_bpm", rest) == 65.0
    assert column_mean(frame, "hr_bpm", ~rest) == 150.0
    assert column_mean(frame, "work_w", rest) is None  # only missing values there
    assert column_mean(frame, "speed_kmh", rest) is None  # no such column
