"""Generic import: delimiters, decimal marks, junk around the table, time formats, units, xlsx."""

from __future__ import annotations

import numpy as np
import pytest

from analysis.io import ColumnMapping, import_bytes, list_sheets, read_headers
from tests.analysis.io.tables import breath_table, to_text
from tests.workbooks import xlsx_bytes

GENERIC = {
    "t_s": "Time",
    "vo2_ml_min": "VO2",
    "vco2_ml_min": "VCO2",
    "ve_l_min": "VE",
    "hr_bpm": "HR",
    "work_w": "Load",
}


def _assert_same(outcome, df, cols=("t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "work_w")):
    b = outcome.session.breaths
    assert len(b) == len(df)
    for c in cols:
        np.testing.assert_allclose(b[c].to_numpy(), df[c].to_numpy(), rtol=1e-9, atol=1e-9, err_msg=c)


@pytest.mark.parametrize(("sep", "decimal"), [(",", "."), (";", ","), ("\t", "."), ("\t", ","), (";", "."), ("|", ".")])
def test_delimiters_and_decimal_marks(sep, decimal):
    df = breath_table(25, seed=1)
    out = import_bytes(to_text(df, headers=GENERIC, sep=sep, decimal=decimal), file_name="e.txt")
    assert out.delimiter == sep
    assert out.decimal == decimal
    _assert_same(out, df)
    assert out.session.flags.empty


def test_comma_delimiter_with_quoted_decimal_commas():
    df = breath_table(12, seed=2)
    data = to_text(df, headers=GENERIC, sep=",", decimal=",")  # pandas quotes cells holding the delimiter
    out = import_bytes(data, file_name="q.csv")
    assert (out.delimiter, out.decimal) == (",", ",")
    _assert_same(out, df)


def test_header_and_footer_lines_are_skipped_and_listed():
    df = breath_table(20, seed=4)
    before = "Saltmarsh Exercise Lab\nTest report for: Mira Quell (invented)\nDate;2026-03-01\n\n"
    after = "\nSummary\nPeak VO2;2810\nMean;1500;1400;40\n"
    data = to_text(df, headers=GENERIC, sep=";", decimal=",", before=before, after=after)
    out = import_bytes(data, file_name="junk.csv")
    _assert_same(out, df)
    assert out.skipped_lines == [1, 2, 3, 4, 26, 27, 28, 29]
    assert out.session.breaths["source_row"].tolist() == list(range(6, 26))
    assert any("above the table header (line 5)" in n for n in out.notes)


def test_meta_lines_before_the_table_and_overrides():
    df = breath_table(8)
    before = "# subject_id: SEL-022\n# body_mass_kg: 70,5\n# notes: invented athlete\n"
    out = import_bytes(
        to_text(df, headers=GENERIC, before=before), file_name="m.csv", meta_overrides={"body_mass_kg": "72", "sex": "M"}
    )
    assert out.session.meta == {"subject_id": "SEL-022", "body_mass_kg": 72.0, "notes": "invented athlete", "sex": "M"}


def test_unit_row_under_the_header():
    data = b"Time;VO2;VCO2;VE\ns;L/min;L/min;L/min\n0;0,30;0,25;10\n3;0,32;0,27;11\n"
    out = import_bytes(data, file_name="u.csv")
    assert out.session.breaths["vo2_ml_min"].tolist() == [300.0, 320.0]
    assert out.gas_unit_detected == "l_min"
    assert any("line 2 was read as the units" in n for n in out.notes)


class TestTime:
    # Time parsing reference: 1 min = 60 s, 1 h = 3600 s (SI).
    def test_mm_ss(self):
        data = b"Time,VO2,VCO2,VE\n0:00,300,250,10\n0:59,300,250,10\n1:00.5,300,250,10\n12:03,300,250,10\n75:10,300,250,10\n"
        out = import_bytes(data, file_name="t.csv")
        assert out.session.breaths["t_s"].tolist() == [0.0, 59.0, 60.5, 723.0, 4510.0]
        assert out.time_format_detected == "mm:ss"

    def test_h_mm_ss_with_fraction_and_decimal_comma(self):
        data = b"Time;VO2;VCO2;VE\n0:00:00;300;250;10\n0:01:05,25;300;250;10\n1:02:03;300;250;10\n"
        out = import_bytes(data, file_name="t.csv")
        assert out.session.breaths["t_s"].tolist() == [0.0, 65.25, 3723.0]
        assert out.time_format_detected == "h:mm:ss"

    def test_minutes_from_header_and_explicit(self):
        data = b"Time (min),VO2,VCO2,VE\n0,300,250,10\n0.5,300,250,10\n1.25,300,250,10\n"
        assert import_bytes(data, file_name="t.csv").session.breaths["t_s"].tolist() == [0.0, 30.0, 75.0]
        data = data.replace(b" (min)", b"")
        out = import_bytes(data, file_name="t.csv", time_format="min")
        assert out.session.breaths["t_s"].tolist() == [0.0, 30.0, 75.0]
        assert out.time_format_detected == "min"

    def test_plain_seconds(self):
        out = import_bytes(b"t,VO2,VCO2,VE\n0.0,300,250,10\n2.75,300,250,10\n", file_name="t.csv")
        assert out.session.breaths["t_s"].tolist() == [0.0, 2.75]
        assert out.time_format_detected == "s"


class TestGasUnit:
    # 1 L/min = 1000 mL/min (SI, common practice).
    def test_litres_detected_by_magnitude(self):
        df = breath_table(15)
        litres = df.assign(vo2_ml_min=df.vo2_ml_min / 1000, vco2_ml_min=df.vco2_ml_min / 1000)
        out = import_bytes(to_text(litres, headers=GENERIC), file_name="l.csv")
        assert out.gas_unit_detected == "l_min"
        _assert_same(out, df)
        assert any("by magnitude" in n for n in out.notes)

    def test_millilitres_detected_by_magnitude(self):
        out = import_bytes(to_text(breath_table(15), headers=GENERIC), file_name="m.csv")
        assert out.gas_unit_detected == "ml_min"

    def test_header_hint_wins_over_magnitude(self):
        data = b"Time,VO2 (mL/min),VCO2 (ml/min),VE\n0,300,250,10\n3,320,270,11\n"
        out = import_bytes(data, file_name="h.csv")
        assert out.gas_unit_detected == "ml_min"
        assert out.mapping.units["vo2_ml_min"] == "ml_min"

    def test_override(self):
        # values that look like L/min read as mL/min when the user says so -> flagged as low, not rejected
        data = b"Time,VO2,VCO2,VE\n0,1.5,1.2,10\n3,1.6,1.3,11\n"
        out = import_bytes(data, file_name="o.csv", gas_unit="ml_min")
        assert out.session.breaths["vo2_ml_min"].tolist() == [1.5, 1.6]
        assert set(out.session.flags["reason"]) == {"below usual range"}
        out = import_bytes(data, file_name="o.csv", gas_unit="l_min")
        assert out.session.breaths["vo2_ml_min"].tolist() == [1500.0, 1600.0]
        assert out.mapping.units["vo2_ml_min"] == "l_min"

    def test_mapping_alias_vo2_l_min(self):
        data = b"Zeitpunkt,Oxy,Carb,Vent\n0,1.5,1.2,40\n3,1.6,1.3,41\n"
        mapping = ColumnMapping({"Zeitpunkt": "t_s", "Oxy": "vo2_l_min", "Carb": "vco2_l_min", "Vent": "ve_l_min"})
        out = import_bytes(data, file_name="a.csv", mapping=mapping)
        assert out.session.breaths["vco2_ml_min"].tolist() == [1200.0, 1300.0]

    def test_kpa_end_tidal_converted(self):
        # 1 mmHg = 133.322387415 Pa (SI definition) -> 5.0 kPa = 37.503 mmHg
        data = b"Time,VO2,VCO2,VE,PETCO2 (kPa)\n0,300,250,10,5.0\n3,300,250,10,5.2\n"
        out = import_bytes(data, file_name="k.csv")
        np.testing.assert_allclose(out.session.breaths["petco2_mmhg"], [37.5031, 39.0032], atol=1e-3)


class TestXlsx:
    def test_two_sheets_choose_by_name_and_default(self):
        import datetime as dt

        summary = [["Saltmarsh Exercise Lab summary"], ["Peak VO2", 2.8]]
        breaths = [
            ["Subject: invented"],
            [],
            ["Time", "VO2 (L/min)", "VCO2 (L/min)", "VE (L/min)", "HR"],
            [dt.time(0, 0, 0), 0.30, 0.25, 10.0, 70],
            [dt.time(0, 0, 3), 0.32, 0.27, "10,5", 71],
            [dt.time(0, 1, 5), 0.35, 0.30, 11.0, None],
        ]
        data = xlsx_bytes({"Summary": summary, "Breaths": breaths})
        assert list_sheets(data) == ["Summary", "Breaths"]
        for chosen in (None, "Breaths", 1):
            out = import_bytes(data, file_name="w.xlsx", sheet=chosen)
            assert out.sheet == "Breaths"
            b = out.session.breaths
            assert b["t_s"].tolist() == [0.0, 3.0, 65.0]
            assert b["vo2_ml_min"].tolist() == pytest.approx([300.0, 320.0, 350.0])
            assert b["source_row"].tolist() == [4, 5, 6]
            assert out.delimiter == ""
        assert read_headers(data, file_name="w.xlsx", sheet="Breaths")[:2] == ["Time", "VO2 (L/min)"]

    def test_sheet_without_table_is_rejected(self):
        from analysis.errors import ImportRejected

        data = xlsx_bytes({"Summary": [["nothing here"]], "Breaths": [["Time", "VO2", "VCO2", "VE"], [0, 300, 250, 10]]})
        with pytest.raises(ImportRejected, match="w.xlsx"):
            import_bytes(data, file_name="w.xlsx", sheet="Summary")
        with pytest.raises(ImportRejected, match="no sheet named 'Other'.*Summary, Breaths"):
            import_bytes(data, file_name="w.xlsx", sheet="Other")


class TestEncodings:
    def test_utf8_bom(self):
        out = import_bytes(b"\xef\xbb\xbfTime,VO2,VCO2,VE\n0,300,250,10\n", file_name="b.csv")
        assert out.mapping.source_of("t_s") == "Time"

    def test_utf16_with_bom(self):
        out = import_bytes("Time\tVO2\tVCO2\tVE\n0\t300\t250\t10\n".encode("utf-16"), file_name="u16.txt")
        assert out.session.breaths["vo2_ml_min"].tolist() == [300.0]
        assert out.encoding == "utf-16"

    def test_cp1252_accepted_with_note(self):
        data = "Time;VO2;VCO2;VE;Remark\n0;300;250;10;Bügel\n".encode("cp1252")
        out = import_bytes(data, file_name="w.csv")
        assert out.session.breaths["marker"].tolist() == ["Bügel"]
        assert out.encoding == "cp1252"
        assert any("Windows-1252" in n for n in out.notes)

    def test_crlf_and_cr_line_ends(self):
        for eol in (b"\r\n", b"\r"):
            data = eol.join([b"Time,VO2,VCO2,VE", b"0,300,250,10", b"3,310,260,11"]) + eol
            out = import_bytes(data, file_name="e.csv")
            assert out.session.breaths["source_row"].tolist() == [2, 3]


def test_event_rows_are_skipped_and_markers_carried():
    data = b"Time,VO2,VCO2,VE,Event\n0,300,250,10,\n2,,,,Start ramp\n3,310,260,11,\n"
    out = import_bytes(data, file_name="ev.csv")
    assert out.session.breaths["marker"].tolist() == [None, "Start ramp"]
    assert 3 in out.skipped_lines


def test_phase_synonyms_normalised():
    data = b"Time,VO2,VCO2,VE,Phase\n0,300,250,10,Rest\n3,310,260,11,Warm-up\n6,400,330,12,Exercise\n9,400,330,12,Cool-down\n"
    out = import_bytes(data, file_name="p.csv")
    assert out.session.breaths["phase"].tolist() == ["rest", "warmup", "exercise", "recovery"]


class TestLayouts:
    def test_space_aligned_columns(self):
        out = import_bytes(b"Time   VO2   VCO2   VE\n0   300   250   10\n3   310   260   11\n", file_name="s.txt")
        assert out.delimiter == " "
        assert out.session.breaths["vco2_ml_min"].tolist() == [250.0, 260.0]

    def test_trailing_delimiters_and_empty_header_cell(self):
        out = import_bytes(b"Time;VO2;VCO2;VE;\n0;300;250;10;\n3;310;260;11;\n", file_name="t.csv")
        assert len(out.session.breaths) == 2
        assert not any("not used" in n for n in out.notes)

    def test_repeated_header_gets_a_suffix(self):
        out = import_bytes(b"Time,VO2,VO2,VCO2,VE\n0,300,5,250,10\n", file_name="d.csv")
        assert out.session.breaths["vo2_ml_min"].tolist() == [300.0]
        assert any("'VO2 #2'" in n for n in out.notes)

    def test_time_not_first_and_negative(self):
        out = import_bytes(b"VO2,VCO2,VE,Time\n300,250,10,-1:30\n310,260,11,-1:27\n", file_name="n.csv")
        assert out.session.breaths["t_s"].tolist() == [-90.0, -87.0]

    def test_small_summary_table_above_the_breaths(self):
        data = b"Summary\nVO2peak,HRpeak\n2800,180\n\nTime,VO2,VCO2,VE\n0,300,250,10\n3,310,260,11\n6,310,260,11\n"
        out = import_bytes(data, file_name="s.csv")
        assert out.session.breaths["source_row"].tolist() == [6, 7, 8]
        assert out.skipped_lines == [1, 2, 3, 4]

    def test_footer_with_text_time_is_skipped_but_text_times_in_every_row_are_not(self):
        out = import_bytes(b"Time,VO2,VCO2,VE\n0,300,250,10\n3,310,260,11\nMax,310,260,11\n", file_name="f.csv")
        assert out.skipped_lines == [4] and any("line 4 after the table" in n for n in out.notes)
        from analysis.errors import ImportRejected

        with pytest.raises(ImportRejected, match=r"line 2, column 'Time': 'abc' is not a time"):
            import_bytes(b"Time,VO2,VCO2,VE\nabc,300,250,10\ndef,310,260,11\n", file_name="f.csv")


def test_event_rows_after_the_last_breath_keep_their_marker():
    data = b"Time,VO2,VCO2,VE,Event\n0,300,250,10,\n3,310,260,11,peak\n5,,,,Stop test\n"
    out = import_bytes(data, file_name="ev.csv")
    assert out.session.breaths["marker"].tolist() == [None, "peak; Stop test"]


def test_long_preamble_beyond_the_sniffed_lines():
    before = "".join(f"Setting {i};value {i}\n" for i in range(450))
    df = breath_table(10)
    out = import_bytes(to_text(df, headers=GENERIC, sep=";", decimal=",", before=before), file_name="long.csv")
    assert out.delimiter == ";" and len(out.session.breaths) == 10
    assert out.session.breaths["source_row"].iloc[0] == 452
