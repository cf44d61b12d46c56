"""O2 pulse, heart-rate reserve and 1-minute heart-rate recovery."""

import numpy as np
import pytest

from analysis.errors import AnalysisError, InvalidParameter
from analysis.indices import (
    hr_recovery_1min_bpm,
    hr_reserve_bpm,
    o2_pulse_ml_beat,
    o2_pulse_peak_ml_beat,
    pct_hr_reserve,
)


class TestO2Pulse:
    def test_series(self):
        # O2 pulse = VO2 / HR (Wasserman et al. 2012, from memory): 3000/180 = 16.67 mL/beat
        out = o2_pulse_ml_beat([3000.0, 1200.0], [180.0, 100.0])
        np.testing.assert_allclose(out, [3000 / 180, 12.0])

    def test_missing_or_dropped_hr_is_nan(self):
        out = o2_pulse_ml_beat([1000.0, 1000.0], [np.nan, 0.0])
        assert np.isnan(out).all()

    def test_peak(self):
        # pulses 10.0, 14.29, 16.11 mL/beat -> peak 2900/180
        assert o2_pulse_peak_ml_beat([1000, 2000, 2900], [100, 140, 180]) == pytest.approx(2900 / 180)

    def test_peak_without_hr(self):
        with pytest.raises(AnalysisError, match="O2 pulse"):
            o2_pulse_peak_ml_beat([1000.0], [np.nan])


class TestHeartRateReserve:
    def test_karvonen(self):
        # Karvonen 1957 (from memory): reserve 190-60 = 130; HR 125 is 50 % of it.
        assert hr_reserve_bpm(hr_max_bpm=190, hr_rest_bpm=60) == 130.0
        assert pct_hr_reserve(125, hr_max_bpm=190, hr_rest_bpm=60) == pytest.approx(50.0)
        np.testing.assert_allclose(pct_hr_reserve([60, 190], hr_max_bpm=190, hr_rest_bpm=60), [0, 100])

    def test_max_below_rest(self):
        with pytest.raises(InvalidParameter, match="hr_max_bpm"):
            hr_reserve_bpm(hr_max_bpm=60, hr_rest_bpm=70)


class TestHrRecovery:
    def test_interpolated_drop(self):
        # Cole et al. 1999 (from memory): HRR1 = HR at end of exercise - HR one minute later.
        t = np.arange(0, 301, 10.0)
        hr = np.where(t <= 200, 100 + 0.4 * t, 180 - 0.5 * (t - 200))  # falls 30 bpm in 60 s
        assert hr_recovery_1min_bpm(t, hr, t_end_exercise_s=200) == pytest.approx(30.0)

    def test_short_recovery_gives_none(self):
        assert hr_recovery_1min_bpm([0, 100, 130], [100, 170, 160], t_end_exercise_s=100) is None
