"""Library page (AppTest): upload, import check, mapping fix, import into the store, open.

The generic export is built here from a demo session with generic trade spellings ("Time",
"VO2 (L/min)", ...); the unit conversion checked is 1 L/min = 1000 mL/min (SI, common practice).
"""

from __future__ import annotations

import io

import pandas as pd
import pytest

from analysis.io import import_bytes
from dashboard.views import library


def _library_script() -> None:
    from dashboard.views.library import render

    render()


def _generic_export(demo_store, *, drop_vo2_name: bool = False) -> bytes:
    session = demo_store.store.load_session(demo_store.test_ids[0])
    b = session.breaths
    frame = pd.DataFrame(
        {
            "Time": b["t_s"],
            ("Oxy uptake L" if drop_vo2_name else "VO2 (L/min)"): b["vo2_ml_min"] / 1000.0,
            "VCO2 (L/min)": b["vco2_ml_min"] / 1000.0,
            "VE": b["ve_l_min"],
            "Heart rate": b["hr_bpm"],
            "Watts": b["work_w"],
            "Room temp": 21.5,
        }
    )
    buf = io.StringIO()
    buf.write("Saltmarsh Exercise Lab export\nsubject: fictional\n\n")
    frame.to_csv(buf, index=False, float_format="%.4f")
    return buf.getvalue().encode("utf-8")


def _table(at, column: str) -> pd.DataFrame:
    for df in at.dataframe:
        if column in df.value.columns:
            return df.value
    raise AssertionError(f"no table with column {column!r}")


def test_lists_stored_tests_with_store_headline_numbers(demo_store, page_test):
    at = page_test(_library_script, tm_user=demo_store.user).run()
    assert not at.exception, at.exception
    table = _table(at, "VO2peak (mL/min)")
    for _, row in table.iterrows():
        stored = demo_store.store.get_results(int(row["Test"]))  # computed by analyze_session at import
        assert row["VO2peak (mL/min)"] == round(stored["vo2_peak_ml_min"])
        assert row["VE/VCO2 slope"] == round(stored["ve_vco2_slope"], 1)
        assert row["VT1 VO2 (mL/min)"] == round(stored["vt1"]["vo2_ml_min"])
    assert set(table["Test"]) == set(demo_store.test_ids)


def test_open_sets_the_current_test(demo_store, page_test):
    at = page_test(_library_script, tm_user=demo_store.user).run()
    target = demo_store.test_ids[1]
    at.selectbox(key="lib_open_choice").set_value(target)
    at.button(key="lib_open").click().run()
    assert not at.exception, at.exception
    assert at.session_state["tm_test_id"] == target


def test_upload_shows_the_import_check_and_imports_into_the_store(demo_store, page_test):
    raw = _generic_export(demo_store)
    expected = import_bytes(raw, file_name="lab-export.csv")  # the analysis' own reading
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("lab-export.csv", raw, "text/csv")).run()
    assert not at.exception, at.exception
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["Breaths"] == f"{len(expected.session.breaths):,}"
    assert metrics["Gas unit found"] == "L/min" and expected.gas_unit_detected == "l_min"
    # the mapping editor lists every source column, the unknown one as ignored
    labels = [s.label for s in at.selectbox]
    assert "‘Room temp’" in labels and "‘VO2 (L/min)’" in labels
    room = next(s for s in at.selectbox if s.label == "‘Room temp’")
    assert room.value == "ignore"
    code_key = next(t.key for t in at.text_input if t.label.startswith("Person code"))
    at.text_input(key=code_key).input("SEL-9001")
    # "subject: fictional" above the table was read as the person code: the reviewer confirms it
    assert any("Read from the lines above the table" in m.value for m in at.markdown)
    at.button[[b.label for b in at.button].index("Import into the library")].click().run()
    assert any("tick the box" in e.value for e in at.error)  # not confirmed: nothing stored
    assert "SEL-9001" not in {p.code for p in demo_store.store.list_people()}
    next(c for c in at.checkbox if c.label == "The values read from the file are right").check()
    at.button[[b.label for b in at.button].index("Import into the library")].click().run()
    assert not at.exception, at.exception
    assert any("stored as test" in s.value for s in at.success)
    people = {p.code for p in demo_store.store.list_people()}
    assert "SEL-9001" in people
    new = [t for t in demo_store.store.list_tests() if t.person_code == "SEL-9001"]
    assert len(new) == 1
    stored = demo_store.store.load_session(new[0].id)
    # 1 L/min = 1000 mL/min (SI): the stored VO2 equals the exported litres times 1000
    assert stored.breaths["vo2_ml_min"].iloc[10] == pytest.approx(expected.session.breaths["vo2_ml_min"].iloc[10])


def test_rejected_file_lists_problems_and_the_mapping_fix_makes_it_importable(demo_store, page_test):
    raw = _generic_export(demo_store, drop_vo2_name=True)
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("odd-names.csv", raw, "text/csv")).run()
    assert not at.exception, at.exception
    assert any("cannot be imported" in e.value for e in at.error)
    problems = _table(at, "Problem")
    assert problems["Problem"].str.contains("VO2").any()
    before = len(demo_store.store.list_tests())
    box = next(s for s in at.selectbox if s.label == "‘Oxy uptake L’")
    box.set_value("vo2_ml_min").run()
    assert not at.exception, at.exception
    assert not any("cannot be imported" in e.value for e in at.error)
    assert "Breaths" in {m.label for m in at.metric}
    assert len(demo_store.store.list_tests()) == before  # nothing stored by the check itself


def test_pure_helpers():
    assert library.target_label("vo2_ml_min") == "VO2 (mL/min)"
    assert library.target_label("ignore") == "— ignore —"
    m = library.mapping_dict({"Oxygen": "vo2_ml_min"}, gas_unit="l_min", guess_rest=False)
    assert m["columns"] == {"Oxygen": "vo2_ml_min"} and m["units"] == {"vo2_ml_min": "l_min"}
    flags = pd.DataFrame({"source_row": [3, 4, 9], "column": ["rer", "rer", "hr_bpm"], "reason": ["RER high"] * 2 + ["gap"]})
    s = library.flag_summary(flags)
    assert dict(zip(s["Reason"], s["Rows"])) == {"RER high": 2, "gap": 1}
    assert [library.sign_off_text(None, 1), library.sign_off_text(2, 2), library.sign_off_text(1, 3)] == [
        "no", "yes", "version 1 only"]
    assert library.TIME_FORMAT_LABELS["s"] == "seconds" and library.TIME_FORMAT_LABELS["mm:ss"] == "m:ss"


def test_xlsx_sheet_choice_and_first_sheet_import(demo_store, page_test):
    # A two-sheet workbook built here with openpyxl: a notes sheet without a table, then the data.
    from openpyxl import Workbook

    session = demo_store.store.load_session(demo_store.test_ids[1])
    b = session.breaths
    wb = Workbook()
    notes = wb.active
    notes.title = "Notes"
    notes.append(["Saltmarsh Exercise Lab — fictional workbook"])
    data_ws = wb.create_sheet("Breaths")
    data_ws.append(["Time", "VO2", "VCO2", "VE", "HR"])
    for row in b[["t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm"]].itertuples(index=False):
        data_ws.append([float(v) for v in row])
    extra = wb.create_sheet("Copy")
    for r in data_ws.iter_rows(values_only=True):
        extra.append(list(r))
    buf = io.BytesIO()
    wb.save(buf)
    raw = buf.getvalue()
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(
        ("workbook.xlsx", raw, "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet")
    ).run()
    assert not at.exception, at.exception
    sheet_box = next(s for s in at.selectbox if s.label == "Sheet")
    assert sheet_box.options == ["Notes", "Breaths", "Copy"]
    sheet_box.set_value("Breaths").run()
    assert not at.exception, at.exception
    assert {m.label: m.value for m in at.metric}["Breaths"] == f"{len(b):,}"
    assert any(b_.label == "Import into the library" for b_ in at.button)
    # Any sheet can be imported: the choice goes to the store with the test (import options).
    next(s for s in at.selectbox if s.label == "Sheet").set_value("Copy").run()
    next(s for s in at.selectbox if s.label == "Time column written as").set_value("s").run()
    assert not at.error, [e.value for e in at.error]
    at.button[[b_.label for b_ in at.button].index("Import into the library")].click().run()
    assert not at.exception, at.exception
    assert any("stored as test" in s_.value for s_ in at.success), [s_.value for s_ in at.success]
    tid = at.session_state["lib_last_import"]
    assert demo_store.store.get_test(tid).import_options == {"sheet": "Copy", "time_format": "s"}
    assert len(demo_store.store.load_session(tid).breaths) == len(b)


def test_source_headers_are_the_importers_own():
    from analysis.io import read_headers
    from dashboard import data

    raw = b"Saltmarsh Exercise Lab export\n\nTime,VO2 (L/min),VCO2 (L/min),VE,,VE\n0,0.3,0.25,10,1,11\n5,0.32,0.27,11,1,12\n"
    headers = data.source_headers(raw, file_name="odd.csv")
    assert headers == read_headers(raw, file_name="odd.csv")
    assert headers[:4] == ["Time", "VO2 (L/min)", "VCO2 (L/min)", "VE"] and len(headers) == 6
    assert data.source_headers(b"\x00\x01 not a table", file_name="junk.csv") is None
    assert library.import_options(sheet=None, gas_unit="auto", time_format="auto") == {}
    assert library.import_options(sheet="Breaths", gas_unit="l_min", time_format="mm:ss") == {
        "sheet": "Breaths", "gas_unit": "l_min", "time_format": "mm:ss"}


def test_mapping_saved_as_profile_is_offered_for_the_next_upload(demo_store, page_test):
    from analysis.io import load_profile
    from pathlib import Path

    raw = _generic_export(demo_store, drop_vo2_name=True)
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("odd-names.csv", raw, "text/csv")).run()
    next(s for s in at.selectbox if s.label == "‘Oxy uptake L’").set_value("vo2_ml_min").run()
    name_key = next(t.key for t in at.text_input if t.label.startswith("Save this mapping"))
    at.text_input(key=name_key).input("Lab cart A")
    at.button[[b.label for b in at.button].index("Save profile")].click().run()
    assert not at.exception, at.exception
    assert any("saved as profile ‘Lab cart A’" in s.value for s in at.success)
    path = Path(demo_store.url.removeprefix("sqlite:///")).parent / "mapping-profiles" / "Lab cart A.json"
    assert load_profile(path).mapped()["vo2_ml_min"] == "Oxy uptake L"
    fresh = page_test(_library_script, tm_user=demo_store.user).run()
    fresh.file_uploader(key="lib_upload").set_value(("odd-names-2.csv", raw, "text/csv")).run()
    profile_box = next(s for s in fresh.selectbox if s.label == "Column mapping")
    assert "Lab cart A" in profile_box.options
    profile_box.set_value("Lab cart A").run()
    assert not fresh.exception, fresh.exception
    assert not any("cannot be imported" in e.value for e in fresh.error), [e.value for e in fresh.error] + [
        str(d.value) for d in fresh.dataframe]
    assert "Breaths" in {m.label for m in fresh.metric}


def test_viewer_gets_no_upload_and_no_import_check(demo_store, page_test):
    # the import check parses the whole upload, so only roles that may import are offered it
    from dashboard import state
    from tests.dashboard.conftest import make_user

    viewer = make_user(demo_store.store, "library.viewer", "viewer")
    at = page_test(_library_script, **{state.USER: viewer, state.DEMO_MODE: False}).run()
    assert not at.exception
    assert [u for u in at.get("file_uploader") if u.key == "lib_upload"] == []
    assert any("not import tests" in str(i.value) for i in at.info)


def test_gas_conditions_fields_convert_stpd_ventilation(demo_store, page_test):
    # "VE (L/min, STPD)" needs the barometric pressure: the import check refuses it until the
    # pressure is given in the form, then stores VE at BTPS (gas laws: × 1.2103 at 760 mmHg)
    raw = _generic_export(demo_store).replace(b",VE,", b",\"VE (L/min, STPD)\",", 1)
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("stpd-export.csv", raw, "text/csv")).run()
    assert not at.exception, at.exception
    problems = _table(at, "Problem")
    assert any("VE is stated as STPD" in p for p in problems["Problem"])
    assert any("Gas conditions" in f for f in problems["What to do"])
    next(n for n in at.number_input if n.label == "Barometric pressure (mmHg)").set_value(760.0).run()
    assert not at.exception, at.exception
    assert any("converted to BTPS × 1.2103" in c.value.replace("\\", "") for c in at.caption)  # shown escaped
    code_key = next(t.key for t in at.text_input if t.label.startswith("Person code"))
    at.text_input(key=code_key).input("SEL-9002")
    next(c for c in at.checkbox if c.label == "The values read from the file are right").check()
    at.button[[b.label for b in at.button].index("Import into the library")].click().run()
    assert not at.exception, at.exception
    (new,) = [t for t in demo_store.store.list_tests() if t.person_code == "SEL-9002"]
    assert demo_store.store.get_test(new.id).import_options["barometric_mmhg"] == 760.0
    stored = demo_store.store.load_session(new.id)
    expected = import_bytes(_generic_export(demo_store), file_name="x.csv").session.breaths["ve_l_min"]
    assert stored.breaths["ve_l_min"].iloc[10] == pytest.approx(expected.iloc[10] * 1.2103, rel=5e-5)
    assert stored.meta["ve_condition"] == "btps" and stored.meta["ve_condition_stated"] == "stpd"


def test_import_options_keep_the_gas_conditions():
    assert library.import_options(sheet=None, gas_unit="auto", time_format="auto", ve_condition="atps",
                                  barometric_mmhg=755, ambient_c=21.5) == {
        "ve_condition": "atps", "barometric_mmhg": 755.0, "ambient_c": 21.5}
