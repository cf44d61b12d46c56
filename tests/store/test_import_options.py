"""Import options (sheet, gas unit, time format) chosen at import are used and kept with the test.

A fictional Saltmarsh Exercise Lab workbook is built here from a demo session: a notes sheet, a
sheet in seconds and L/min, and a sheet in decimal minutes and mL/min. Unit factors: 1 L/min =
1000 mL/min and 1 min = 60 s (SI, common practice).
"""

from __future__ import annotations

import io

import numpy as np
import pytest

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.io import ColumnMapping, import_bytes, read_session, session_to_text
from store import open_store
from tests.support import ROOT

CYCLE = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"


def _workbook() -> bytes:
    from openpyxl import Workbook

    b = read_session(CYCLE).breaths
    wb = Workbook()
    wb.active.title = "Notes"
    wb.active.append(["Saltmarsh Exercise Lab — fictional workbook"])
    seconds = wb.create_sheet("Seconds")
    seconds.append(["Time", "VO2", "VCO2", "VE"])
    minutes = wb.create_sheet("Minutes")
    minutes.append(["Time", "VO2", "VCO2", "VE"])
    for t, vo2, vco2, ve in b[[C.T_S, C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN]].itertuples(index=False):
        seconds.append([float(t), vo2 / 1000.0, vco2 / 1000.0, float(ve)])
        minutes.append([t / 60.0, float(vo2), float(vco2), float(ve)])
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


@pytest.fixture
def real_store(store_url, clock):
    store = open_store(store_url, clock=clock)  # real AnalysisBridge
    yield store
    store.close()


def test_sheet_gas_unit_and_time_format_are_used_and_stored(real_store):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    raw = _workbook()
    options = {"sheet": "Minutes", "gas_unit": "ml_min", "time_format": "min"}
    res = real_store.import_test(raw, file_name="ramp.xlsx", actor=rhea, person_code="SEL-0107", options=options)
    assert res.results_error is None
    record = real_store.get_test(res.test_id)
    assert record.import_options == options
    original = read_session(CYCLE).breaths
    stored = real_store.load_session(res.test_id).breaths
    assert len(stored) == len(original)
    np.testing.assert_allclose(stored[C.T_S], original[C.T_S], atol=1e-3)  # minutes x 60 = seconds
    np.testing.assert_allclose(stored[C.VO2_ML_MIN], original[C.VO2_ML_MIN], rtol=1e-6)  # not x1000
    # The stored mapping and options repeat the conversion exactly.
    name, kept = real_store.raw_file(res.test_id)
    again = import_bytes(kept, file_name=name, mapping=ColumnMapping.from_dict(record.mapping), **record.import_options)
    assert session_to_text(again.session) == real_store.session_text(res.test_id)


def test_unknown_import_option_is_refused_before_anything_is_written(real_store):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    with pytest.raises(InvalidParameter, match="options"):
        real_store.import_test(_workbook(), file_name="ramp.xlsx", actor=rhea, options={"delimiter": ";"})
    with pytest.raises(InvalidParameter, match="time_format"):
        real_store.import_test(_workbook(), file_name="ramp.xlsx", actor=rhea, options={"time_format": "fortnights"})
    assert real_store.list_tests() == []
