"""People and tests: import (one transaction, dedup by hash), listing, reading back."""

from __future__ import annotations

import hashlib
import json
import secrets
from typing import Any

from sqlalchemy import Select, func, select
from sqlalchemy.exc import IntegrityError
from sqlalchemy.orm import Session as DbSession

from analysis.errors import ImportRejected, InvalidParameter, Problem, require
from analysis.io import DEFAULT_MAX_BYTES
from analysis.session import Session
from analysis.subject import normalise_sex
from store.analysis_bridge import run_analysis
from store.core import Actor, StoreCore, analysis_version_row, aware, to_json
from store.errors import NotFound, StoreError
from store.models import AnalysisVersion, PersonRow, SignOff, TestRow
from store.records import ImportResult, PersonSummary, SignOffRecord, TestRecord, TestSummary

#: Largest upload accepted (bytes): the importer's own limit, checked before anything else.
MAX_UPLOAD_BYTES = DEFAULT_MAX_BYTES
#: Keyword options of ``analysis.io.import_bytes`` that may be passed and are stored.
IMPORT_OPTIONS = ("sheet", "gas_unit", "time_format", "meta_overrides", "ve_condition", "barometric_mmhg", "ambient_c")
#: Longest person code / display name / file name kept (characters).
MAX_CODE_CHARS = 120
MAX_NAME_CHARS = 200
MAX_FILE_NAME_CHARS = 255


def stored_session_text(session_text: str, raw: bytes) -> str:
    """What ``tests.session_text`` keeps: ``""`` when the converted session is the upload itself
    (a Tidemark session file, kept once in ``raw_bytes``), else the converted text."""
    return "" if session_text.encode("utf-8") == raw else session_text


def session_text_of(stored: str, raw: bytes) -> str:
    """The session text from what :func:`stored_session_text` kept."""
    return stored or raw.decode("utf-8")


def sha256_hex(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _clean_text(value: str | None, *, name: str, limit: int, required: bool = False) -> str | None:
    """Trim and check a free-text field; the text itself is kept verbatim (never interpreted)."""
    if value is None:
        require(not required, name, "a non-empty text", value)
        return None
    require(isinstance(value, str), name, "a text", value)
    text = value.strip()
    require(text != "" or not required, name, "a non-empty text", value)
    require(len(text) <= limit, name, f"at most {limit} characters", f"{len(text)} characters")
    require("\x00" not in text, name, "text without NUL characters", value)
    return text or None


def _sex_from_file(value: object) -> str | None:
    """The person's sex as recorded in an imported file; text no spelling matches is kept as
    not recorded (``None``) rather than refusing the file (the file's own text stays in the test)."""
    try:
        return normalise_sex(value)
    except InvalidParameter:
        return None


class ArchiveMixin(StoreCore):
    # ----------------------------------------------------------------- import
    def import_test(
        self,
        data: bytes,
        *,
        file_name: str,
        actor: Actor,
        person_code: str | None = None,
        display_name: str | None = None,
        mapping: dict[str, Any] | None = None,
        options: dict[str, Any] | None = None,
        birth_year: int | None = None,
    ) -> ImportResult:
        """Store one uploaded file as a test, in a single transaction.

        The raw bytes are kept byte for byte with their SHA-256 and the original file name
        (as text; it is never used as a path). The converted session, the column mapping used
        and the first analysis version (default settings and their results) are stored with it.
        Uploading the same bytes again returns the existing test with ``duplicate=True``.

        Parameters
        ----------
        data : bytes
            The file as uploaded.
        file_name : str
            Its name as given by the browser or command line.
        actor : User
            The signed-in reviewer or admin.
        person_code : str, optional
            Pseudonymous code of the person; defaults to the file's ``subject_id`` and, when
            absent, to a new random code ``P-xxxxxxxx``.
        display_name : str, optional
            A name shown to staff (and, only when chosen, on a share link).
        mapping : dict, optional
            Column mapping (``ColumnMapping.to_dict()``) for a generic cart export.
        options : dict, optional
            Further ``import_bytes`` options: ``sheet``, ``gas_unit``, ``time_format``,
            ``meta_overrides``. Stored with the test so the conversion can be repeated.
        birth_year : int, optional
            Year of birth, if the lab records it.

        Raises
        ------
        ImportRejected
            Empty, oversized or unreadable file (nothing is written).
        PermissionDenied
            The actor is not a reviewer or admin.
        """
        with self._read() as db:
            self._check_actor(db, actor, "reviewer", "import tests")
        name = _clean_text(file_name, name="file_name", limit=MAX_FILE_NAME_CHARS, required=True) or ""
        person_code = _clean_text(person_code, name="person_code", limit=MAX_CODE_CHARS)
        display_name = _clean_text(display_name, name="display_name", limit=MAX_NAME_CHARS)
        require(
            birth_year is None or (isinstance(birth_year, int) and 1900 <= birth_year <= 2100),
            "birth_year", "a year between 1900 and 2100", birth_year,
        )
        if not isinstance(data, (bytes, bytearray)) or len(data) == 0:
            raise ImportRejected(Problem("The file is empty.", "Choose the exported file again.", file=name))
        if len(data) > MAX_UPLOAD_BYTES:
            raise ImportRejected(
                Problem(
                    f"The file is {len(data) / 1e6:.1f} MB; the limit is {MAX_UPLOAD_BYTES / 1e6:.0f} MB.",
                    "Upload one exercise test per file (breath-by-breath exports are far smaller).",
                    file=name,
                )
            )
        options = dict(options or {})
        require(set(options) <= set(IMPORT_OPTIONS), "options", f"keys among {', '.join(IMPORT_OPTIONS)}",
                sorted(options))
        data = bytes(data)
        digest = sha256_hex(data)
        existing = self._find_live_by_hash(digest)
        if existing is not None:
            return existing

        # Parsing and analysis are pure and may take a moment: done before the transaction.
        imported = self.analysis.import_file(data, file_name=name, mapping=mapping, options=options)
        settings = self.analysis.default_settings(imported.session)
        results, results_error = run_analysis(self.analysis, imported.session, settings)
        headline = self.analysis.headline(results) if results else None
        meta = imported.session.meta
        code = person_code or (str(meta.get("subject_id") or "").strip() or None)
        code = _clean_text(code, name="person_code", limit=MAX_CODE_CHARS)

        for attempt in range(2):
            try:
                return self._write_import(
                    actor=actor, code=code, display_name=display_name, birth_year=birth_year, meta=meta,
                    name=name, data=data, digest=digest, imported=imported, options=options,
                    settings=settings, results=results, results_error=results_error, headline=headline,
                )
            except IntegrityError:
                # Another import committed first: the same bytes (report that test), or a new
                # person with the same code (retry once; the person now exists).
                existing = self._find_live_by_hash(digest)
                if existing is not None:
                    return existing
                if attempt:
                    raise
        raise AssertionError("unreachable")

    def _write_import(
        self, *, actor: Actor, code: str | None, display_name: str | None, birth_year: int | None,
        meta: dict[str, Any], name: str, data: bytes, digest: str, imported: Any, options: dict[str, Any],
        settings: dict[str, Any], results: dict[str, Any] | None, results_error: str | None, headline: Any,
    ) -> ImportResult:
        """The single transaction of an import: person, test, first version and audit row."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "import tests")
            person = self._person_for_import(
                db, code=code, display_name=display_name, sex=_sex_from_file(meta.get("sex")),
                birth_year=birth_year, actor_row_id=actor_row.id if actor_row else None,
            )
            now = self.now()
            test = TestRow(
                person_id=person.id,
                test_date=str(meta.get("test_date") or "").strip()[:32] or None,
                protocol=str(meta.get("protocol") or "").strip()[:200] or None,
                original_file_name=name,
                raw_sha256=digest,
                raw_size_bytes=len(data),
                raw_bytes=data,
                session_text=stored_session_text(imported.session_text, data),
                mapping_json=None if imported.mapping is None else to_json(imported.mapping),
                import_options_json=to_json(options),
                flags_json=to_json(imported.flags),
                current_version=1,
                imported_at=now,
                imported_by=actor_row.id if actor_row else None,
            )
            db.add(test)
            db.flush()
            db.add(
                analysis_version_row(
                    test_id=test.id, version=1, settings=settings, results=results, results_error=results_error,
                    headline=headline, created_at=now, created_by=actor_row.id if actor_row else None, reason="import",
                )
            )
            self._audit(
                db, actor=actor, actor_row=actor_row, action="import", test_id=test.id,
                person_id=person.id, new={"file_name": name, "sha256": digest, "size_bytes": len(data)},
            )
            result = ImportResult(
                test_id=test.id, person_id=person.id, duplicate=False, version=1,
                flags=imported.flags, results_error=results_error,
            )
        return result

    def _find_live_by_hash(self, digest: str) -> ImportResult | None:
        with self._read() as db:
            row = db.execute(
                select(TestRow.id, TestRow.person_id, TestRow.current_version, TestRow.flags_json).where(
                    TestRow.raw_sha256 == digest, TestRow.deleted_at.is_(None)
                )
            ).first()
            if row is None:
                return None
            version = db.execute(
                select(AnalysisVersion.results_error).where(
                    AnalysisVersion.test_id == row.id, AnalysisVersion.version == row.current_version
                )
            ).scalar_one_or_none()
        return ImportResult(
            test_id=row.id, person_id=row.person_id, duplicate=True, version=row.current_version,
            flags=json.loads(row.flags_json), results_error=version,
        )

    def _person_for_import(
        self, db: DbSession, *, code: str | None, display_name: str | None, sex: str | None,
        birth_year: int | None, actor_row_id: int | None,
    ) -> PersonRow:
        if code is not None:
            person = db.execute(select(PersonRow).where(PersonRow.code == code)).scalar_one_or_none()
            if person is not None:
                if person.deleted_at is not None:
                    raise StoreError(
                        f"The person '{code}' was deleted; an administrator must restore them, "
                        "or import under another code."
                    )
                return person
        else:
            code = self._new_person_code(db)
        person = PersonRow(
            code=code, display_name=display_name, sex=sex, birth_year=birth_year,
            created_at=self.now(), created_by=actor_row_id,
        )
        db.add(person)
        db.flush()
        return person

    @staticmethod
    def _new_person_code(db: DbSession) -> str:
        while True:
            code = f"P-{secrets.token_hex(4).upper()}"
            if db.execute(select(PersonRow.id).where(PersonRow.code == code)).first() is None:
                return code

    # ----------------------------------------------------------------- people
    def list_people(self) -> list[PersonSummary]:
        """Live people (not deleted), ordered by code, with their number of live tests."""
        with self._read() as db:
            counts = (
                select(
                    TestRow.person_id,
                    func.count(TestRow.id).label("n"),
                    func.max(TestRow.test_date).label("last"),
                )
                .where(TestRow.deleted_at.is_(None))
                .group_by(TestRow.person_id)
                .subquery()
            )
            rows = db.execute(
                select(PersonRow, counts.c.n, counts.c.last)
                .outerjoin(counts, counts.c.person_id == PersonRow.id)
                .where(PersonRow.deleted_at.is_(None))
                .order_by(PersonRow.code)
            ).all()
        return [
            PersonSummary(
                id=p.id, code=p.code, display_name=p.display_name, sex=p.sex, birth_year=p.birth_year,
                n_tests=int(n or 0), last_test_date=last,
            )
            for p, n, last in rows
        ]

    def get_person(self, person_id: int) -> PersonSummary:
        for p in self.list_people():
            if p.id == person_id:
                return p
        raise NotFound(f"No person with number {person_id} (it may have been deleted).")

    def update_person(
        self, person_id: int, *, actor: Actor, display_name: str | None = None,
        sex: str | None = None, birth_year: int | None = None, reason: str = "",
    ) -> None:
        """Change a person's display name, sex or birth year (audited; ``None`` = unchanged)."""
        display_name = _clean_text(display_name, name="display_name", limit=MAX_NAME_CHARS)
        require(
            birth_year is None or (isinstance(birth_year, int) and 1900 <= birth_year <= 2100),
            "birth_year", "a year between 1900 and 2100", birth_year,
        )
        sex_value = normalise_sex(sex)
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "edit people")
            person = db.get(PersonRow, person_id)
            if person is None or person.deleted_at is not None:
                raise NotFound(f"No person with number {person_id} (it may have been deleted).")
            for field, value in (("display_name", display_name), ("sex", sex_value),
                                 ("birth_year", birth_year)):
                if value is not None and getattr(person, field) != value:
                    self._audit(db, actor=actor, actor_row=actor_row, action="person_edit",
                                person_id=person.id, field=field, old=getattr(person, field),
                                new=value, reason=reason)
                    setattr(person, field, value)

    # ----------------------------------------------------------------- tests
    def _summary_query(self) -> Select[*tuple[Any, ...]]:
        """The list columns only: no settings, results JSON, raw bytes or session text."""
        signed = (
            select(SignOff.test_id, func.max(SignOff.version).label("signed_version"))
            .group_by(SignOff.test_id)
            .subquery()
        )
        return (
            select(
                TestRow.id, PersonRow.id, PersonRow.code, PersonRow.display_name, TestRow.test_date,
                TestRow.protocol, TestRow.original_file_name, TestRow.current_version,
                AnalysisVersion.vo2peak_ml_min, AnalysisVersion.vt1_vo2_ml_min, AnalysisVersion.ve_vco2_slope,
                signed.c.signed_version, AnalysisVersion.results_error, TestRow.imported_at,
                TestRow.deleted_at, PersonRow.deleted_at,
            )
            .join(PersonRow, PersonRow.id == TestRow.person_id)
            .join(
                AnalysisVersion,
                (AnalysisVersion.test_id == TestRow.id) & (AnalysisVersion.version == TestRow.current_version),
            )
            .outerjoin(signed, signed.c.test_id == TestRow.id)
        )

    @staticmethod
    def _summary(row: Any) -> TestSummary:
        """A :meth:`_summary_query` row as a :class:`TestSummary`."""
        return TestSummary(
            id=row[0], person_id=row[1], person_code=row[2], display_name=row[3], test_date=row[4],
            protocol=row[5], file_name=row[6], version=row[7], vo2peak_ml_min=row[8], vt1_vo2_ml_min=row[9],
            ve_vco2_slope=row[10], signed_version=row[11], results_error=row[12], imported_at=aware(row[13]),
        )

    def list_tests(self, person_id: int | None = None, *, test_ids: tuple[int, ...] | None = None) -> list[TestSummary]:
        """Live tests (optionally of one person or a given set), oldest first, with headline numbers.

        Reads the list columns only (the index ``ix_tests_live_listing`` serves the order).
        """
        query = self._summary_query().where(TestRow.deleted_at.is_(None), PersonRow.deleted_at.is_(None))
        if person_id is not None:
            query = query.where(TestRow.person_id == person_id)
        if test_ids is not None:
            query = query.where(TestRow.id.in_(list(test_ids)))
        with self._read() as db:
            # Undated tests last on every back end (SQLite and PostgreSQL sort NULL differently).
            rows = db.execute(query.order_by(TestRow.test_date.is_(None), TestRow.test_date, TestRow.id)).all()
        return [self._summary(row) for row in rows]

    def get_test(self, test_id: int, *, include_deleted: bool = False) -> TestRecord:
        """Everything about one test except raw bytes and session text (see ``raw_file``)."""
        with self._read() as db:
            row = db.execute(self._summary_query().where(TestRow.id == test_id)).first()
            if row is None or (not include_deleted and (row[14] is not None or row[15] is not None)):
                raise NotFound(f"No test with number {test_id} (it may have been deleted).")
            test = db.get(TestRow, test_id)
            assert test is not None  # the summary row above exists
            sign_rows = db.execute(select(SignOff).where(SignOff.test_id == test_id).order_by(SignOff.version)).scalars().all()
            names = self._usernames(db, set[int | None]({s.signed_by for s in sign_rows}) | {test.imported_by})
        return TestRecord(
            summary=self._summary(row),
            raw_sha256=test.raw_sha256,
            raw_size_bytes=test.raw_size_bytes,
            mapping=None if test.mapping_json is None else json.loads(test.mapping_json),
            import_options=json.loads(test.import_options_json),
            flags=json.loads(test.flags_json),
            sign_offs=[
                SignOffRecord(s.test_id, s.version, names.get(s.signed_by, "?"), aware(s.signed_at), s.note)
                for s in sign_rows
            ],
            imported_by=names.get(test.imported_by) if test.imported_by else None,
            deleted_at=aware(test.deleted_at),
        )

    def _live_test(self, db: DbSession, test_id: int) -> TestRow:
        test = db.get(TestRow, test_id)
        if test is None or test.deleted_at is not None:
            raise NotFound(f"No test with number {test_id} (it may have been deleted).")
        return test

    def raw_file(self, test_id: int) -> tuple[str, bytes]:
        """``(original file name, bytes)`` exactly as uploaded. The name is text, not a path."""
        with self._read() as db:
            test = self._live_test(db, test_id)
            return test.original_file_name, test.raw_bytes

    def session_text(self, test_id: int) -> str:
        """The converted session in Tidemark's session-file format."""
        with self._read() as db:
            test = self._live_test(db, test_id)
            return session_text_of(test.session_text, test.raw_bytes if not test.session_text else b"")

    def session_digest(self, test_id: int) -> str:
        """SHA-256 of the test's session text: it changes exactly when the stored session does
        (a metadata edit on any server), so it is a safe cache key for anything computed from it."""
        from store.session_cache import text_digest

        return text_digest(self.session_text(test_id))

    def load_session(self, test_id: int) -> Session:
        """The stored session of a test, ready for :mod:`analysis` (the caller's own copy).

        The parsed session is cached per (test, hash of the stored text) in a small LRU
        (:class:`store.session_cache.SessionCache`), so repeated saves do not re-read the text.
        """
        with self._read() as db:
            test = self._live_test(db, test_id)
            text = session_text_of(test.session_text, test.raw_bytes if not test.session_text else b"")
            name = test.original_file_name
        return self._session_cache.get(
            test_id, text, lambda t: self.analysis.read_session_text(t, source_name=name)
        )
