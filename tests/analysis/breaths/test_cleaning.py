"""Cleaning: outlier breaths, the reviewer's restorations and exclusions, in one list by source row."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis.breaths.cleaning import clean_breaths


def _breaths(n: int = 200) -> pd.DataFrame:
    rng = np.random.default_rng(4)
    t = np.arange(n) * 2.5
    base = 800.0 + 5.0 * t
    b = pd.DataFrame(
        {
            "source_row": np.arange(2, n + 2),
            "t_s": t,
            "vo2_ml_min": base + 40.0 * rng.standard_normal(n),
            "vco2_ml_min": 0.9 * base + 40.0 * rng.standard_normal(n),
            "ve_l_min": base / 40.0 + 1.0 * rng.standard_normal(n),
        }
    )
    b.loc[100, "vo2_ml_min"] *= 2.0  # coughs (common practice: about twice the volume); rows 102 and 152
    b.loc[150, "ve_l_min"] *= 2.0
    return b


def _auto_rows(b: pd.DataFrame) -> list[int]:
    return [e.source_row for e in clean_breaths(b, window_breaths=9, k_sd=3.0).excluded]


def test_outliers_and_reviewer_rows_in_one_list_by_source_row():
    b = _breaths()
    auto = _auto_rows(b)
    assert {102, 152} <= set(auto)
    # 152 restored; 80 and 30 excluded by the reviewer (given out of order); 102 excluded by both
    # (stays an outlier); 999 is not in the file (kept, without a time)
    out = clean_breaths(b, window_breaths=9, k_sd=3.0, excluded_rows=(80, 30, 102, 999), restored_rows=(152,))
    rows = [e.source_row for e in out.excluded]
    assert rows == sorted(set(auto) - {152} | {30, 80, 999})
    by_row = {e.source_row: e for e in out.excluded}
    assert by_row[102].by == "auto" and by_row[102].column == "vo2_ml_min"
    assert by_row[102].value == pytest.approx(b.loc[100, "vo2_ml_min"])
    assert by_row[102].t_s == pytest.approx(250.0)
    assert (by_row[80].by, by_row[80].column, by_row[80].reason) == ("reviewer", "", "excluded by the reviewer")
    assert by_row[80].t_s == pytest.approx(195.0) and np.isnan(by_row[80].value)
    assert np.isnan(by_row[999].t_s)
    kept = out.breaths["source_row"].tolist()
    assert 152 in kept and not {30, 80, 102} & set(kept)
    assert len(out.breaths) == len(b) - len([r for r in rows if r != 999])
