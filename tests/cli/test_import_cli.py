"""``tidemark import``: files written, original kept byte for byte, exit codes and messages."""

from __future__ import annotations

import hashlib
import json

import pytest

from analysis.io import read_session
from tidemark.cli import EXIT_BAD_INPUT, EXIT_OK, main

EXPORT = "Saltmarsh Exercise Lab\r\nTime;VO2 (L/min);VCO2 (L/min);VE;HR\r\n0:00;0,30;0,25;10,0;70\r\n0:03;0,32;0,27;10,5;71\r\n0:40;0,40;0,70;12,0;\r\n".encode("cp1252")


def _sha(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_import_writes_session_and_keeps_original(tmp_path, capsys):
    src = tmp_path / "in" / "ride 1.csv"
    src.parent.mkdir()
    src.write_bytes(EXPORT)
    out = tmp_path / "out"
    rc = main(["import", str(src), "--out", str(out), "--set", "body_mass_kg=70.5", "--set", "subject_id=SEL-009", "--set", "notes=a=b"])
    assert rc == EXIT_OK
    session = read_session(out / "ride 1.session.csv")
    assert session.breaths["vo2_ml_min"].tolist() == [300.0, 320.0, 400.0]
    assert session.meta == {"body_mass_kg": 70.5, "subject_id": "SEL-009", "notes": "a=b"}
    assert _sha(out / "originals" / "ride 1.csv") == _sha(src)
    printed = capsys.readouterr().out
    assert "breaths: 3" in printed
    assert "vo2_ml_min <- 'VO2 (L/min)'" in printed
    assert "gas unit L/min" in printed
    assert "time as mm:ss" in printed
    assert "RER outside 0.6-1.6: 1" in printed and "gap over 15 s: 1" in printed
    assert sorted(p.name for p in out.iterdir() if not p.name.startswith(".")) == ["originals", "ride 1.session.csv"]


def test_same_name_different_content_is_not_overwritten(tmp_path, capsys):
    src = tmp_path / "a.csv"
    src.write_bytes(b"Time,VO2,VCO2,VE\n0,300,250,10\n")
    assert main(["import", str(src), "--out", str(tmp_path / "o")]) == EXIT_OK
    first = _sha(tmp_path / "o" / "originals" / "a.csv")
    assert main(["import", str(src), "--out", str(tmp_path / "o")]) == EXIT_OK  # identical: reused
    src.write_bytes(b"Time,VO2,VCO2,VE\n0,310,260,11\n")
    assert main(["import", str(src), "--out", str(tmp_path / "o")]) == EXIT_OK
    assert _sha(tmp_path / "o" / "originals" / "a.csv") == first
    assert _sha(tmp_path / "o" / "originals" / "a-2.csv") == _sha(src)
    assert read_session(tmp_path / "o" / "a-2.session.csv").breaths["vo2_ml_min"].tolist() == [310.0]
    assert read_session(tmp_path / "o" / "a.session.csv").breaths["vo2_ml_min"].tolist() == [300.0]


def test_bad_file_exit_2_message_and_nothing_written(tmp_path, capsys):
    src = tmp_path / "bad.csv"
    src.write_bytes(b"Time,VO2,VCO2,VE\n0,300,250,10\n3,abc,250,10\n")
    out = tmp_path / "out"
    assert main(["import", str(src), "--out", str(out)]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err
    assert "file 'bad.csv', line 3, column 'VO2': 'abc' is not a number" in err
    assert not out.exists()


def test_missing_file_and_bad_options(tmp_path, capsys):
    assert main(["import", str(tmp_path / "none.csv")]) == EXIT_BAD_INPUT
    assert "does not exist" in capsys.readouterr().err
    src = tmp_path / "a.csv"
    src.write_bytes(b"Time,VO2,VCO2,VE\n0,300,250,10\n")
    assert main(["import", str(src), "--map", "no-equals-sign", "--out", str(tmp_path)]) == EXIT_BAD_INPUT
    assert "--map" in capsys.readouterr().err
    assert main(["import", str(src), "--max-mb", "0.00001", "--out", str(tmp_path / "x")]) == EXIT_BAD_INPUT
    assert "larger than" in capsys.readouterr().err
    assert not (tmp_path / "x").exists()


def test_map_profile_and_save_profile(tmp_path, capsys):
    src = tmp_path / "odd.csv"
    src.write_bytes(b"Clock,Ox,Carb,Vent\n0,1.5,1.2,40\n3,1.6,1.3,41\n")
    profile = tmp_path / "odd.json"
    args = ["import", str(src), "--out", str(tmp_path / "o"), "--save-profile", str(profile)]
    args += ["--map", "Clock=t_s", "--map", "Ox=vo2_l_min", "--map", "Carb=vco2_l_min", "--map", "Vent=ve_l_min"]
    assert main(args) == EXIT_OK
    saved = json.loads(profile.read_text())
    assert saved["columns"]["Ox"] == "vo2_ml_min" and saved["units"]["vo2_ml_min"] == "l_min"
    assert main(["import", str(src), "--out", str(tmp_path / "p"), "--profile", str(profile)]) == EXIT_OK
    assert read_session(tmp_path / "p" / "odd.session.csv").breaths["vo2_ml_min"].tolist() == [1500.0, 1600.0]


def test_xlsx_sheet_by_number(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    wb.active.title = "Notes"
    wb.active.append(["nothing"])
    ws = wb.create_sheet("Data")
    for row in (["Time", "VO2", "VCO2", "VE"], [0, 300, 250, 10], [3, 310, 260, 11]):
        ws.append(row)
    src = tmp_path / "book.xlsx"
    wb.save(src)
    assert main(["import", str(src), "--sheet", "2", "--out", str(tmp_path / "o")]) == EXIT_OK
    assert _sha(tmp_path / "o" / "originals" / "book.xlsx") == _sha(src)
    assert read_session(tmp_path / "o" / "book.session.csv").breaths["t_s"].tolist() == [0.0, 3.0]


def test_unwritable_profile_is_bad_input_and_nothing_written(tmp_path, capsys):
    src = tmp_path / "a.csv"
    src.write_bytes(b"Time,VO2,VCO2,VE\n0,300,250,10\n")
    rc = main(["import", str(src), "--out", str(tmp_path / "o"), "--save-profile", str(tmp_path / "no" / "dir" / "p.json")])
    assert rc == EXIT_BAD_INPUT
    assert "cannot be written" in capsys.readouterr().err
    assert not (tmp_path / "o").exists()


STPD_EXPORT = "Time;VO2 (L/min);VCO2 (L/min);VE (L/min, STPD)\n0:00;0,30;0,25;10,0\n0:03;0,32;0,27;11,0\n0:06;0,33;0,28;12,0\n".encode()


def test_stpd_ventilation_is_refused_until_the_condition_can_be_converted(tmp_path, capsys):
    src = tmp_path / "stpd.csv"
    src.write_bytes(STPD_EXPORT)
    out = tmp_path / "out"
    assert main(["import", str(src), "--out", str(out)]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err
    assert "column 'VE (L/min, STPD)': VE is stated as STPD" in err and "--barometric-mmhg" in err
    assert not out.exists()
    assert main(["import", str(src), "--out", str(out), "--barometric-mmhg", "760"]) == EXIT_OK
    printed = capsys.readouterr().out
    assert "gas conditions: ventilation BTPS, converted from STPD × 1.2103" in printed  # gas laws at 760 mmHg
    session = read_session(out / "stpd.session.csv")
    assert session.breaths["ve_l_min"].iloc[0] == pytest.approx(10.0 * 1.2103, rel=5e-5)
    assert session.meta["ve_condition"] == "btps" and session.meta["ve_btps_factor"] == pytest.approx(1.2103, abs=5e-5)


def test_ve_condition_option_states_atps(tmp_path, capsys):
    src = tmp_path / "room.csv"
    src.write_bytes(STPD_EXPORT.replace(b"VE (L/min, STPD)", b"VE"))
    args = ["import", str(src), "--out", str(tmp_path / "o"), "--ve-condition", "atps", "--barometric-mmhg", "760"]
    assert main(args) == EXIT_BAD_INPUT
    assert "room temperature" in capsys.readouterr().err
    assert main([*args, "--ambient-c", "22"]) == EXIT_OK
    session = read_session(tmp_path / "o" / "room.session.csv")
    assert session.breaths["ve_l_min"].iloc[0] == pytest.approx(10.0 * 1.0909, rel=5e-5)  # gas laws: ATPS 22 °C
