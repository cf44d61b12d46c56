"""Tidemark session files: write/read round trip and the strict reader's rejections."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analysis.errors import ImportRejected
from analysis.io import read_session, session_to_text, write_session
from analysis.session import Session
from tests.analysis.io.tables import breath_table


def _session(n: int = 30) -> Session:
    b = breath_table(n, seed=3)
    k = max(1, n // 6)
    b["phase"] = ["rest"] * k + ["exercise"] * (n - 2 * k) + ["recovery"] * k
    b["marker"] = [None] * n
    b.loc[min(5, n - 1), "marker"] = "start, ramp 25 W/min"
    meta = {"subject_id": "SEL-001", "sex": "F", "age_y": 34.0, "body_mass_kg": 61.5, "truth_vt1_s": 312.5, "lab": "Saltmarsh Exercise Lab"}
    return Session(meta=meta, breaths=b, source_name="x")


class TestRoundTrip:
    def test_values_meta_and_text_survive(self, tmp_path):
        s = _session()
        path = write_session(s, tmp_path / "t.session.csv")
        back = read_session(path)
        assert back.source_name == "t.session.csv"
        assert back.meta == s.meta
        for col in ("t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "work_w"):
            # written with 6 significant digits (common practice for a text exchange format)
            np.testing.assert_allclose(back.breaths[col], s.breaths[col], rtol=1e-5)
        assert back.breaths["phase"].tolist() == s.breaths["phase"].tolist()
        assert back.breaths.loc[5, "marker"] == "start, ramp 25 W/min"
        assert back.breaths["marker"].isna().sum() == len(s.breaths) - 1

    def test_source_row_is_the_line_number(self):
        text = session_to_text(_session(4))
        back = read_session(text.encode())
        lines = text.splitlines()
        for _, row in back.breaths.iterrows():
            assert lines[row["source_row"] - 1].split(",")[0] == f"{row['t_s']:g}"
        assert back.breaths["source_row"].tolist() == [8, 9, 10, 11]  # 6 meta lines, header on 7

    def test_bytes_and_path_give_the_same_session(self, tmp_path):
        s = _session(10)
        path = write_session(s, tmp_path / "a.session.csv")
        a = read_session(path)
        b = read_session(path.read_bytes(), file_name="a.session.csv")
        pd.testing.assert_frame_equal(a.breaths, b.breaths)
        assert a.meta == b.meta

    def test_line_breaks_in_markers_do_not_break_rows(self):
        s = _session(6)
        s.breaths.loc[2, "marker"] = "two\nlines"
        back = read_session(session_to_text(s).encode())
        assert back.breaths.loc[2, "marker"] == "two lines"
        assert len(back.breaths) == 6

    def test_litre_columns_are_converted(self):
        # 1 L/min = 1000 mL/min (SI, common practice)
        data = b"t_s,vo2_l_min,vco2_l_min,ve_l_min\n0,1.5,1.2,40\n3,1.6,1.3,41\n"
        s = read_session(data)
        assert s.breaths["vo2_ml_min"].tolist() == [1500.0, 1600.0]
        assert s.breaths["vco2_ml_min"].tolist() == [1200.0, 1300.0]

    def test_flags_are_filled(self):
        data = b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min,hr_bpm\n0,1000,1700,40,\n3,1000,900,40,120\n30,1000,900,40,121\n"
        s = read_session(data)
        got = set(map(tuple, s.flags[["source_row", "column", "reason"]].to_numpy().tolist()))
        assert (2, "rer", "RER outside 0.6-1.6") in got  # 1.7
        assert (2, "hr_bpm", "missing value") in got
        assert (4, "t_s", "gap over 15 s") in got
        assert len(s.breaths) == 3  # flagged, not dropped


class TestStrictReader:
    @pytest.mark.parametrize(
        ("data", "match"),
        [
            (b"", "empty"),
            (b"# subject_id: A\n", "no header"),
            (b"t_s,vo2,vco2_ml_min,ve_l_min\n0,1,2,3\n", r"line 1, column 'vo2': 'vo2' is not a Tidemark column"),
            (b"t_s,vco2_ml_min,ve_l_min\n0,2,3\n", "required column 'vo2_ml_min' is missing"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250\n", r"line 2: the line has 3 cells but the header has 4"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,3OO,250,10\n", r"line 3, column 'vo2_ml_min': '3OO' is not a number"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,,250,10\n", r"line 3, column 'vo2_ml_min'.*empty"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,300,1000,10\n", r"line 3, column 'vco2_ml_min': RER"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n5,300,250,10\n3,300,250,10\n", r"line 3, column 't_s': time goes backwards"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,12000,250,10\n", r"line 3, column 'vo2_ml_min': VO2 12000 mL/min is impossible"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0;300;250;10\n", r"line 2: the line has 1 cells"),
            (b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,0.5,250,10\n".replace(b"0.5", b"0\xe9"), "not valid UTF-8"),
            (b"t_s,t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,0,300,250,10\n", "appears twice"),
        ],
    )
    def test_rejections_name_line_and_column(self, data, match):
        with pytest.raises(ImportRejected, match=match) as info:
            read_session(data, file_name="bad.session.csv")
        assert "file 'bad.session.csv'" in str(info.value)

    def test_missing_path_is_rejected(self, tmp_path):
        with pytest.raises(ImportRejected, match="does not exist"):
            read_session(tmp_path / "nope.session.csv")

    def test_size_limit(self):
        with pytest.raises(ImportRejected, match="larger than"):
            read_session(b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n" + b"0,300,250,10\n" * 100, max_bytes=100)

    def test_at_most_ten_problems_listed(self):
        rows = b"".join(b"%d,x,250,10\n" % i for i in range(25))
        with pytest.raises(ImportRejected) as info:
            read_session(b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n" + rows)
        assert len(info.value.problems) == 11
        assert "15 more" in info.value.problems[-1].message


def test_missing_text_cells_are_none():
    # Text columns (phase, marker) hold None for an empty cell, never NaN, and keep object dtype.
    from analysis.io import read_session

    s = read_session(
        b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min,phase,marker\n0,300,250,10,rest,\n3,310,255,10.5,,ramp start\n",
        file_name="m.session.csv",
    )
    assert s.breaths["marker"].tolist() == [None, "ramp start"]
    assert s.breaths["marker"].dtype == object and s.breaths["phase"].dtype == object
