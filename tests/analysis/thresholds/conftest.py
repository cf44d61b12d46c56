"""Fixtures for threshold tests: a small synthetic ramp, averaged, with its report."""

from __future__ import annotations

import pandas as pd
import pytest

from analysis.breaths import DEFAULT_AVERAGING, average_breaths
from analysis.thresholds import ThresholdReport, detect_thresholds
from tests.analysis.thresholds.synthetic import ramp_test


@pytest.fixture(scope="module")
def avg() -> pd.DataFrame:
    return average_breaths(ramp_test(seed=1, noise=0.5), DEFAULT_AVERAGING)


@pytest.fixture(scope="module")
def report(avg: pd.DataFrame) -> ThresholdReport:
    return detect_thresholds(avg)
