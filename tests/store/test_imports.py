"""Importing files into the store: one transaction, dedup by hash, hostile inputs kept verbatim."""

from __future__ import annotations

import hashlib
import os

import pytest
from sqlalchemy import func, inspect, select
from sqlalchemy.orm import Session as DbSession

from analysis.errors import ImportRejected, InvalidParameter
from store import PermissionDenied
from store import archive
from store.models import AnalysisVersion, AuditEvent, PersonRow, TestRow
from tests.store.standin import csv_bytes

COUNTED = (PersonRow, TestRow, AnalysisVersion, AuditEvent)


def row_counts(store) -> dict[str, int]:
    with DbSession(store.engine) as db:
        return {m.__tablename__: db.execute(select(func.count()).select_from(m)).scalar_one() for m in COUNTED}


class TestImport:
    def test_raw_bytes_kept_byte_for_byte_with_sha256(self, store, users):
        data = csv_bytes(3100.0, subject="SEL-014")
        res = store.import_test(data, file_name="sel014.csv", actor=users["rhea"])
        assert not res.duplicate and res.version == 1
        name, raw = store.raw_file(res.test_id)
        assert raw == data and name == "sel014.csv"
        record = store.get_test(res.test_id)
        # SHA-256 of the exact bytes (FIPS 180-4 via hashlib, the reference implementation here)
        assert record.raw_sha256 == hashlib.sha256(data).hexdigest()
        assert record.raw_size_bytes == len(data)
        assert record.summary.person_code == "SEL-014"
        assert record.summary.test_date == "2026-03-14"
        assert record.imported_by == "rhea"

    def test_headline_numbers_come_from_the_stored_results(self, store, users):
        res = store.import_test(csv_bytes(2875.0, subject="SEL-020"), file_name="a.csv", actor=users["rhea"])
        (row,) = store.list_tests()
        assert row.id == res.test_id and row.vo2peak_ml_min == pytest.approx(2875.0)
        assert store.get_results(res.test_id)["vo2peak_ml_min"] == pytest.approx(2875.0)

    def test_same_bytes_twice_is_a_duplicate_not_a_new_test(self, store, users):
        data = csv_bytes(3000.0, subject="SEL-001")
        first = store.import_test(data, file_name="x.csv", actor=users["rhea"])
        before = row_counts(store)
        again = store.import_test(data, file_name="renamed.csv", actor=users["remy"])
        assert again.duplicate and again.test_id == first.test_id
        assert row_counts(store) == before
        assert len(store.list_tests()) == 1

    def test_one_byte_different_is_a_new_test(self, store, users):
        data = csv_bytes(3000.0, subject="SEL-001")
        a = store.import_test(data, file_name="x.csv", actor=users["rhea"])
        b = store.import_test(data + b"\n", file_name="x.csv", actor=users["rhea"])
        assert not b.duplicate and b.test_id != a.test_id and b.person_id == a.person_id

    def test_tests_listed_by_date_with_undated_last(self, store, users):
        undated = store.import_test(csv_bytes(2000.0), file_name="u.csv", actor=users["rhea"]).test_id
        dated = store.import_test(csv_bytes(2100.0, subject="SEL-002"), file_name="d.csv", actor=users["rhea"]).test_id
        assert [t.id for t in store.list_tests()] == [dated, undated]

    def test_person_gets_a_random_pseudonymous_code_when_none_given(self, store, users):
        res = store.import_test(csv_bytes(2500.0), file_name="anon.csv", actor=users["rhea"])
        person = store.get_person(res.person_id)
        assert person.code.startswith("P-") and len(person.code) == 10 and person.display_name is None

    def test_analysis_failure_keeps_the_test_with_the_reason(self, store, users):
        res = store.import_test(csv_bytes(2500.0, n=3), file_name="short.csv", actor=users["rhea"])
        assert res.results_error == "Too few breaths to analyse."
        assert store.get_results(res.test_id) == {}
        assert store.list_tests()[0].vo2peak_ml_min is None

    def test_viewer_cannot_import(self, store, users):
        with pytest.raises(PermissionDenied, match="viewer"):
            store.import_test(csv_bytes(2500.0), file_name="a.csv", actor=users["vic"])
        assert row_counts(store)["tests"] == 0


class TestRejectedUploadsWriteNothing:
    def test_oversized_upload(self, store, users):
        before = row_counts(store)
        too_big = b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n" + b"0" * archive.MAX_UPLOAD_BYTES
        with pytest.raises(ImportRejected, match="limit"):
            store.import_test(too_big, file_name="huge.csv", actor=users["rhea"])
        assert row_counts(store) == before

    @pytest.mark.parametrize(
        "data",
        [b"", b"\x00\x01\x02\xff\xfe", b"just some words\nnot a table", b"t_s,vo2_ml_min\n1,2\n"],
        ids=["empty", "binary", "prose", "missing-columns"],
    )
    def test_malformed_upload(self, store, users, data):
        before = row_counts(store)
        with pytest.raises(ImportRejected):
            store.import_test(data, file_name="bad.csv", actor=users["rhea"])
        assert row_counts(store) == before

    def test_crash_mid_import_leaves_no_orphan_rows(self, store, users, monkeypatch):
        before = row_counts(store)

        def explode(*args, **kwargs):
            raise RuntimeError("simulated crash while writing the audit row")

        # The audit row is written after person, test and version rows in the same transaction.
        monkeypatch.setattr(type(store), "_audit", explode)
        with pytest.raises(RuntimeError, match="simulated crash"):
            store.import_test(csv_bytes(3000.0, subject="SEL-099"), file_name="c.csv", actor=users["rhea"])
        assert row_counts(store) == before
        monkeypatch.undo()
        # The same file imports normally afterwards (no half-written hash blocks it).
        res = store.import_test(csv_bytes(3000.0, subject="SEL-099"), file_name="c.csv", actor=users["rhea"])
        assert not res.duplicate and store.get_person(res.person_id).code == "SEL-099"

    @pytest.mark.parametrize("value", ["x" * 121, "bad\x00code"])
    def test_invalid_person_code_rejected_before_writing(self, store, users, value):
        with pytest.raises(InvalidParameter, match="person_code"):
            store.import_test(csv_bytes(3000.0), file_name="a.csv", actor=users["rhea"], person_code=value)
        assert row_counts(store)["people"] == 0


HOSTILE_TEXTS = [
    "Robert'); DROP TABLE people;--",
    "' OR '1'='1",
    '"; DELETE FROM tests; --',
    "=HYPERLINK(\"http://example.invalid\",\"click\")",
    "+SUM(1,2)",
    "-2+3",
    "@cmd",
    "Zoë Ødegård 田中",
]


class TestHostileText:
    # Parameterised queries store text verbatim (common practice; OWASP SQL Injection Prevention).
    @pytest.mark.parametrize("text", HOSTILE_TEXTS)
    def test_codes_and_names_round_trip_verbatim(self, store, users, text):
        res = store.import_test(csv_bytes(3000.0), file_name="a.csv", actor=users["rhea"],
                                person_code=text, display_name=text)
        person = store.get_person(res.person_id)
        assert person.code == text and person.display_name == text
        assert store.list_tests()[0].person_code == text
        # Every table is still there.
        assert {"people", "tests", "audit_events"} <= set(inspect(store.engine).get_table_names())

    def test_reasons_and_notes_round_trip_verbatim(self, store, users):
        res = store.import_test(csv_bytes(3000.0), file_name="a.csv", actor=users["rhea"])
        settings, v = store.get_settings(res.test_id)
        settings["smoothing"]["window_s"] = 20
        reason = HOSTILE_TEXTS[0] + " " + HOSTILE_TEXTS[3]
        store.save_settings(res.test_id, settings, actor=users["rhea"], reason=reason, expected_version=v)
        store.sign_off(res.test_id, actor=users["rhea"], note=HOSTILE_TEXTS[4])
        _, share_id = store.create_share(actor=users["rhea"], test_id=res.test_id, expires_in_days=7,
                                         note=HOSTILE_TEXTS[6])
        change = [e for e in store.audit_log(res.test_id) if e.action == "settings_change"][0]
        assert change.reason == reason
        assert store.get_test(res.test_id).sign_offs[0].note == HOSTILE_TEXTS[4]
        assert store.list_shares()[0].note == HOSTILE_TEXTS[6]

    def test_path_like_file_name_is_stored_as_text_never_used_as_path(self, store, users, tmp_path, monkeypatch):
        work = tmp_path / "a" / "b"
        work.mkdir(parents=True)
        monkeypatch.chdir(work)
        name = "../../etc/passwd"
        res = store.import_test(csv_bytes(3000.0), file_name=name, actor=users["rhea"])
        assert store.raw_file(res.test_id)[0] == name
        assert store.get_test(res.test_id).summary.file_name == name
        # Nothing was created next to or above the working directory.
        assert os.listdir(work) == [] and sorted(os.listdir(tmp_path / "a")) == ["b"]
        assert not (tmp_path / "etc").exists()


class TestSexOfPerson:
    """The store reads a file's sex with the one normaliser of analysis.subject."""

    @pytest.mark.parametrize("written, stored", [("woman", "female"), ("W", "female"), ("männlich", "male"),
                                                 ("divers", "other"), ("banana", None)])
    def test_sex_from_the_file(self, store, users, written, stored):
        data = csv_bytes(3000.0, subject="SEL-031").replace(b"# test_date", f"# sex: {written}\n# test_date".encode())
        store.import_test(data, file_name="s.csv", actor=users["rhea"])
        (person,) = store.list_people()
        assert person.sex == stored

    def test_editing_a_person_uses_the_same_table(self, store, users):
        res = store.import_test(csv_bytes(3000.0, subject="SEL-032"), file_name="s.csv", actor=users["rhea"])
        store.update_person(res.person_id, actor=users["rhea"], sex="weiblich", reason="from the form")
        assert store.list_people()[0].sex == "female"
        with pytest.raises(InvalidParameter, match="sex"):
            store.update_person(res.person_id, actor=users["rhea"], sex="banana", reason="typo")
        assert store.list_people()[0].sex == "female"
