"""Key/value lines above the table read into metadata; non-English header spellings; sheet choice."""

from __future__ import annotations

import datetime as dt

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from analysis.errors import ImportRejected
from analysis.io import guess_mapping, import_bytes
from analysis.io.preamble import KG_PER_LB, PreambleItem, parse_date, read_preamble_item
from tests.workbooks import xlsx_bytes

SEMICOLON_EXPORT = (
    "Test date:;10.02.2026\r\n"
    "Body mass (kg);58\r\n"
    "Größe (m);1,68\r\n"
    "Geschlecht;weiblich\r\n"
    "Betablocker;nein\r\n"
    "Room temperature;21\r\n"
    "\r\n"
    "Zeit;V'O2 (l/min);V'CO2 (l/min);V'E (l/min);HF (1/min);AF (1/min)\r\n"
    + "".join(f"{i // 20}:{(i * 3) % 60:02d};{0.3 + i * 0.01:.2f};{0.25 + i * 0.01:.2f};{10 + i * 0.3:.1f};{70 + i};{14 + i % 5}\r\n".replace(".", ",")
              for i in range(40))
).encode("cp1252")


def test_semicolon_export_preamble_becomes_metadata():
    out = import_bytes(SEMICOLON_EXPORT, file_name="export.csv")
    meta = out.session.meta
    assert meta["test_date"] == "2026-02-10"  # day first with dots (European habit)
    assert meta["body_mass_kg"] == 58.0
    assert meta["height_cm"] == pytest.approx(168.0)  # 1.68 m = 168 cm
    assert meta["sex"] == "F" and meta["beta_blocker"] == "no"
    assert [i.key for i in out.preamble] == ["test_date", "body_mass_kg", "height_cm", "sex", "beta_blocker", "ambient_c"]
    assert meta["ambient_c"] == 21.0  # the room temperature, kept for converting ATPS volumes
    assert out.preamble[0] == PreambleItem(line=1, label="Test date:", text="10.02.2026", key="test_date", value="2026-02-10")
    # German headers: Zeit, HF (Herzfrequenz), AF (Atemfrequenz) are our own documented spellings
    assert {"t_s", "hr_bpm", "rf_bpm"} <= set(out.session.breaths.columns)
    assert out.session.breaths["hr_bpm"].iloc[0] == 70


def test_form_values_win_over_the_preamble():
    out = import_bytes(SEMICOLON_EXPORT, file_name="export.csv", meta_overrides={"body_mass_kg": "60.5", "age_y": "34"})
    assert out.session.meta["body_mass_kg"] == 60.5 and out.session.meta["age_y"] == 34.0


@pytest.mark.parametrize(
    ("cells", "key", "value"),
    [
        (["Weight (lb)", "150"], "body_mass_kg", f"{150 * KG_PER_LB:.4g}"),  # 1 lb = 0.45359237 kg (1959 definition)
        (["Hb (g/L)", "142"], "hb_g_dl", "14.2"),  # 10 g/L = 1 g/dL
        (["Hb (mmol/L)", "9"], "hb_g_dl", "14.5"),  # 9 mmol/L × 1.611 g/dL per mmol/L (common practice)
        (["Alter", "34"], "age_y", "34"),
        (["Sexe", "homme"], "sex", "M"),
        (["Operator: A. Lind"], "operator", "A. Lind"),
        (["Beta-blocker", "yes"], "beta_blocker", "yes"),
        (["Protocole", "Rampe 25 W/min"], "protocol", "Rampe 25 W/min"),
        (["Datum", dt.datetime(2026, 2, 10, 9, 30)], "test_date", "2026-02-10"),  # a spreadsheet date cell
        (["Room temperature", "21"], "ambient_c", "21"),
        (["Raumtemperatur (°C)", "22,5"], "ambient_c", "22.5"),
        (["Room temperature", "72 °F"], "ambient_c", "22.22"),  # (72 - 32) × 5/9 °C (definition of the scales)
        (["Barometric pressure", "755 mmHg"], "barometric_mmhg", "755"),
        (["Pb (kPa)", "101.3"], "barometric_mmhg", "759.8"),  # 1 mmHg = 133.322387415 Pa (definition)
        (["Luftdruck", "1013 hPa"], "barometric_mmhg", "759.8"),
    ],
)
def test_labelled_lines(cells, key, value):
    item = read_preamble_item(4, cells)
    assert item is not None and (item.key, item.value) == (key, value)


@pytest.mark.parametrize(
    "cells",
    [["Room temperature", "99"], ["Barometric pressure", "2 bar"], ["Body mass (kg)", "heavy"], ["Body mass (kg)", "5800"], ["Date", "03/04/2026"],
     ["Sex", "unknown"], ["Time", "VO2", "VCO2"], []],
)
def test_lines_that_are_not_clear_metadata_are_left_alone(cells):
    assert read_preamble_item(2, cells) is None


def test_dates():
    assert parse_date("2026-02-10") == "2026-02-10"
    assert parse_date("10-02-2026") == "2026-02-10"
    assert parse_date("25/12/2025") == "2025-12-25" and parse_date("12/25/2025") == "2025-12-25"
    assert parse_date("31.02.2026") is None  # no such day


@given(st.lists(st.one_of(st.text(max_size=40), st.floats(allow_nan=True), st.integers(), st.none(),
                          st.datetimes()), max_size=5))
def test_reading_a_line_never_raises(cells):
    item = read_preamble_item(1, cells)
    assert item is None or isinstance(item.value, str) and item.value


@settings(deadline=None)  # a whole import per example: timing on a shared machine is not the point
@given(st.text(max_size=30), st.text(max_size=30))
def test_any_preamble_never_breaks_an_import(label, value):
    text = f"{label};{value}\nTime;VO2;VCO2;VE\n0;300;250;10\n3;320;270;11\n6;340;290;12\n".encode("utf-8")
    try:
        out = import_bytes(text, file_name="p.csv")
    except ImportRejected:
        return
    assert len(out.session.breaths) == 3


def test_non_english_header_spellings():
    m = guess_mapping(["Zeit", "V'O2", "V'CO2", "AMV", "HF", "AF", "Last", "AZV", "Steigung"]).mapped()
    assert m == {"t_s": "Zeit", "vo2_ml_min": "V'O2", "vco2_ml_min": "V'CO2", "ve_l_min": "AMV", "hr_bpm": "HF",
                 "rf_bpm": "AF", "work_w": "Last", "vt_l": "AZV", "grade_pct": "Steigung"}
    fr = guess_mapping(["Temps", "VO2", "VCO2", "VE", "FC", "Puissance", "Vitesse"]).mapped()
    assert fr["t_s"] == "Temps" and fr["hr_bpm"] == "FC" and fr["work_w"] == "Puissance" and fr["speed_kmh"] == "Vitesse"


def _two_sheet_workbook(*, breath_headers: tuple[str, ...] = ("Time", "VO2", "VCO2", "VE")) -> bytes:
    summary = [["Result", "Value", "Unit"], ["Peak VO2", 2.8, "L/min"], ["Peak HR", 182, "1/min"]]
    breaths = [list(breath_headers)] + [[i * 3.0, 300.0 + 10 * i, 250.0 + 10 * i, 10.0 + 0.3 * i] for i in range(30)]
    return xlsx_bytes({"Summary": summary, "Breaths": breaths})


def test_the_sheet_that_looks_like_breath_data_is_read_by_default():
    out = import_bytes(_two_sheet_workbook(), file_name="two.xlsx")
    assert out.sheet == "Breaths" and len(out.session.breaths) == 30


def test_a_workbook_without_breath_headers_advises_the_sheet_option():
    raw = _two_sheet_workbook(breath_headers=("A", "B", "C", "D"))
    with pytest.raises(ImportRejected) as info:
        import_bytes(raw, file_name="two.xlsx")
    fix = info.value.problems[0].fix
    assert "choose it with --sheet" in fix and "'Summary'" in fix and "sheet 'Breaths' was read" in fix
