"""Library page: add tests (upload, import check, column mapping) and open stored tests.

Import checks come from :func:`analysis.io.import_bytes` (through :func:`dashboard.data.
preview_import`); storing goes through :meth:`store.Store.import_test`; headline numbers in the
list are the store's (computed by the analysis when the test was saved).
"""

from __future__ import annotations

import hashlib
import json
import logging
import math
import re
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import pandas as pd
import streamlit as st

from analysis import columns as C
from analysis.errors import ImportRejected, InvalidParameter
from analysis.io import MAX_UPLOAD_MB
from analysis.io.plausibility import duration_warning
from dashboard import data, state
from dashboard.errors import show_error
from dashboard.lab import markdown_text
from dashboard.report.html_report import format_number
from dashboard.subject_details import form_defaults, import_overrides, preamble_rows
from dashboard.timefmt import clock_text
from dashboard.views._subject_panel import detail_inputs
from dashboard.views._test_choice import default_test_id

if TYPE_CHECKING:
    from store import Store, TestSummary

log = logging.getLogger("tidemark.dashboard")

UPLOAD_TYPES = ["csv", "tsv", "txt", "xlsx"]
IGNORE = "ignore"
#: Choices of the gas-unit selector: code -> label (codes as the importer's mapping units).
GAS_UNITS: dict[str, str] = {"auto": "Detect from the values", "ml_min": "mL/min", "l_min": "L/min"}
#: Condition the ventilation was measured in (the importer converts STPD and ATPS to BTPS).
VE_CONDITIONS: dict[str, str] = {"auto": "As the file states it (else BTPS)", "btps": "BTPS", "stpd": "STPD",
                                 "atps": "ATPS (room conditions)"}
GUESS = "(guess from the column headers)"
#: Choices of the time-format selector: importer code -> label.
TIME_FORMAT_LABELS: dict[str, str] = {
    "auto": "Detect from the values",
    "s": "seconds",
    "min": "minutes (decimal)",
    "ms": "milliseconds",
    "mm:ss": "m:ss",
    "h:mm:ss": "h:mm:ss",
}


# --- pure helpers -------------------------------------------------------------------------


def target_options() -> list[str]:
    """What a source column can be mapped to: 'ignore' or a canonical column."""
    return [IGNORE, *C.COLUMNS]


def target_label(name: str) -> str:
    if name == IGNORE:
        return "— ignore —"
    spec = C.COLUMNS[name]
    return f"{spec.label} ({spec.unit})" if spec.unit else spec.label


def mapping_dict(columns: Mapping[str, str], *, gas_unit: str = "auto", guess_rest: bool = True) -> dict[str, Any]:
    """A :class:`analysis.io.ColumnMapping` dict from the editor's choices and the gas unit."""
    from analysis.io import ColumnMapping

    units = {}
    if gas_unit in ("ml_min", "l_min"):
        targets = set(columns.values())
        units = {n: gas_unit for n in (C.VO2_ML_MIN, C.VCO2_ML_MIN) if n in targets or guess_rest}
    return ColumnMapping(dict(columns), units, guess_rest).to_dict()


def import_options(
    *, sheet: str | None, gas_unit: str, time_format: str, ve_condition: str = "auto",
    barometric_mmhg: float | None = None, ambient_c: float | None = None,
) -> dict[str, Any]:
    """The ``import_test`` options the reviewer chose (defaults left out), stored with the test."""
    options: dict[str, Any] = {}
    if ve_condition != "auto":
        options["ve_condition"] = ve_condition
    if barometric_mmhg is not None:
        options["barometric_mmhg"] = float(barometric_mmhg)
    if ambient_c is not None:
        options["ambient_c"] = float(ambient_c)
    if sheet is not None:
        options["sheet"] = sheet
    if gas_unit != "auto":
        options["gas_unit"] = gas_unit
    if time_format != "auto":
        options["time_format"] = time_format
    return options


#: The importer's advice names command-line options; on this page the same advice names the
#: page's own controls instead (pattern -> replacement).
_CLI_ADVICE: tuple[tuple[re.Pattern[str], str], ...] = (
    (re.compile(r'name the column\(s\) explicitly, e\.g\. --map "[^"]*" \(or choose them in the import page\)'),
     "choose the column(s) in the column mapping below"),
    (re.compile(r"choose it with --sheet"), "choose it in the Sheet box above"),
    (re.compile(r"choose another with --sheet"), "choose another in the Sheet box above"),
    (re.compile(r"; raise the limit \(--max-mb\) if it really is one test"), ""),
    (re.compile(r" — save it again with --save-profile"), " — save the mapping as a profile again"),
    (re.compile(r"\s*\(?--[a-z][a-z-]*(?: \S+)?\)?"), ""),  # anything else: the option is left out
)


def page_advice(text: str) -> str:
    """Importer advice in the words of this page: no command-line option is named."""
    for pattern, replacement in _CLI_ADVICE:
        text = pattern.sub(replacement, text)
    return text


def problem_rows(exc: ImportRejected) -> list[dict[str, Any]]:
    """The problems of a rejected import as table rows (line, column, problem, what to do)."""
    return [
        {"Line": str(p.row) if p.row is not None else "", "Column": p.column or "", "Problem": page_advice(p.message),
         "What to do": page_advice(p.fix)}
        for p in exc.problems
    ]


def conversion_notes(mapping: Any) -> list[str]:
    """One sentence per column whose values the import converts (``VO2: L/min → mL/min, × 1000``)."""
    from analysis.io._units import UNIT_LABELS, factor

    mapped = mapping.mapped()
    out = []
    for name, code in sorted(mapping.units.items()):
        spec = C.COLUMNS.get(name)
        if spec is None or name not in mapped or not code:
            continue
        label = UNIT_LABELS.get(code, code)
        if label == spec.unit:
            continue
        try:
            times = factor(name, code)
        except Exception:  # noqa: BLE001 - a unit without a factor is described without one
            times = None
        by = f", values × {times:g}" if isinstance(times, (int, float)) and times not in (1, 1.0) else ""
        out.append(f"‘{mapped[name]}’ is converted from {label} to {spec.unit}{by}.")
    return out


def flag_summary(flags: pd.DataFrame) -> pd.DataFrame:
    """Flagged rows counted by column and reason (what the reviewer should look at)."""
    if flags is None or not len(flags):
        return pd.DataFrame(columns=["Column", "Reason", "Rows"])
    g = flags.groupby(["column", "reason"], dropna=False).size().reset_index(name="Rows")
    return g.rename(columns={"column": "Column", "reason": "Reason"})


def stored_headline(store: Store, summary: TestSummary) -> dict[str, float | None]:
    """VO2peak, VT1 VO2 and VE/VCO2 slope of a test's current stored version.

    The store's summary columns are used; when one is empty the stored results of that version
    are read instead (same numbers, computed by the analysis when the version was saved, read
    back as the result record by :func:`dashboard.data.stored_results`).
    """
    out = {
        "vo2_peak_ml_min": summary.vo2peak_ml_min,
        "vt1_vo2_ml_min": summary.vt1_vo2_ml_min,
        "ve_vco2_slope": summary.ve_vco2_slope,
    }
    if any(v is None for v in out.values()) and not summary.results_error:
        try:
            results = data.stored_results(store, summary.id)
        except Exception:  # the list still shows what the summary has
            log.exception("stored results of test %s could not be read", summary.id)
            return out
        if results is None:
            return out
        stored = {
            "vo2_peak_ml_min": results.vo2_peak_ml_min,
            "vt1_vo2_ml_min": None if results.vt1 is None else results.vt1.vo2_ml_min,
            "ve_vco2_slope": results.ve_vco2_slope,
        }
        for key, value in stored.items():  # NaN (a value the analysis could not compute) is no value
            if out[key] is None and value is not None and math.isfinite(value):
                out[key] = value
    return out


def _round(value: float | None, digits: int = 0) -> float | None:
    if value is None:
        return None
    return round(float(value)) if digits == 0 else round(float(value), digits)


def sign_off_text(signed_version: int | None, version: int) -> str:
    """``"yes"`` when the current version is signed off, ``"version 2 only"`` when an earlier one is."""
    if signed_version is None:
        return "no"
    return "yes" if signed_version == version else f"version {signed_version} only"


def test_rows(tests: Sequence[Any], headlines: Mapping[int, Mapping[str, float | None]] | None = None) -> pd.DataFrame:
    """The test list as a table (numbers are the store's stored results)."""
    rows = []
    for t in tests:
        h = (headlines or {}).get(t.id) or {
            "vo2_peak_ml_min": t.vo2peak_ml_min, "vt1_vo2_ml_min": t.vt1_vo2_ml_min, "ve_vco2_slope": t.ve_vco2_slope,
        }
        rows.append(
            {
                "Test": t.id,
                "Person": t.person_code + (f" ({t.display_name})" if t.display_name else ""),
                "Date": t.test_date or "",
                "VO2peak (mL/min)": _round(h["vo2_peak_ml_min"]),
                "VT1 VO2 (mL/min)": _round(h["vt1_vo2_ml_min"]),
                "VE/VCO2 slope": _round(h["ve_vco2_slope"], 1),
                "Version": t.version,
                "Signed off": sign_off_text(t.signed_version, t.version),
                "Protocol": t.protocol or "",
                "File": t.file_name,
            }
        )
    return pd.DataFrame(rows)


# --- the test list --------------------------------------------------------------------------


def _test_list(store: Store) -> None:
    st.subheader("Tests in the library")
    people = list(store.list_people())
    if not people:
        st.info("The library is empty. Add a test below.")
        return
    codes = {p.id: p.code + (f" ({p.display_name})" if p.display_name else "") for p in people}
    person = st.selectbox("Person", [None, *codes], format_func=lambda i: "Everyone" if i is None else codes[i], key="lib_person")
    tests = list(store.list_tests(person))
    tests.sort(key=lambda t: (t.person_code, t.test_date or ""))
    if not tests:
        st.caption("No tests for this person.")
        return
    headlines = {t.id: stored_headline(store, t) for t in tests}
    st.dataframe(
        test_rows(tests, headlines), hide_index=True,
        column_config={"Protocol": st.column_config.TextColumn("Protocol", width="large"),
                       "File": st.column_config.TextColumn("File", width="medium")},
    )
    st.caption("Headline numbers are from each test's current stored version.")
    by_id = {t.id: t for t in tests}
    ids = list(by_id)
    current = default_test_id(ids, state.current_test_id())  # filtering by person does not change it
    c1, c2 = st.columns([3, 1])
    chosen = c1.selectbox(
        "Open a test",
        ids,
        index=ids.index(current) if current in ids else 0,
        format_func=lambda i: f"{by_id[i].person_code} · {by_id[i].test_date or 'no date'} · {by_id[i].protocol or by_id[i].file_name}",
        key="lib_open_choice",
    )
    c2.write("")
    if c2.button("Open in Review", type="primary", key="lib_open"):
        open_test(int(chosen))


def open_test(test_id: int) -> None:
    """Make ``test_id`` the current test and switch to the Review page."""
    state.set_current_test(test_id)
    if not state.go_to("review"):
        st.success(f"Test {test_id} is now the current test; open the Review page.")


# --- adding tests ---------------------------------------------------------------------------


def _mapping_editor(key: str, headers: list[str], used: Mapping[str, str]) -> dict[str, str] | None:
    """One select box per source column; returns the edited mapping, or None when unchanged."""
    options = target_options()
    edited: dict[str, str] = {}
    cols = st.columns(3)
    for i, header in enumerate(headers):
        current = used.get(header, IGNORE)
        if current not in options:
            current = IGNORE
        with cols[i % 3]:
            edited[header] = st.selectbox(
                f"‘{header}’", options, index=options.index(current), format_func=target_label, key=f"{key}_col_{i}"
            )
    if all(edited[h] == used.get(h, IGNORE) for h in headers):
        return None
    return edited


def _default_sheet(raw: bytes, name: str, sheets: list[str]) -> int:
    """Index of the sheet the importer itself would read (the one that looks like breath data)."""
    try:
        chosen = data.preview_import(raw, file_name=name).sheet
    except Exception:  # noqa: BLE001 - no sheet reads on its own: start with the first
        return 0
    return sheets.index(chosen) if chosen in sheets else 0


def _import_panel(store: Store, upload: Any, index: int) -> None:
    raw: bytes = upload.getvalue()
    name: str = upload.name
    base = "imp_" + hashlib.sha256(raw).hexdigest()[:12] + f"_{index}"
    is_xlsx = name.lower().endswith(".xlsx")
    cols = st.columns(4 if is_xlsx else 3)  # the sheet choice first, for workbooks only
    c2, c_time, c3 = cols[-3:]
    sheet = None
    if is_xlsx:
        try:
            sheets = data.sheet_names(raw)
        except ImportRejected as exc:
            show_error(exc, context=name)
            return
        sheet = cols[0].selectbox("Sheet", sheets, index=_default_sheet(raw, name, sheets), key=f"{base}_sheet")
    gas_unit = c2.selectbox("VO2/VCO2 unit", list(GAS_UNITS), format_func=GAS_UNITS.__getitem__, key=f"{base}_gas")
    time_format = c_time.selectbox(
        "Time column written as", list(TIME_FORMAT_LABELS), format_func=TIME_FORMAT_LABELS.__getitem__, key=f"{base}_time"
    )
    profiles = data.list_profiles()
    profile = c3.selectbox("Column mapping", [GUESS, *profiles], key=f"{base}_profile")
    with st.expander("Gas conditions (BTPS / STPD / ATPS)"):
        g1, g2, g3 = st.columns(3)
        ve_condition = g1.selectbox("Ventilation measured as", list(VE_CONDITIONS), format_func=VE_CONDITIONS.__getitem__,
                                    key=f"{base}_vecond")
        barometric = g2.number_input("Barometric pressure (mmHg)", min_value=400.0, max_value=820.0, value=None, step=1.0,
                                     key=f"{base}_pb")
        ambient = g3.number_input("Room temperature (°C)", min_value=0.0, max_value=45.0, value=None, step=0.5,
                                  key=f"{base}_room")
        st.caption("Ventilation is kept at BTPS and VO2/VCO2 at STPD (ATS/ACCP 2003). Values stated as STPD or ATPS "
                   "are converted when the pressure (and for ATPS the room temperature) is known.")
    conditions: dict[str, Any] = {"ve_condition": ve_condition, "barometric_mmhg": barometric, "ambient_c": ambient}

    # Widgets and edits belong to one sheet and one profile: choosing another sheet or profile
    # starts from its own guessed mapping. "Back to the guessed mapping" starts a new generation
    # of editor widgets, so no edited box survives the reset.
    generation = int(st.session_state.get(f"{base}_gen", 0))
    key = f"{base}_{hashlib.sha256(f'{profile}|{sheet}|{generation}'.encode()).hexdigest()[:8]}"
    edits_key = f"{key}_edits"
    columns: dict[str, str] | None = st.session_state.get(edits_key)
    guess_rest = columns is None
    if columns is None and profile != GUESS:
        from analysis.io import load_profile

        try:
            columns = dict(load_profile(profiles[profile]).columns)
        except Exception as exc:  # noqa: BLE001 - a bad profile file is shown, the guess is used
            show_error(exc, context=f"Profile '{profile}'")
    mapping = mapping_dict(columns or {}, gas_unit=gas_unit, guess_rest=guess_rest) if (columns or gas_unit != "auto") else None
    mapping_json = json.dumps(mapping, sort_keys=True) if mapping else None

    outcome = None
    try:
        outcome = data.preview_import(
            raw, file_name=name, mapping_json=mapping_json, sheet=sheet, gas_unit=gas_unit, time_format=time_format,
            **conditions,
        )
    except ImportRejected as exc:
        st.error(f"**{markdown_text(name)}** cannot be imported as set up. Nothing was stored.")
        st.dataframe(pd.DataFrame(problem_rows(exc)), hide_index=True, width="stretch",
                     column_config={"Problem": st.column_config.TextColumn("Problem", width="large"),
                                    "What to do": st.column_config.TextColumn("What to do", width="large")})
    except InvalidParameter as exc:
        show_error(exc, context=name)

    headers = data.source_headers(raw, file_name=name, sheet=sheet) or (list(outcome.mapping.columns) if outcome else [])
    if outcome is not None:
        used = dict(outcome.mapping.columns)
    elif columns is not None:
        used = dict(columns)
    else:
        from analysis.io import guess_mapping

        used = dict(guess_mapping(headers).columns) if headers else {}
    if headers:
        with st.expander("Column mapping (source column → Tidemark column)", expanded=outcome is None):
            edited = _mapping_editor(key, headers, used)
            if edited is not None:
                st.session_state[edits_key] = edited
                st.rerun()
            if outcome is not None:
                for line in conversion_notes(outcome.mapping):
                    st.caption(markdown_text(line))
            if (columns is not None or generation) and st.button("Back to the guessed mapping", key=f"{key}_reset"):
                st.session_state.pop(edits_key, None)
                st.session_state[f"{base}_gen"] = generation + 1
                st.rerun()
            p1, p2 = st.columns([2, 1])
            profile_name = p1.text_input("Save this mapping as a profile named", key=f"{key}_pname")
            if p2.button("Save profile", key=f"{key}_psave"):
                _save_profile(profile_name, outcome.mapping.to_dict() if outcome else mapping)
    if outcome is None:
        return

    session = outcome.session
    b = session.breaths
    m1, m2, m3, m4 = st.columns(4)
    m1.metric("Breaths", format_number(len(b), 0))
    m2.metric("Time span (m:ss)", f"{clock_text(b[C.T_S].min())} – {clock_text(b[C.T_S].max())}")
    m3.metric("Gas unit found", GAS_UNITS.get(outcome.gas_unit_detected, outcome.gas_unit_detected))
    m4.metric("Time format", TIME_FORMAT_LABELS.get(outcome.time_format_detected, outcome.time_format_detected))
    details = [f"delimiter {outcome.delimiter!r}" if outcome.delimiter else "Excel workbook",
               f"decimal mark {outcome.decimal!r}"]
    if outcome.sheet:
        details.append(f"sheet ‘{outcome.sheet}’")
    if outcome.skipped_lines:
        details.append(f"{len(outcome.skipped_lines)} lines outside the table skipped")
    st.caption(markdown_text(" · ".join(details)))
    for note in outcome.notes:
        st.caption(markdown_text(f"Note: {page_advice(note)}"))
    too_long = duration_warning(b[C.T_S].to_numpy())
    if too_long:
        st.warning(too_long)
    flags = session.flags
    if len(flags):
        st.warning(f"{len(flags)} rows are flagged as suspicious but kept (nothing is dropped silently).")
        st.dataframe(flag_summary(flags), hide_index=True, width="stretch")
        with st.expander("Every flagged row"):
            st.dataframe(
                flags.rename(columns={"source_row": "Line", "column": "Column", "reason": "Reason"}),
                hide_index=True, width="stretch",
            )
    else:
        st.success("No suspicious rows found.")

    if not state.can_edit():
        st.info("Your role can view the library but not import tests.")
        return
    if outcome.preamble:
        st.markdown("**Read from the lines above the table** — check them; the form below starts from them.")
        st.dataframe(pd.DataFrame(preamble_rows(outcome.preamble)), hide_index=True, width="stretch")
    with st.form(f"{key}_form"):
        f1, f2 = st.columns(2)
        code = f1.text_input("Person code (pseudonymous)", value=str(session.meta.get("subject_id", "")), key=f"{key}_code")
        display = f2.text_input("Display name (optional, staff only)", key=f"{key}_name")
        st.markdown("**Subject and test details**")
        values = detail_inputs(f"{key}_det", form_defaults(session.meta))
        confirmed = True
        if outcome.preamble:
            confirmed = st.checkbox("The values read from the file are right", key=f"{key}_confirm")
        go = st.form_submit_button("Import into the library", type="primary")
    if go and not confirmed:
        st.error("Check the values read from the file and tick the box before importing (or correct them in the form).")
        return
    if go:
        options = import_options(sheet=outcome.sheet, gas_unit=gas_unit, time_format=time_format, **conditions)
        overrides = import_overrides(session.meta, values)
        if overrides:
            options["meta_overrides"] = overrides
        try:
            result = store.import_test(
                raw,
                file_name=name,
                actor=state.acting_user(),
                person_code=code.strip() or None,
                display_name=display.strip() or None,
                mapping=outcome.mapping.to_dict(),
                options=options,
            )
        except Exception as exc:  # noqa: BLE001 - refusals shown plainly, nothing written
            show_error(exc, context=f"Import of {name}")
            return
        st.session_state["lib_last_import"] = result.test_id
        if result.duplicate:
            state.flash(f"{name} is already in the library (test {result.test_id}); nothing new was stored.", kind="info")
        else:
            state.flash(f"{name} stored as test {result.test_id}.")
            if result.results_error:
                state.flash(f"The analysis could not be completed: {result.results_error}", kind="warning")
        state.set_current_test(result.test_id)
        st.rerun()  # the list above shows the new test at once
    if st.session_state.get("lib_last_import") is not None and st.button(
        "Open the imported test in Review", key=f"{key}_open"
    ):
        open_test(int(st.session_state["lib_last_import"]))


def _save_profile(name: str, mapping: Mapping[str, Any] | None) -> None:
    from analysis.io import ColumnMapping, save_profile

    clean = "".join(ch for ch in name.strip() if ch.isalnum() or ch in " -_").strip()
    if not clean:
        st.error("Give the profile a name (letters, digits, spaces, '-' or '_').")
        return
    if not mapping:
        st.error("There is no mapping to save yet.")
        return
    folder = data.profiles_dir()
    folder.mkdir(parents=True, exist_ok=True)
    path = save_profile(ColumnMapping.from_dict(mapping), folder / f"{clean}.json")
    st.success(f"Mapping saved as profile ‘{clean}’ ({path}).")


def _add_tests(store: Store) -> None:
    st.subheader("Add tests")
    st.caption(
        "Breath-by-breath exports as CSV, TSV or Excel (.xlsx). Each file is checked before anything "
        "is stored: columns found, units, time format and every suspicious row."
    )
    if not state.can_edit():
        # the import check parses the whole upload: offered only to roles that may import
        st.info("Your role can view the library but not import tests.")
        return
    # The upload box's limit is server.maxUploadSize (dashboard/.streamlit/config.toml and
    # `tidemark serve`), the same number of MB (1,000,000 bytes each) as the importer's.
    uploads = st.file_uploader(
        f"Exercise test files (up to {MAX_UPLOAD_MB} MB each)", type=UPLOAD_TYPES, accept_multiple_files=True,
        key="lib_upload",
    )
    for i, upload in enumerate(uploads or []):
        with st.expander(markdown_text(upload.name), expanded=True):
            _import_panel(store, upload, i)


def render() -> None:
    """The Library page."""
    for kind, message in state.pop_flashes():
        getattr(st, kind, st.info)(message)
    st.title("Library")
    store = data.get_store()
    _test_list(store)
    st.divider()
    _add_tests(store)
