"""Progress page: one person across tests.

VO2peak, VO2 at VT1, VE/VCO2 slope and peak O2 pulse over time; change from a chosen baseline
test with the typical-error band (figures and provenance from :mod:`analysis.progress`); two
tests overlaid. Every number comes from the analysis of each test.
"""

from __future__ import annotations

import logging
from typing import Any

import pandas as pd
import streamlit as st

from analysis.progress import BAND_METHOD, METRICS, OVERLAYS, TestRecord, aligned_series, progress_table
from analysis.progress_compare import (
    ISO_VALUES,
    POPULATIONS,
    TYPICAL_ERRORS_BY_POPULATION,
    IsoComparison,
    comparability_warnings,
    iso_comparison,
    protocol_facts,
    suggested_population,
)
from dashboard import data
from dashboard.charts.progress import overlay_figure, progress_figure
from dashboard.lab import markdown_text
from dashboard.report.html_report import format_number
from dashboard.views._test_choice import current_or_default, person_label, settings_json, test_settings

log = logging.getLogger("tidemark.dashboard")

OVERLAY_LABELS: dict[str, str] = {"vo2_time": "VO2 against time", "vco2_vo2": "VCO2 against VO2 (V-slope plane)"}

#: Decimals shown per followed result.
DIGITS: dict[str, int] = {
    "vo2_peak_ml_min": 0,
    "vo2_peak_ml_kg_min": 1,
    "vt1_vo2_ml_min": 0,
    "ve_vco2_slope_whole_exercise": 1,
    "o2_pulse_peak_ml_beat": 1,
}


def change_display(table: pd.DataFrame) -> pd.DataFrame:
    """The progress table formatted for reading: one row per test and result."""
    rows = []
    for _, r in table.iterrows():
        digits = DIGITS.get(r["metric"], 1)
        unit = f" {r['unit']}" if r["unit"] else ""
        rows.append(
            {
                "Test date": r["test_date"],
                "Result": r["metric_label"],
                "Value": format_number(r["value"], digits) + (unit if pd.notna(r["value"]) else ""),
                "Change from baseline": "baseline"
                if r["is_baseline"]
                else (format_number(r["change"], digits) if pd.isna(r["change"]) else f"{r['change']:+,.{digits}f}".replace(",", "\u2009") + unit),
                "Change (%)": "–" if r["is_baseline"] or pd.isna(r["change_pct"]) else f"{r['change_pct']:+.1f} %",
                "Beyond typical error": "–" if r["is_baseline"] else ("yes" if r["beyond_typical_error"] else "no"),
            }
        )
    return pd.DataFrame(rows)


def typical_error_display(population: str = "healthy") -> pd.DataFrame:
    """The typical errors in use for ``population`` with their provenance."""
    return pd.DataFrame(
        [
            {"Result": METRICS[k].label, "Typical error (%)": f"{te.pct:g}", "Source": te.provenance}
            for k, te in TYPICAL_ERRORS_BY_POPULATION[population].items()
        ]
    )


def iso_display(iso: IsoComparison, *, label_a: str, label_b: str) -> pd.DataFrame:
    """The iso-load (or isotime) comparison formatted for reading: one row per value."""
    digits = {col: d for col, _label, _unit, d in ISO_VALUES}
    rows = []
    for v in iso.values:
        unit = f" {v.unit}" if v.unit else ""
        d = digits.get(v.column, 1)
        rows.append(
            {
                "Result": v.label,
                label_a: format_number(v.value_a, d) + (unit if v.value_a is not None else ""),
                label_b: format_number(v.value_b, d) + (unit if v.value_b is not None else ""),
                "Change": "–" if v.change is None else f"{v.change:+,.{d}f}".replace(",", "\u2009") + unit,
                "Change (%)": "–" if v.change_pct is None else f"{v.change_pct:+.1f} %",
                "Beyond typical error": "–" if v.beyond_typical_error is None else ("yes" if v.beyond_typical_error else "no"),
                "Typical error (%)": f"{v.typical_error_pct:g}",
                "Source": v.source,
            }
        )
    return pd.DataFrame(rows)


def _population_choice(records: list[TestRecord]) -> str:
    suggested, why = suggested_population([[f.code for f in r.results.flags] for r in records])
    keys = list(POPULATIONS)
    population = st.radio(
        "Typical errors for", keys, index=keys.index(suggested), format_func=lambda k: POPULATIONS[k], horizontal=True,
        key="progress_population",
        help="Test-retest errors are larger in patients than in healthy adults; the band of 'no change' follows.",
    )
    st.caption(f"Suggested: {POPULATIONS[suggested]} ({markdown_text(why)}).")
    return str(population)


def _warn_comparability(a: TestRecord, b: TestRecord) -> None:
    for w in comparability_warnings(protocol_facts(a.results), protocol_facts(b.results), a_label=a.label, b_label=b.label):
        st.warning(markdown_text(w))


def render() -> None:
    st.title("Progress")
    st.caption("One person across tests: change from a baseline test against the typical test-retest error.")
    store = data.get_store()
    people = list(store.list_people())
    if not people:
        st.info("No people in the library yet. Import a test on the Library page.")
        return
    by_id = {p.id: p for p in people}
    current = current_or_default([t.id for t in store.list_tests()])
    default_person = None
    if current is not None:
        try:
            default_person = store.get_test(current).summary.person_id
        except Exception:  # noqa: BLE001 - no current test: start with the first person
            default_person = None
    ids = list(by_id)
    if default_person not in ids:  # no current test: start with the person followed longest
        default_person = max(people, key=lambda p: (p.n_tests, -p.id)).id
    person_id = st.selectbox(
        "Person",
        ids,
        index=ids.index(default_person) if default_person in ids else 0,
        format_func=lambda i: f"{person_label(by_id[i])} — {by_id[i].n_tests} test(s)",
        key="progress_person",
    )
    tests = sorted(store.list_tests(person_id), key=lambda t: (str(t.test_date or ""), t.id))
    if not tests:
        st.info("This person has no tests.")
        return
    if len(tests) == 1:
        st.info("Only one test of this person so far: changes appear once a second test is stored.")

    records = []
    results_by_id: dict[int, Any] = {}
    for t in tests:
        settings, _ = test_settings(store, t.id)
        key = settings_json(settings)
        records.append(TestRecord(t.id, str(t.test_date or ""), data.analyze(t.id, key), label=_test_name(t)))
        results_by_id[t.id] = key

    test_by_id = {t.id: t for t in tests}
    baseline_id = st.selectbox(
        "Baseline test",
        [t.id for t in tests],
        index=0,
        format_func=lambda i: _test_name(test_by_id[i]),
        key="progress_baseline",
    )
    population = _population_choice(records)
    table = progress_table(records, baseline_test_id=int(baseline_id), typical_errors=TYPICAL_ERRORS_BY_POPULATION[population])
    baseline_record = next(r for r in records if r.test_id == int(baseline_id))
    for r in records:
        if r.test_id != baseline_record.test_id:
            _warn_comparability(baseline_record, r)

    st.subheader("Change from baseline")
    st.dataframe(change_display(table), hide_index=True, width="stretch")
    with st.expander("Typical test-retest error used for the band"):
        st.write(f"Band: {BAND_METHOD}. Figures are estimates of measurement noise, not of a person's biology.")
        st.dataframe(typical_error_display(population), hide_index=True, width="stretch")

    present = [m for m in METRICS if table.loc[table["metric"] == m, "value"].notna().any()]
    if present:
        tabs = st.tabs([METRICS[m].label for m in present])
        for tab, metric in zip(tabs, present, strict=True):
            with tab:
                st.plotly_chart(progress_figure(table, metric), width="stretch", key=f"progress_{metric}")

    st.subheader("Two tests overlaid")
    if len(tests) < 2:
        st.info("Overlays need at least two tests of this person.")
        return
    chosen = st.multiselect(
        "Tests to overlay (choose two)",
        [t.id for t in tests],
        default=[tests[0].id, tests[-1].id],
        max_selections=2,
        format_func=lambda i: _test_name(test_by_id[i]),
        key="progress_overlay_tests",
    )
    overlay = st.radio(
        "Overlay", list(OVERLAYS), format_func=lambda k: OVERLAY_LABELS[k], horizontal=True, key="progress_overlay"
    )
    if len(chosen) != 2:
        st.info("Choose two tests to overlay.")
        return
    frames = {}
    for tid in chosen:
        frame = data.analyze(tid, results_by_id[tid]).averaged
        if len(frame):
            frames[_test_name(test_by_id[tid])] = frame
    if len(frames) < 2:
        st.warning("The averaged data of one of these tests is not available.")
        return
    st.plotly_chart(overlay_figure(aligned_series(frames, overlay=overlay), overlay=overlay), width="stretch", key="progress_overlay_chart")
    (label_a, avg_a), (label_b, avg_b) = frames.items()
    st.subheader("The two tests at the same load")
    record_by_id = {r.test_id: r for r in records}
    _warn_comparability(record_by_id[chosen[0]], record_by_id[chosen[1]])
    iso = iso_comparison(avg_a, avg_b, population=population)
    if iso is None:
        st.info("No exercise phase in one of the two tests: nothing to compare at the same load.")
        return
    st.caption(markdown_text(iso.note) + f" Typical errors for {POPULATIONS[population]}; band {BAND_METHOD}.")
    st.dataframe(iso_display(iso, label_a=label_a, label_b=label_b), hide_index=True, width="stretch")


def _test_name(t: Any) -> str:
    return " · ".join(x for x in (str(t.test_date or "no date"), t.protocol or "", f"#{t.id}") if x)
