"""The store with the real analysis library, on the fictional Saltmarsh Exercise Lab demo files.

What is checked is the store's contract with :mod:`analysis` (each number kept is the one
``analyze_session`` produced; the session read back is the one imported), not the physiology,
which ``tests/analysis`` checks against published sources.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from analysis import columns as C
from analysis.errors import ImportRejected, InvalidParameter
from analysis.io import read_session
from store import StoreError, open_store
from store.demo_loader import load_demo_sessions
from tests.support import ROOT

DEMO_DIR = ROOT / "demo_sessions"
CYCLE = DEMO_DIR / "SEL-0107_2026-02-03_cycle-ramp.session.csv"
REHAB = DEMO_DIR / "SEL-0318_2025-11-12_rehab-baseline.session.csv"


@pytest.fixture(scope="module")
def demo_files() -> list[Path]:
    for path in (CYCLE, REHAB):
        if not path.is_file():
            pytest.fail(f"demo file {path.name} is missing; run 'tidemark demo' to create demo_sessions/")
    return [CYCLE, REHAB]


@pytest.fixture
def real_store(store_url, clock):
    store = open_store(store_url, clock=clock)  # real AnalysisBridge
    yield store
    store.close()


def test_import_keeps_exactly_what_the_analysis_produced(real_store, demo_files):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    res = real_store.import_test(CYCLE.read_bytes(), file_name=CYCLE.name, actor=rhea)
    assert res.results_error is None and not res.duplicate
    results = real_store.get_results(res.test_id)
    (row,) = real_store.list_tests()
    assert row.person_code == "SEL-0107" and row.test_date == "2026-02-03"
    assert row.vo2peak_ml_min == pytest.approx(results["vo2_peak_ml_min"])
    assert row.vt1_vo2_ml_min == pytest.approx(results["vt1"]["vo2_ml_min"])
    assert row.ve_vco2_slope == pytest.approx(results["ve_vco2_slope"])
    # The session read back equals the file as the strict reader sees it.
    original = read_session(CYCLE)
    stored = real_store.load_session(res.test_id)
    assert len(stored.breaths) == len(original.breaths)
    for col in C.REQUIRED:
        np.testing.assert_allclose(stored.breaths[col], original.breaths[col], rtol=1e-5)
    assert real_store.get_test(res.test_id).mapping["columns"][C.VO2_ML_MIN] == C.VO2_ML_MIN


def test_threshold_override_is_recomputed_and_audited(real_store, demo_files):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    tid = real_store.import_test(CYCLE.read_bytes(), file_name=CYCLE.name, actor=rhea).test_id
    settings, version = real_store.get_settings(tid)
    before = real_store.get_results(tid)["vt1"]["vo2_ml_min"]
    override = {"t_s": None, "vo2_ml_min": round(before + 400.0, 1), "reason": "visual V-slope"}
    settings["vt1_override"] = override
    assert real_store.save_settings(tid, settings, actor=rhea, reason="visual V-slope", expected_version=version) == 2
    after = real_store.get_results(tid)
    assert after["settings"]["vt1_override"] == override
    assert real_store.list_tests()[0].vt1_vo2_ml_min == pytest.approx(after["vt1"]["vo2_ml_min"])
    assert real_store.get_results(tid, version=1)["vt1"]["vo2_ml_min"] == pytest.approx(before)
    (entry,) = [e for e in real_store.audit_log(tid) if e.action == "settings_change"]
    assert (entry.field, entry.old_value, entry.new_value) == ("vt1_override", None, override)
    with pytest.raises(InvalidParameter):
        real_store.save_settings(tid, {**settings, "outliers": {"window_breaths": 4}}, actor=rhea, expected_version=2)


def test_unreadable_file_is_rejected_with_nothing_written(real_store):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    with pytest.raises(ImportRejected):
        real_store.import_test(b"time;something\nabc;def\n", file_name="notes.csv", actor=rhea)
    assert real_store.list_tests() == [] and real_store.list_people() == []


def test_demo_loader_marks_the_store_and_is_idempotent(tmp_path, demo_files):
    url = str(tmp_path / "demo.sqlite")
    ids = load_demo_sessions(demo_files, url=url)
    assert len(set(ids)) == 2
    assert load_demo_sessions(demo_files, url=url) == ids  # recognised by SHA-256, nothing new
    store = open_store(url)
    try:
        assert store.is_demo_store() and store.demo_user().role == "reviewer"
        assert sorted(p.code for p in store.list_people()) == ["SEL-0107", "SEL-0318"]
    finally:
        store.close()


def test_demo_loader_refuses_a_store_with_real_data(store_url, demo_files):
    with pytest.raises(StoreError, match="cannot become a demo store"):
        load_demo_sessions(demo_files, url=store_url)


def test_demo_loader_reports_missing_files(tmp_path):
    with pytest.raises(ImportRejected, match="does not exist"):
        load_demo_sessions([tmp_path / "nope.csv"], url=str(tmp_path / "d.sqlite"))


def test_a_session_file_upload_is_kept_once(real_store, demo_files):
    # the converted text of a Tidemark session file is the upload itself: one copy, in raw_bytes
    from sqlalchemy import select

    from store.models import TestRow

    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    tid = real_store.import_test(CYCLE.read_bytes(), file_name=CYCLE.name, actor=rhea).test_id
    with real_store.engine.connect() as conn:
        kept = conn.execute(select(TestRow.session_text).where(TestRow.id == tid)).scalar_one()
    assert kept == ""
    assert real_store.session_text(tid).encode("utf-8") == CYCLE.read_bytes() == real_store.raw_file(tid)[1]
    assert real_store.load_session(tid).breaths.equals(read_session(CYCLE).breaths)


def test_a_converted_export_keeps_its_session_text(real_store, demo_files):
    from analysis.io import session_to_text

    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    export = read_session(REHAB).breaths.drop(columns="source_row").to_csv(sep=";", decimal=",", index=False).encode()
    tid = real_store.import_test(export, file_name="export.csv", actor=rhea).test_id
    text = real_store.session_text(tid)
    assert text.encode("utf-8") != export
    assert session_to_text(real_store.load_session(tid)) == text


def test_the_list_reads_no_results_or_file_columns(real_store):
    # the list's query names the summary columns only (never settings, results or file bytes)
    sql = str(real_store._summary_query())  # noqa: SLF001
    for heavy in ("results_json", "settings_json", "raw_bytes", "session_text", "flags_json", "mapping_json"):
        assert heavy not in sql


def test_a_second_server_sees_a_session_edited_through_the_first(store_url, clock, demo_files):
    # two store handles on one database stand for two dashboard servers: a metadata edit made
    # through one changes the session digest the other keys its cached analyses by
    first, second = open_store(store_url, clock=clock), open_store(store_url, clock=clock)
    try:
        rhea = {u.username: u for u in first.list_users()}["rhea"]
        tid = first.import_test(CYCLE.read_bytes(), file_name=CYCLE.name, actor=rhea).test_id
        before = second.session_digest(tid)
        assert second.load_session(tid).meta["body_mass_kg"] != 91.5
        _, version = first.get_settings(tid)
        first.update_test_metadata(tid, {"body_mass_kg": 91.5}, actor=rhea, expected_version=version, reason="scale")
        assert second.session_digest(tid) != before
        assert second.load_session(tid).meta["body_mass_kg"] == 91.5
    finally:
        first.close()
        second.close()


def _edited(column: str, rows: range, value: str) -> bytes:
    lines = CYCLE.read_text().splitlines()
    header = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    k = lines[header].split(",").index(column)
    for r in rows:
        if header + r >= len(lines):
            break
        cells = lines[header + r].split(",")
        cells[k] = value
        lines[header + r] = ",".join(cells)
    return ("\n".join(lines) + "\n").encode()


def test_importer_and_analysis_agree_on_accepted_files(real_store, demo_files):
    rhea = {u.username: u for u in real_store.list_users()}["rhea"]
    # one impossible breath: an artefact, excluded with its reason; the test is analysed
    cough = real_store.import_test(_edited("vo2_ml_min", range(200, 201), "11800"), file_name="cough.csv", actor=rhea)
    assert cough.results_error is None
    excluded = real_store.get_results(cough.test_id)["excluded_breaths"]
    assert any("beyond physical limits" in e["reason"] for e in excluded)
    # phase labels Tidemark does not know: mapped where a word names the phase, else left out
    phases = real_store.import_test(_edited("phase", range(100, 140), "Zone X"), file_name="phases.csv", actor=rhea)
    assert phases.results_error is None
    assert real_store.get_results(phases.test_id)["vo2_peak_ml_min"] > 0
    # no ventilation recorded at all: accepted by the importer (flagged), stored with the reason
    flat = real_store.import_test(_edited("ve_l_min", range(1, 100_000), "0"), file_name="no-ve.csv", actor=rhea)
    assert flat.results_error and "could not be carried out" in flat.results_error
    assert real_store.get_test(flat.test_id).summary.results_error == flat.results_error
