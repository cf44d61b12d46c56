"""``tidemark analyze``: --json, overrides, exit codes, folder batch with a broken file."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from analysis.io.session_file import write_session
from analysis.results import TOP_LEVEL_KEYS
from analysis.simulation import TRAINED_CYCLIST, CYCLE_RAMP_30, SUBMAX_SCREEN, CYCLE_SUBMAX, simulate_session
from tidemark.cli import EXIT_BAD_INPUT, EXIT_OK, main
from tidemark.commands.analyze import analyze_batch, parse_averaging, summary_csv_text


@pytest.fixture(scope="module")
def session_dir(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("sessions")
    write_session(simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=1107), d / "SEL-0107_cycle.session.csv")
    write_session(simulate_session(SUBMAX_SCREEN, CYCLE_SUBMAX, seed=5531), d / "SEL-0531_submax.session.csv")
    return d


def test_json_is_one_object_with_stable_keys(session_dir, capsys):
    f = session_dir / "SEL-0107_cycle.session.csv"
    assert main(["analyze", str(f), "--json"]) == EXIT_OK
    out = capsys.readouterr().out
    data = json.loads(out)  # exactly one JSON object on stdout
    assert list(data) == list(TOP_LEVEL_KEYS)
    for key in ("vo2_peak_ml_min", "vo2_peak_ml_kg_min", "rer_peak", "hr_peak_bpm", "ve_vco2_slope", "oues",
                "ve_vco2_slope_to_vt2", "ve_vco2_slope_whole_exercise"):
        assert isinstance(data[key], float), key
    # both spans of the VE/VCO2 slope; the headline is the one to VT2 when VT2 was found
    assert data["vt2"] is not None and data["ve_vco2_slope"] == data["ve_vco2_slope_to_vt2"]
    assert data["indices"]["ve_vco2_slope_span"] == "to_vt2"
    assert {"vo2_ml_min", "time_s", "hr_bpm", "work_w", "method"} <= set(data["vt1"])
    assert data["subject"]["source_name"] == f.name


def test_options_reach_the_settings(session_dir, capsys):
    f = session_dir / "SEL-0107_cycle.session.csv"
    args = ["analyze", str(f), "--json", "--averaging", "breaths:15", "--vt1-time", "600", "--vt2-vo2", "4000",
            "--body-mass-kg", "80", "--age-y", "40", "--sex", "f", "--reason", "reviewed"]
    assert main(args) == EXIT_OK
    d = json.loads(capsys.readouterr().out)
    assert d["averaging"]["method"] == "breaths" and d["averaging"]["size"] == 15
    assert d["vt1"]["source"] == "manual" and abs(d["vt1"]["time_s"] - 600) < 15
    assert d["vt2"]["source"] == "manual" and "reviewed" in d["vt2"]["note"]
    assert d["vo2_peak_ml_kg_min"] == pytest.approx(d["vo2_peak_ml_min"] / 80)
    assert d["subject"]["sex"] == "female" and d["subject"]["age_y"] == 40


def test_readable_summary_names_methods_and_cautions(session_dir, capsys):
    assert main(["analyze", str(session_dir / "SEL-0531_submax.session.csv")]) == EXIT_OK
    out = capsys.readouterr().out
    assert "VO2peak" in out and "Arena et al. 2007" in out and "not a medical device" in out
    assert "RER" in out and "below 1.10" in out


def test_bad_file_is_exit_2_with_message(tmp_path, capsys):
    bad = tmp_path / "broken.session.csv"
    bad.write_text("t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,abc,1,2\n", encoding="utf-8")
    assert main(["analyze", str(bad)]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err
    assert "broken.session.csv" in err and "tidemark analyze:" in err


def test_missing_file_is_exit_2(tmp_path, capsys):
    assert main(["analyze", str(tmp_path / "nope.csv")]) == EXIT_BAD_INPUT
    assert "does not exist" in capsys.readouterr().err


def test_bad_averaging_is_exit_2(session_dir, capsys):
    assert main(["analyze", str(session_dir / "SEL-0107_cycle.session.csv"), "--averaging", "median:3"]) == EXIT_BAD_INPUT
    assert "method" in capsys.readouterr().err


def test_folder_needs_out(session_dir, capsys):
    assert main(["analyze", str(session_dir)]) == EXIT_BAD_INPUT
    assert "--out" in capsys.readouterr().err


def test_batch_with_broken_file_gives_error_row_and_exit_0(session_dir, tmp_path, capsys):
    folder = tmp_path / "batch"
    folder.mkdir()
    for f in session_dir.iterdir():
        (folder / f.name).write_bytes(f.read_bytes())
    (folder / "=HYPERLINK(1).csv").write_text("this is not a test\n1;2\n", encoding="utf-8")
    out = tmp_path / "results.csv"
    assert main(["analyze", str(folder), "--out", str(out), "--workers", "2", "--no-progress"]) == EXIT_OK
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert len(rows) == 3
    by_status = {r["status"] for r in rows}
    assert by_status == {"ok", "error"}
    broken = next(r for r in rows if r["status"] == "error")
    # the file name starts with '=', so the cell is neutralised (formula injection)
    assert broken["file"].startswith("'=")
    assert broken["error"] and broken["vo2_peak_ml_min"] == ""
    ok = [r for r in rows if r["status"] == "ok"]
    assert all(float(r["vo2_peak_ml_min"]) > 500 for r in ok)
    assert "3 tests analysed, 1 failed" in capsys.readouterr().err


def test_batch_function_in_process_matches_single_analysis(session_dir, capsys):
    files = sorted(session_dir.iterdir())
    rows = analyze_batch(files, workers=1, progress=False)
    assert [r["file"] for r in rows] == [f.name for f in files]
    main(["analyze", str(files[0]), "--json"])
    single = json.loads(capsys.readouterr().out)
    assert float(rows[0]["vo2_peak_ml_min"]) == pytest.approx(single["vo2_peak_ml_min"])
    text = summary_csv_text(rows)
    assert text.splitlines()[0].startswith("file,status,error")


def test_parse_averaging():
    spec = parse_averaging("rolling_time:30")
    assert (spec.method, spec.size) == ("rolling_time", 30)
    with pytest.raises(Exception, match="METHOD:SIZE"):
        parse_averaging("time_bin")


def test_other_exports_go_through_the_generic_importer(tmp_path, capsys):
    # a semicolon / decimal-comma export with its own headers is not a session file
    s = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=3)
    b = s.breaths
    lines = ["Time (s);VO2 (mL/min);VCO2 (mL/min);VE (L/min);HR;Load (W)"]
    for r in b.itertuples():
        cells = (r.t_s, r.vo2_ml_min, r.vco2_ml_min, r.ve_l_min, r.hr_bpm, r.work_w)
        lines.append(";".join(f"{v:.3f}".replace(".", ",") for v in cells))
    f = tmp_path / "cart_export.csv"
    f.write_text("\n".join(lines) + "\n", encoding="utf-8")
    assert main(["analyze", str(f), "--json"]) == EXIT_OK
    d = json.loads(capsys.readouterr().out)
    assert d["subject"]["mode"] == "cycle"
    # same breaths as the simulated session: peak within 5 % of the model (ground truth)
    assert d["vo2_peak_ml_min"] == pytest.approx(s.meta["truth_vo2peak_ml_min"], rel=0.05)
    assert any("Body mass unknown" in w for w in d["warnings"])


def test_unwritable_out_is_exit_2(session_dir, tmp_path, capsys):
    target = tmp_path / "no_such_folder" / "results.csv"
    assert main(["analyze", str(session_dir), "--out", str(target), "--workers", "1", "--no-progress"]) == EXIT_BAD_INPUT
    assert "--out" in capsys.readouterr().err


def _slope_line(text: str) -> str:
    return next(line for line in text.splitlines() if line.strip().startswith("VE/VCO2 slope"))


def test_summary_names_both_slope_spans(session_dir, capsys):
    # VT2 found: the headline is the slope to VT2, and the whole-exercise slope is printed by name beside it
    f = session_dir / "SEL-0107_cycle.session.csv"
    assert main(["analyze", str(f), "--json"]) == EXIT_OK
    data = json.loads(capsys.readouterr().out)
    assert main(["analyze", str(f)]) == EXIT_OK
    line = _slope_line(capsys.readouterr().out)
    to_vt2, whole = data["ve_vco2_slope_to_vt2"], data["ve_vco2_slope_whole_exercise"]
    assert f"to VT2 {to_vt2:,.1f}" in line and f"whole exercise {whole:,.1f}" in line
    assert "(headline: to VT2)" in line


def test_summary_headline_whole_exercise_without_vt2(session_dir, capsys):
    # submaximal test: when no VT2 is found the headline is the whole-exercise slope and "to VT2" shows a dash
    f = session_dir / "SEL-0531_submax.session.csv"
    assert main(["analyze", str(f), "--json"]) == EXIT_OK
    data = json.loads(capsys.readouterr().out)
    assert main(["analyze", str(f)]) == EXIT_OK
    line = _slope_line(capsys.readouterr().out)
    assert data["vt2"] is None and data["indices"]["ve_vco2_slope_span"] == "whole_exercise"
    whole = data["ve_vco2_slope_whole_exercise"]
    assert f"whole exercise {whole:,.1f}" in line
    assert "to VT2 –" in line and "(headline: whole exercise)" in line
