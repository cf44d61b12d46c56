"""The session reader's two ways through a file's body give the same session and the same problems.

A plain body (no quotes, no blank lines, every cell a number or empty) is read by pandas' C
parser; anything else cell by cell. Random files with awkward cells, blank lines, CRLF line
ends, quotes, short and long rows are read both ways and must agree exactly: the same breath
table (values, dtypes, line numbers), flags and metadata, or the same rejection message.
"""

from __future__ import annotations

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from analysis.errors import ImportRejected
from analysis.io import read_session
from analysis.io import session_file as SF

HEADER = ["t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "phase", "marker"]

NUMBER = st.one_of(
    st.floats(min_value=0, max_value=5000, allow_nan=False).map(lambda x: f"{x:.6g}"),
    st.floats(min_value=0, max_value=5000, allow_nan=False).map(repr),
    st.integers(min_value=0, max_value=4000).map(str),
)
ODD = st.sampled_from(
    ["", " 300 ", "\t12", "NA", "n/a", "nan", "NaN", "-nan", "+nan", "inf", "-Infinity", "1e999", "1e-999",
     "abc", "1.2.3", "5.", ".5", "+7", "1e3", "1E+03", "−300", "0x10", "1_000", "1d3", "-", ".", '"250"', "2,5"]
)
TEXT = st.sampled_from(["", "rest", "Rest ", "warm-up", "ramp", "exercise", "recovery", "odd label", "NA", "-", "x y"])


@st.composite
def session_files(draw) -> bytes:
    n = draw(st.integers(min_value=0, max_value=12))
    t = 0.0
    lines = ["# body_mass_kg: 70", "# subject_id: P-1", ",".join(HEADER)]
    for _ in range(n):
        t += draw(st.sampled_from([0.0, 2.5, 3.0, 20.0, -1.0]))
        cells = [f"{t:g}"] + [draw(st.one_of(NUMBER, NUMBER, NUMBER, ODD)) for _ in range(4)] + [draw(TEXT), draw(TEXT)]
        if draw(st.integers(0, 9)) == 0:
            cells = cells[: draw(st.integers(1, len(cells)))]  # a short row
        if draw(st.integers(0, 14)) == 0:
            cells.append("1")  # a long row
        lines.append(",".join(cells))
        if draw(st.integers(0, 14)) == 0:
            lines.append(draw(st.sampled_from(["", "  "])))
    text = "\n".join(lines) + draw(st.sampled_from(["\n", "", "\n\n"]))
    if draw(st.booleans()):
        text = text.replace("\n", "\r\n")
    return text.encode()


def _read(data: bytes, *, cell_by_cell: bool, monkeypatch) -> object:
    with monkeypatch.context() as m:
        if cell_by_cell:
            m.setattr(SF, "_plain_body", lambda *a, **k: None)
        try:
            return read_session(data, file_name="p.session.csv")
        except ImportRejected as exc:
            return str(exc)


def _same(a: object, b: object) -> None:
    if isinstance(a, str) or isinstance(b, str):
        assert a == b
        return
    pd.testing.assert_frame_equal(a.breaths, b.breaths, check_exact=True)
    pd.testing.assert_frame_equal(a.flags, b.flags, check_exact=True)
    assert a.meta == b.meta


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(session_files())
def test_both_readers_agree(monkeypatch, data):
    _same(_read(data, cell_by_cell=False, monkeypatch=monkeypatch), _read(data, cell_by_cell=True, monkeypatch=monkeypatch))


@pytest.mark.parametrize(
    "cell, expected",
    [("", "empty"), ("inf", "is not a number"), ("nan", "empty"), ("-nan", "is not a number"), ("abc", "is not a number")],
)
def test_required_cells_named_by_line_and_column_on_both_paths(monkeypatch, cell, expected):
    data = f"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,{cell},255,10.5\n".encode()
    fast = _read(data, cell_by_cell=False, monkeypatch=monkeypatch)
    assert fast == _read(data, cell_by_cell=True, monkeypatch=monkeypatch)
    assert expected in fast and "line 3" in fast and "vo2_ml_min" in fast


def test_plain_body_is_read_by_the_fast_path(monkeypatch):
    # a session file as Tidemark writes it takes the C parser; the result has the file's line numbers
    calls = []
    original = SF._plain_body
    monkeypatch.setattr(SF, "_plain_body", lambda *a, **k: calls.append(1) or original(*a, **k))
    s = read_session(b"# a: 1\nt_s,vo2_ml_min,vco2_ml_min,ve_l_min,hr_bpm,phase\n0,300,250,10,,rest\n3,310,255,10.5,90,Ramp\n")
    assert calls and s.breaths["source_row"].tolist() == [3, 4]
    assert s.breaths["phase"].tolist() == ["rest", "exercise"]


_FOUR = {"t_s": 0, "vo2_ml_min": 1, "vco2_ml_min": 2, "ve_l_min": 3}


@pytest.mark.parametrize(
    "body",
    [
        "0,300,250\n3,310,255,10.5,1\n",  # a short and a long line: as many commas in all as four cells a line
        "0,300,250\n3,310,255,10.5\n",  # a short line
        "0,300,250,10\n\n3,310,255,10.5\n",  # a blank line
        "\n0,300,250,10\n",  # a blank first line
        "0,300,250,10\n3,310,255,10.5,\n",  # an empty fifth cell
    ],
)
def test_lines_of_another_width_leave_the_fast_path(body: str) -> None:
    # the fast path counts commas in all and lets the parser refuse a line with too many; every
    # other body goes cell by cell, where the problem is worded with its line
    assert SF._plain_body(body, first_line=2, width=4, columns=_FOUR, text_columns={}) is None
    plain = SF._plain_body("0,300,250,10\n3,310,255,10.5\n", first_line=2, width=4, columns=_FOUR, text_columns={})
    assert plain is not None and plain["source_row"].tolist() == [2, 3] and plain["ve_l_min"].tolist() == [10.0, 10.5]
