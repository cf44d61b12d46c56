"""VE/VCO2 slope, nadir and OUES on exact synthetic lines (hand-solvable cases)."""

import numpy as np
import pytest

from analysis.errors import AnalysisError, InvalidParameter
from analysis.indices import oues, ve_vco2_nadir, ve_vco2_slope


class TestVeVco2Slope:
    def test_exact_line(self):
        # VE = 28 * VCO2(L/min) + 4 exactly: the least-squares line must return 28 and 4
        # (definition of the slope, Arena et al. 2007).
        vco2 = np.linspace(500, 3500, 40)
        ve = 28.0 * vco2 / 1000 + 4.0
        fit = ve_vco2_slope(vco2, ve)
        assert fit.slope == pytest.approx(28.0, abs=1e-9)
        assert fit.intercept == pytest.approx(4.0, abs=1e-9)
        assert fit.r2 == pytest.approx(1.0)
        assert fit.n == 40

    def test_nan_pairs_ignored(self):
        vco2 = [1000, np.nan, 2000, 3000]
        ve = [30, 99, 55, 80]
        assert ve_vco2_slope(vco2, ve).slope == pytest.approx(25.0)

    def test_too_few_points(self):
        with pytest.raises(AnalysisError, match="at least 3"):
            ve_vco2_slope([1000, 2000], [30, 55])

    def test_constant_vco2(self):
        with pytest.raises(AnalysisError, match="do not vary"):
            ve_vco2_slope([1000, 1000, 1000], [30, 31, 32])

    def test_unequal_lengths(self):
        with pytest.raises(InvalidParameter, match="equal length"):
            ve_vco2_slope([1000, 2000, 3000], [30, 55])


class TestVeVco2Nadir:
    def test_lowest_ratio(self):
        # ratios 30, 25, 27.5 -> nadir 25 (hand-computed)
        assert ve_vco2_nadir([1000, 2000, 2000], [30, 50, 55]) == pytest.approx(25.0)

    def test_zero_vco2_ignored(self):
        assert ve_vco2_nadir([0, 2000], [10, 50]) == pytest.approx(25.0)

    def test_empty(self):
        with pytest.raises(AnalysisError):
            ve_vco2_nadir([], [])


class TestOues:
    def test_exact_log_line(self):
        # VO2 = 2100 * log10(VE) - 600 exactly (Baba 1996 definition, from memory).
        ve = np.linspace(10, 120, 50)
        vo2 = 2100.0 * np.log10(ve) - 600.0
        fit = oues(vo2, ve)
        assert fit.slope == pytest.approx(2100.0, rel=1e-9)
        assert fit.intercept == pytest.approx(-600.0, abs=1e-6)

    def test_nonpositive_ve_ignored(self):
        assert oues([0, 500, 2500, 4500], [0, 10, 100, 1000]).slope == pytest.approx(2000.0)

    def test_bad_input_type(self):
        with pytest.raises(InvalidParameter, match="vo2_ml_min"):
            oues("abc", [1, 2, 3])
