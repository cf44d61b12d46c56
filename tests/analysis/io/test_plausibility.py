"""A file spanning many hours is imported but flagged for the reviewer."""

from __future__ import annotations

import numpy as np

from analysis.io.plausibility import LONGEST_PLAUSIBLE_TEST_S, duration_warning, format_duration


def test_a_22_hour_file_gets_a_warning_naming_its_span():
    t_s = np.linspace(0.0, 22 * 3600.0, 2000)
    text = duration_warning(t_s)
    assert text is not None and "22 h 00 min" in text and "time column" in text


def test_an_ordinary_test_gets_none():
    assert duration_warning(np.arange(0.0, 1500.0, 3.0)) is None
    assert duration_warning([0.0, LONGEST_PLAUSIBLE_TEST_S]) is None  # the limit itself is accepted
    assert duration_warning([0.0, LONGEST_PLAUSIBLE_TEST_S + 1.0]) is not None
    assert duration_warning([np.nan, 5.0]) is None  # one finite time: no span


def test_format_duration():
    assert format_duration(79200.0) == "22 h 00 min"
    assert format_duration(3725.0) == "1 h 02 min"
    assert format_duration(754.4) == "12:34 min"
