"""Library page additions (AppTest): plausibility warning, preamble metadata, sheet choice, mapping reset."""

from __future__ import annotations

from tests.workbooks import xlsx_bytes


def _library_script() -> None:
    from dashboard.views.library import render

    render()


def _csv(rows: list[tuple[float, float, float, float]], preamble: str = "") -> bytes:
    body = "Time (s);VO2 (mL/min);VCO2 (mL/min);VE (L/min)\n" + "\n".join(
        f"{t:.0f};{v:.0f};{c:.0f};{e:.1f}".replace(".", ",") for t, v, c, e in rows
    )
    return (preamble + body + "\n").encode("utf-8")


def test_a_22_hour_file_is_checked_with_a_plausibility_warning(demo_store, page_test):
    # one breath every 40 s for 22 hours (1,980 breaths): read, but the reviewer is warned
    rows = [(i * 40.0, 800.0 + (i % 50) * 20, 700.0 + (i % 50) * 22, 20.0 + (i % 50) * 0.8) for i in range(1981)]
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("day-long.csv", _csv(rows), "text/csv")).run()
    assert not at.exception, at.exception
    assert any("22 h 00 min" in w.value for w in at.warning), [w.value for w in at.warning]


PREAMBLE_EXPORT = (
    "Test date:;10.02.2026\nBody mass (kg);58\n\nTime;VO2 (L/min);VCO2 (L/min);VE (L/min);HF\n"
    + "".join(f"{i * 3};{0.8 + i * 0.02:.3f};{0.7 + i * 0.022:.3f};{20 + i * 0.5:.1f};{80 + i // 3}\n".replace(".", ",")
              for i in range(300))
).encode("utf-8")


def _table(at, column):
    return next(df.value for df in at.dataframe if column in df.value.columns)


def test_import_form_confirms_the_preamble_sets_age_and_sex_and_lists_the_test_at_once(demo_store, page_test):
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("preamble.csv", PREAMBLE_EXPORT, "text/csv")).run()
    assert not at.exception, at.exception
    preview = _table(at, "Read as")
    assert list(preview["Read as"]) == ["Test date", "Body mass (kg)"] and list(preview["Value"]) == ["2026-02-10", "58"]
    # the mapping editor says that it converts L/min to mL/min
    assert any("converted from L/min to mL/min, values × 1000" in c.value for c in at.caption)
    by_label = {n.label: n for n in at.number_input}
    assert by_label["Body mass (kg)"].value == 58.0  # the form starts from the file's values
    by_label["Age (years)"].set_value(41)
    next(s for s in at.selectbox if s.label == "Sex").set_value("M")
    next(t for t in at.text_input if t.label.startswith("Person code")).input("HSL-77")
    next(c for c in at.checkbox if c.label == "The values read from the file are right").check()
    at.button[[b.label for b in at.button].index("Import into the library")].click().run()
    assert not at.exception, at.exception
    assert any("stored as test" in s.value for s in at.success)
    new = next(t for t in demo_store.store.list_tests() if t.person_code == "HSL-77")
    meta = demo_store.store.test_metadata(new.id)
    assert (meta["test_date"], meta["body_mass_kg"], meta["age_y"], meta["sex"]) == ("2026-02-10", 58.0, 41.0, "M")
    assert demo_store.store.get_test(new.id).import_options["meta_overrides"] == {"age_y": "41", "sex": "M"}
    listed = _table(at, "VO2peak (mL/min)")
    assert new.id in set(listed["Test"])  # listed in the same run as the import
    assert demo_store.store.get_results(new.id)["vo2_peak_ml_kg_min"] is not None


def _workbook() -> bytes:
    summary = [["Result", "Value", "Unit"], ["Peak VO2", 2.8, "L/min"], ["Peak HR", 182, "1/min"], ["RER", 1.1, ""]]
    breaths = [["Time", "VO2", "VCO2", "VE"]] + [[i * 3.0, 800.0 + 10 * i, 700.0 + 11 * i, 20.0 + 0.4 * i] for i in range(200)]
    return xlsx_bytes({"Summary": summary, "Breaths": breaths})


XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def test_breath_sheet_by_default_and_another_sheet_starts_from_its_own_mapping(demo_store, page_test):
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("two.xlsx", _workbook(), XLSX)).run()
    assert not at.exception, at.exception
    assert next(s for s in at.selectbox if s.label == "Sheet").value == "Breaths"
    assert {m.label: m.value for m in at.metric}["Breaths"] == "200"
    next(s for s in at.selectbox if s.label == "‘VE’").set_value("ignore").run()  # an edit on this sheet
    assert any("Back to the guessed mapping" == b.label for b in at.button)
    next(s for s in at.selectbox if s.label == "Sheet").set_value("Summary").run()
    labels = [s.label for s in at.selectbox]
    assert "‘Peak VO2’" in labels and "‘VE’" not in labels  # the Summary sheet's own columns, nothing kept
    rows = _table(at, "What to do")
    text = " ".join(rows["What to do"]) + " ".join(rows["Problem"])
    assert "--" not in text  # no command-line option named on the page
    assert "Sheet box above" in text
    # the import errors' grid gives the long columns room (finding: grid columns cut off)
    import json

    grid = next(df for df in at.dataframe if "What to do" in df.value.columns)
    config = json.loads(grid.proto.columns or "{}")
    assert config["Problem"]["width"] == "large" and config["What to do"]["width"] == "large"


def test_back_to_the_guessed_mapping_resets_every_box(demo_store, page_test):
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("one.xlsx", _workbook(), XLSX)).run()
    next(s for s in at.selectbox if s.label == "‘VE’").set_value("ignore").run()
    assert next(s for s in at.selectbox if s.label == "‘VE’").value == "ignore"
    next(b for b in at.button if b.label == "Back to the guessed mapping").click().run()
    assert not at.exception, at.exception
    assert next(s for s in at.selectbox if s.label == "‘VE’").value == "ve_l_min"
    assert {m.label: m.value for m in at.metric}["Breaths"] == "200"


def test_page_advice_names_no_command_line_option():
    from dashboard.views.library import page_advice

    assert page_advice('name the column(s) explicitly, e.g. --map "Oxygen=vo2_ml_min" (or choose them in the '
                       'import page)') == "choose the column(s) in the column mapping below"
    assert "--" not in page_advice("sheet 'A' was read (the workbook has: A, B); choose another with --sheet")
    assert "--" not in page_advice("check it is one test; raise the limit (--max-mb) if it really is one test")
