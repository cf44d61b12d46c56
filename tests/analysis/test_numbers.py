"""The one reading of a loosely typed value as a finite number (common practice: NaN and
infinities are "no value", never a number to show or store)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from analysis.numbers import finite_or_none


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
