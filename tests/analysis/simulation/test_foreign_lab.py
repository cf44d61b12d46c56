"""Lab-variety exports of simulated tests import with no metadata typed and analyse: every
layout x several kinds x seeds gives the simulated breaths back within the printed rounding."""

from __future__ import annotations

import numpy as np
import pytest

from analysis import columns as C
from analysis.io import import_bytes
from analysis.pipeline import analyze_session
from analysis.simulation import simulate_case
from analysis.simulation.foreign_lab import DROPOUT_TEXT, EVENT_WORDS, LAB_LAYOUTS, LabLayout, lab_export_bytes, lab_layout

KINDS = ("rehab", "athlete", "treadmill_steps", "hf_oscillation", "lung_limited", "short_ramp", "submax")
# printed as 1 mL/min or 0.001 L/min (half of it at most), VE at 0.1 L/min
GAS_TOL = {C.VO2_ML_MIN: 0.51, C.VCO2_ML_MIN: 0.51, C.VE_L_MIN: 0.051}
# time printed at 0.01 s, 0.1 s or 1 s (h:mm:ss)
TIME_TOL_S = {"s": 0.0051, "mss": 0.051, "hms": 0.51}


@pytest.mark.parametrize("layout", LAB_LAYOUTS)
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("seed", [0, 1])
def test_lab_exports_import_without_metadata_and_analyse(layout, kind, seed) -> None:
    s = simulate_case(kind, seed, noise=2.0)
    out = import_bytes(lab_export_bytes(s, layout=layout), file_name=f"{kind}-{seed}.csv")
    b = out.session.breaths
    assert len(b) == len(s.breaths)
    tol_t = TIME_TOL_S[lab_layout(layout).time]
    assert np.max(np.abs(b[C.T_S].to_numpy() - s.breaths[C.T_S].to_numpy())) <= tol_t
    for name, tol in GAS_TOL.items():
        assert np.max(np.abs(b[name].to_numpy() - s.breaths[name].to_numpy())) <= tol, name
    # nothing about the person was in the file or typed: the gaps are stated, not guessed
    assert "body_mass_kg" not in out.session.meta
    assert any(n.startswith("not in the file and not set: body mass, age, sex, height") for n in out.notes)
    result = analyze_session(out.session)
    expected = analyze_session(_as_exported(s, TIME_DIGITS[lab_layout(layout).time]))
    # same peak as the simulated session analysed with the export's time rounding (1 s moves
    # breaths across 10-s bin edges: up to 2 % of peak VO2 in lung_limited seed 0)
    assert result.peak.vo2_ml_min == pytest.approx(expected.peak.vo2_ml_min, rel=1e-3)
    assert result.peak.t_s == expected.peak.t_s


TIME_DIGITS = {"s": 2, "mss": 1, "hms": 0}


def _as_exported(s, digits):
    """The simulated session as the export carries it: times rounded, no person data, no truth."""
    breaths = s.breaths.drop(columns=["source_row"], errors="ignore").copy()
    breaths[C.T_S] = breaths[C.T_S].round(digits)
    return type(s)(meta={}, breaths=breaths)


def test_event_rows_are_skipped_and_their_words_become_markers() -> None:
    s = simulate_case("rehab", 0)
    layout = LabLayout("events", event_every=10)
    out = import_bytes(lab_export_bytes(s, layout=layout), file_name="events.csv")
    n = len(s.breaths)
    assert len(out.session.breaths) == n
    markers = out.session.breaths[C.MARKER].to_numpy(dtype=object)
    # the event after breath 10 (index 9) lands on breath 11 (index 10); words in turn
    assert markers[10] == EVENT_WORDS[1 % len(EVENT_WORDS)]
    assert markers[20] == EVENT_WORDS[2 % len(EVENT_WORDS)]
    events = n // 10
    skipped = [note for note in out.notes if "skipped as event rows" in note]
    assert len(skipped) == 1 and skipped[0].startswith(f"{events} row(s) without VO2, VCO2 and VE")
    # header is line 1, breath 10 is line 11, the event row line 12
    assert 12 in out.skipped_lines and 23 in out.skipped_lines


def test_text_in_a_breath_cell_is_flagged_and_kept_and_a_broken_number_is_refused() -> None:
    s = simulate_case("rehab", 0)
    out = import_bytes(lab_export_bytes(s, layout=LabLayout("drop", dropout_every=5)), file_name="d.csv")
    flags = out.session.flags
    hr = flags[flags["column"] == C.HR_BPM]
    assert len(hr) == len(s.breaths) // 5 and set(hr["reason"]) == {"missing value"}
    assert int(hr["source_row"].iloc[0]) == 6  # breath 5 is on line 6
    # a breath row with a mistyped number is not an event row: refused with file, line, column
    text = lab_export_bytes(s, layout=LabLayout("plain")).decode().split("\r\n")
    cells = text[3].split(",")
    cells[4] = "1.2.3"  # the HR column
    text[3] = ",".join(cells)
    with pytest.raises(Exception) as err:
        import_bytes("\r\n".join(text).encode(), file_name="broken.csv")
    msg = str(err.value)
    assert "broken.csv" in msg and "line 4" in msg and "HR (1/min)" in msg and "'1.2.3' is not a number" in msg


def test_a_row_of_words_in_every_gas_column_is_an_event() -> None:
    s = simulate_case("rehab", 0)
    text = lab_export_bytes(s, layout=LabLayout("plain")).decode().split("\r\n")
    t = text[5].split(",")[0]
    text.insert(6, ",".join([t, "mask off", "mask off", "mask off"] + [""] * (len(text[5].split(",")) - 4)))
    out = import_bytes("\r\n".join(text).encode(), file_name="x.csv")
    assert len(out.session.breaths) == len(s.breaths)
    assert out.session.breaths[C.MARKER].iloc[5] == "mask off"
    assert 7 in out.skipped_lines
    assert DROPOUT_TEXT == "--"


def test_breaths_sharing_a_whole_second_are_kept_in_file_order_with_a_note():
    s = simulate_case("athlete", 0, noise=2.0)  # two pairs of breaths < 1 s apart land on the same second
    out = import_bytes(lab_export_bytes(s, layout=LabLayout("hms", time="hms")), file_name="a.csv")
    assert len(out.session.breaths) == len(s.breaths)
    assert "2 breath(s) have the same time as the breath before (times written to the whole second?): " \
        "kept in the order of the file" in out.notes
    assert out.session.breaths[C.VO2_ML_MIN].to_numpy() == pytest.approx(s.breaths[C.VO2_ML_MIN].to_numpy(), abs=0.51)


def test_time_in_any_column_position_and_no_units_anywhere():
    s = simulate_case("rehab", 1)
    layout = LabLayout("bare", order_seed=11, units_given=False, gas_unit="l_min")
    data = lab_export_bytes(s, layout=layout)
    header = data.decode().split("\r\n")[0].split(",")
    assert header[0] != "Time" and "(" not in ",".join(header)  # time elsewhere, no unit anywhere
    out = import_bytes(data, file_name="bare.csv")
    assert out.gas_unit_detected == "l_min"  # by magnitude: median below 15
    assert out.session.breaths[C.VO2_ML_MIN].to_numpy() == pytest.approx(s.breaths[C.VO2_ML_MIN].to_numpy(), abs=0.51)


@pytest.mark.parametrize("layout", LAB_LAYOUTS)
def test_tidemark_import_reads_every_lab_layout_with_nothing_typed(layout, tmp_path, capsys):
    from analysis.io import read_session
    from tidemark.cli import EXIT_OK, main

    s = simulate_case("cycle_steps", 2, noise=1.0)
    src = tmp_path / f"{layout}.csv"
    src.write_bytes(lab_export_bytes(s, layout=layout))
    assert main(["import", str(src), "--out", str(tmp_path / "out")]) == EXIT_OK
    session = read_session(tmp_path / "out" / f"{layout}.session.csv")
    assert len(session.breaths) == len(s.breaths)
    assert session.breaths[C.VO2_ML_MIN].to_numpy() == pytest.approx(s.breaths[C.VO2_ML_MIN].to_numpy(), abs=0.51)
    assert (tmp_path / "out" / "originals" / src.name).read_bytes() == src.read_bytes()  # byte for byte
    assert "not in the file and not set: body mass, age, sex, height" in capsys.readouterr().out


def test_foreign_writer_and_evaluation_take_the_lab_layouts_with_nothing_typed():
    from analysis.simulation import simulation_suite
    from analysis.simulation.evaluate import score_case
    from analysis.simulation.foreign import ALL_FOREIGN_LAYOUTS, FOREIGN_LAYOUTS, foreign_export_bytes, foreign_meta_overrides

    s = simulate_case("rehab", 0)
    assert ALL_FOREIGN_LAYOUTS == FOREIGN_LAYOUTS + LAB_LAYOUTS
    assert foreign_export_bytes(s, layout="lab_everything") == lab_export_bytes(s, layout="lab_everything")
    assert foreign_meta_overrides(s, layout="lab_everything") == {}
    foreign = [c for c in simulation_suite(["rehab"], seeds=[1], noise_levels=[1.0]) if c.foreign][0]
    score = score_case(foreign, layouts=LAB_LAYOUTS)
    assert score.status == "ok" and score.layout in LAB_LAYOUTS and score.vo2peak_error_pct is not None


def test_note_rows_inside_the_table_become_markers_of_the_next_breath():
    s = simulate_case("rehab", 0)
    out = import_bytes(lab_export_bytes(s, layout=LabLayout("notes", note_every=50)), file_name="n.csv")
    b = out.session.breaths
    assert len(b) == len(s.breaths)
    markers = b[C.MARKER].to_numpy(dtype=object)
    assert markers[50] == "--- stage 1 ---" and markers[100] == "--- stage 2 ---"
    # header line 1, breath 50 on line 51, the note on line 52
    assert 52 in out.skipped_lines
    n = len(s.breaths) // 50
    assert f"{n} note row(s) inside the table were skipped" in " ".join(out.notes)


def test_a_second_header_or_a_shifted_row_inside_the_table_is_still_refused():
    s = simulate_case("rehab", 0)
    lines = lab_export_bytes(s, layout=LabLayout("plain", line_end="\n")).decode().split("\n")
    shifted = list(lines)
    shifted[41] = shifted[41].replace(",", ",,", 1)  # one cell too many: a broken row
    for bad in (lines[:40] + ["Time (s),VO2"] + lines[40:], shifted):
        with pytest.raises(Exception) as err:
            import_bytes("\n".join(bad).encode(), file_name="x.csv")
        assert "x.csv" in str(err.value) and "look like more breaths" in str(err.value)


@pytest.mark.parametrize("kind", ["rehab", "athlete", "hf_plain"])
def test_a_vo2_per_kg_column_suggests_the_body_mass_without_setting_it(kind):
    s = simulate_case(kind, 0)
    out = import_bytes(lab_export_bytes(s, layout="lab_everything"), file_name="k.csv")
    mass = s.meta["body_mass_kg"]
    assert "body_mass_kg" not in out.session.meta  # a hint, never a silent value
    assert (f"VO2 divided by the column 'VO2/kg' gives a body mass of {mass:.1f} kg: if that is the person's, "
            f"set it (--set body_mass_kg={mass:.1f}); it was not set for you") in out.notes
    typed = import_bytes(lab_export_bytes(s, layout="lab_everything"), file_name="k.csv",
                         meta_overrides={"body_mass_kg": str(mass)})
    assert not any("gives a body mass" in n for n in typed.notes)  # typed: no hint


def test_no_body_mass_hint_when_the_per_kg_column_disagrees_with_vo2():
    s = simulate_case("rehab", 0)
    lines = lab_export_bytes(s, layout=LabLayout("k", per_kg=True, line_end="\n")).decode().split("\n")
    header = lines[0].split(",")
    k = header.index("VO2/kg (mL/kg/min)")
    rows = []
    for i, row in enumerate(lines[1:-1]):
        cells = row.split(",")
        cells[k] = f"{10 + i % 7:.1f}"  # not VO2 over one mass
        rows.append(",".join(cells))
    out = import_bytes("\n".join([lines[0], *rows, ""]).encode(), file_name="k.csv")
    assert not any("gives a body mass" in n for n in out.notes)


@pytest.mark.parametrize("time_cells", ["text", "time_objects", "day_fraction"])
def test_a_workbook_with_units_row_event_note_and_dropout_rows_imports(time_cells):
    import datetime
    import io

    import openpyxl

    s = simulate_case("rehab", 0)
    layout = LabLayout("x", sep="\t", unit_row=True, event_every=17, note_every=23, dropout_every=13, time="hms",
                       line_end="\n")
    wb = openpyxl.Workbook()
    ws = wb.active
    for r, line in enumerate(lab_export_bytes(s, layout=layout).decode().split("\n")[:-1]):
        row: list[object] = []
        for c, cell in enumerate(line.split("\t")):
            value: object = cell or None
            if r >= 2 and c == 0 and ":" in cell and time_cells != "text":
                h, m, sec = map(int, cell.split(":"))
                value = datetime.time(h, m, sec) if time_cells == "time_objects" else (h * 3600 + m * 60 + sec) / 86400
            elif r >= 2 and cell:
                try:
                    value = float(cell)
                except ValueError:
                    pass
            row.append(value)
        ws.append(row)
    if time_cells == "day_fraction":  # a spreadsheet time: a fraction of a day shown as h:mm:ss
        for cell in ws["A"][2:]:
            cell.number_format = "h:mm:ss"
    buf = io.BytesIO()
    wb.save(buf)
    out = import_bytes(buf.getvalue(), file_name="x.xlsx")
    b = out.session.breaths
    assert len(b) == len(s.breaths) and out.time_format_detected == "h:mm:ss"
    assert np.max(np.abs(b[C.T_S].to_numpy() - s.breaths[C.T_S].to_numpy())) <= 0.51
    assert b[C.VO2_ML_MIN].to_numpy() == pytest.approx(s.breaths[C.VO2_ML_MIN].to_numpy(), abs=0.51)
    assert b[C.MARKER].iloc[23] == "--- stage 1 ---"  # the note after breath 23
