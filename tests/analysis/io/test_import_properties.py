"""Property tests: the importer only ever raises ImportRejected, and valid tables round-trip."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from analysis.errors import ImportRejected
from analysis.io import import_bytes, read_session, session_to_text

FAST = settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _import_or_reject(data: bytes) -> None:
    try:
        out = import_bytes(data, file_name="fuzz.csv")
    except ImportRejected as exc:
        assert exc.problems and all(p.file == "fuzz.csv" for p in exc.problems)
        return
    b = out.session.breaths
    assert len(b) > 0
    assert np.all(np.diff(b["t_s"].to_numpy()) >= 0)
    assert b["source_row"].is_unique


@FAST
@given(st.binary(max_size=400))
def test_arbitrary_bytes_never_crash(data):
    _import_or_reject(data)


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=300))
def test_arbitrary_bytes_after_a_valid_header_never_crash(tail):
    _import_or_reject(b"Time,VO2,VCO2,VE\n0,300,250,10\n" + tail)


CELL = st.one_of(
    st.sampled_from(["", "-", "n/a", "0", "1,5", "2.5", "300", "0:30", "1:02:03", "abc", "1e3", "-4", "NaN", "inf", '"', "#x"]),
    st.integers(-50, 5000).map(str),
    st.floats(-10, 5000, allow_nan=False).map(lambda f: f"{f:.3f}"),
    st.text(alphabet="VOCEHRt ()/%:;,.-0123456789", max_size=8),
)
HEADER = st.sampled_from(["Time", "t", "VO2", "V'O2 (L/min)", "VCO2", "VE", "HR", "Load", "Marker", "Phase", "x", ""])


@st.composite
def csvish(draw) -> bytes:
    sep = draw(st.sampled_from([",", ";", "\t", "|", " "]))
    width = draw(st.integers(1, 7))
    lines = [sep.join(draw(st.lists(HEADER, min_size=width, max_size=width)))]
    for _ in range(draw(st.integers(0, 12))):
        n = draw(st.integers(0, width + 1))
        lines.append(sep.join(draw(st.lists(CELL, min_size=n, max_size=n))))
    pre = draw(st.lists(st.sampled_from(["", "# subject_id: X", "Lab report", "a;b", "1,2,3"]), max_size=3))
    eol = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    return eol.join(pre + lines).encode(draw(st.sampled_from(["utf-8", "cp1252", "utf-16"])))


@FAST
@given(csvish())
def test_csvish_text_never_crashes(data):
    _import_or_reject(data)


@st.composite
def valid_table(draw):
    n = draw(st.integers(1, 25))
    steps = draw(st.lists(st.floats(0.5, 10, allow_nan=False), min_size=n, max_size=n))
    t = np.round(np.cumsum(steps), 2)
    vo2 = np.array(draw(st.lists(st.floats(200, 5000), min_size=n, max_size=n))).round(1)
    rer = np.array(draw(st.lists(st.floats(0.7, 1.3), min_size=n, max_size=n)))
    vco2 = (vo2 * rer).round(1)
    ve = np.array(draw(st.lists(st.floats(5, 200), min_size=n, max_size=n))).round(2)
    sep = draw(st.sampled_from([",", ";", "\t"]))
    decimal = draw(st.sampled_from([".", ","])) if sep != "," else "."
    litres = draw(st.booleans())
    unit = 1000.0 if litres else 1.0

    def num(x: float, digits: int) -> str:
        return f"{x:.{digits}f}".replace(".", decimal)

    head = sep.join(["Time", "VO2 (L/min)" if litres else "VO2", "VCO2 (L/min)" if litres else "VCO2", "VE"])
    rows = [sep.join([num(a, 2), num(b / unit, 4), num(c / unit, 4), num(d, 2)]) for a, b, c, d in zip(t, vo2, vco2, ve)]
    return ("\n".join([head, *rows]) + "\n").encode(), t, vo2, vco2, ve


@settings(max_examples=40, deadline=None)
@given(valid_table())
def test_generated_valid_table_round_trips(case):
    data, t, vo2, vco2, ve = case
    out = import_bytes(data, file_name="gen.csv")
    b = out.session.breaths
    np.testing.assert_allclose(b["t_s"], t, atol=1e-9)
    np.testing.assert_allclose(b["vo2_ml_min"], vo2, atol=0.06)
    np.testing.assert_allclose(b["vco2_ml_min"], vco2, atol=0.06)
    np.testing.assert_allclose(b["ve_l_min"], ve, atol=1e-9)
    # and through the session file: written with 6 significant digits
    back = read_session(session_to_text(out.session).encode(), file_name="gen.session.csv")
    np.testing.assert_allclose(back.breaths["vo2_ml_min"], b["vo2_ml_min"], rtol=1e-5)
    pairs = ["column", "reason"]
    assert back.flags[pairs].to_numpy().tolist() == out.session.flags[pairs].to_numpy().tolist()


@FAST
@given(st.lists(st.text(max_size=20), max_size=12))
def test_guess_mapping_on_any_headers(headers):
    from analysis import columns as C
    from analysis.io import ColumnMapping, guess_mapping

    m = guess_mapping(headers)
    targets = list(m.mapped())
    assert len(targets) == len(set(targets)) and set(targets) <= set(C.COLUMNS)
    assert set(m.columns) <= set(headers)
    assert ColumnMapping.from_dict(m.to_dict()) == m


XLSX_CELL = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-100, 5000),
    st.floats(-10, 5000, allow_nan=False),
    st.sampled_from(["", "abc", "0:30", "1,5", "VO2", "Time", "=1+1", "#N/A"]),
    st.times(),
    st.datetimes(min_value=__import__("datetime").datetime(2020, 1, 1), max_value=__import__("datetime").datetime(2030, 1, 1)),
    st.timedeltas(min_value=__import__("datetime").timedelta(0), max_value=__import__("datetime").timedelta(hours=2)),
)


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.lists(XLSX_CELL, min_size=1, max_size=6), min_size=1, max_size=8), st.booleans())
def test_arbitrary_workbooks_never_crash(rows, with_header):
    import io

    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    if with_header:
        ws.append(["Time", "VO2", "VCO2", "VE", "HR", "Marker"])
    for row in rows:
        ws.append(row)
    buf = io.BytesIO()
    wb.save(buf)
    try:
        out = import_bytes(buf.getvalue(), file_name="fuzz.xlsx")
    except ImportRejected as exc:
        assert all(p.file == "fuzz.xlsx" for p in exc.problems)
        return
    assert len(out.session.breaths) > 0


PREAMBLE = st.sampled_from(["Saltmarsh Exercise Lab", "", "Name: invented person", "# notes: practice run", "Protocol: ramp"])
FOOTER = st.sampled_from(["", "Mean", "Max;1;2;3", "Summary: done", "End of test"])


@settings(max_examples=30, deadline=None)
@given(valid_table(), st.lists(PREAMBLE, max_size=4), st.lists(FOOTER, max_size=3))
def test_junk_around_a_valid_table_changes_no_breath(case, pre, post):
    data = case[0]
    clean = import_bytes(data, file_name="gen.csv").session.breaths
    text = "\n".join(pre) + ("\n" if pre else "") + data.decode() + "\n".join(post) + ("\n" if post else "")
    out = import_bytes(text.encode(), file_name="gen.csv")
    got = out.session.breaths
    cols = ["t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min"]
    assert got[cols].equals(clean[cols])
    assert (got["source_row"] - clean["source_row"]).nunique() == 1  # shifted by the lines above
