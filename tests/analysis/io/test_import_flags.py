"""Suspicious but usable rows are flagged and kept, never dropped."""

from __future__ import annotations

import pandas as pd
import pytest

from analysis import columns as C
from analysis.io import (
    REASON_ABOVE,
    REASON_BELOW,
    REASON_DUPLICATE_TIME,
    REASON_GAP,
    REASON_MISSING,
    REASON_PHASE,
    REASON_RER,
    describe_outcome,
    import_bytes,
)

DATA = (
    b"Time,VO2,VCO2,VE,HR,Phase\n"
    b"0,300,250,10,70,rest\n"  # line 2: fine
    b"3,300,150,10,70,rest\n"  # line 3: RER 0.50 (< 0.6)
    b"3,310,260,11,,rest\n"  # line 4: duplicate time, missing HR
    b"25,320,270,11,71,sprint\n"  # line 5: gap 22 s (> 15 s), unknown phase
    b"28,7500,6000,260,240,exercise\n"  # line 6: VO2 > 7000 flag limit, VE > 250, HR > 230
    b"31,40,30,1.5,24,recovery\n"  # line 7: VO2 < 50, VCO2 < 40, VE < 2, HR < 25
)


@pytest.fixture(scope="module")
def outcome():
    return import_bytes(DATA, file_name="flags.csv")


def test_no_row_is_dropped(outcome):
    assert outcome.session.breaths["source_row"].tolist() == [2, 3, 4, 5, 6, 7]


def test_each_flag(outcome):
    got = set(map(tuple, outcome.session.flags[["source_row", "column", "reason"]].to_numpy().tolist()))
    # limits from analysis/columns.py (common practice, chosen generously)
    expected = {
        (3, "rer", REASON_RER),
        (4, "t_s", REASON_DUPLICATE_TIME),
        (4, "hr_bpm", REASON_MISSING),
        (5, "t_s", REASON_GAP),
        (5, "phase", REASON_PHASE),
        (6, "vo2_ml_min", REASON_ABOVE),
        (6, "ve_l_min", REASON_ABOVE),
        (6, "hr_bpm", REASON_ABOVE),
        (7, "vo2_ml_min", REASON_BELOW),
        (7, "vco2_ml_min", REASON_BELOW),
        (7, "ve_l_min", REASON_BELOW),
        (7, "hr_bpm", REASON_BELOW),
    }
    assert got == expected
    assert list(outcome.session.flags.columns) == ["source_row", "column", "reason"]


def test_flag_limits_match_columns_module():
    assert C.RER_FLAG_BELOW == 0.6 and C.RER_FLAG_ABOVE == 1.6
    assert C.COLUMNS["vo2_ml_min"].flag_above == 7000


def test_summary_counts_rows_by_reason(outcome):
    lines = describe_outcome(outcome)
    flagged = next(line for line in lines if line.startswith("flagged rows"))
    assert flagged.startswith("flagged rows: 5 (kept;")
    assert "above usual range: 1" in flagged and "below usual range: 1" in flagged
    assert "breaths: 6, duration 0:31 (31.0 s" in lines[0]


def test_rer_exactly_at_limits_is_not_flagged():
    data = b"Time,VO2,VCO2,VE\n0,1000,600,20\n3,1000,1600,40\n"
    flags = import_bytes(data, file_name="edge.csv").session.flags
    assert flags.empty


def test_entirely_empty_optional_column_is_left_out_not_flagged():
    data = b"Time,VO2,VCO2,VE,SpO2\n0,300,250,10,\n3,310,260,11,\n"
    out = import_bytes(data, file_name="e.csv")
    assert "spo2_pct" not in out.session.breaths.columns
    assert out.session.flags.empty
    assert any("'SpO2' (spo2_pct) holds no values" in n for n in out.notes)
    assert isinstance(out.session.breaths, pd.DataFrame)
