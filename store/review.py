"""Review of a stored test: versioned settings and results, audit trail, sign-off, deletion."""

from __future__ import annotations

import json
from datetime import datetime
from typing import Any, cast

from sqlalchemy import CursorResult, select, update
from sqlalchemy.orm import Session as DbSession

from analysis.errors import require
from store.analysis_bridge import run_analysis
from store.archive import ArchiveMixin
from store.core import Actor, analysis_version_row, aware, to_json
from store.errors import EditConflict, NotFound, StoreError
from store.models import AnalysisVersion, AuditEvent, PersonRow, SignOff, TestRow
from store.records import AuditEntry


def changed_fields(old: Any, new: Any, prefix: str = "") -> list[tuple[str, Any, Any]]:
    """``(field path, old, new)`` for every setting that differs.

    Nested dicts are compared key by key (``averaging.window_s``); anything else - a list of
    excluded rows, a threshold override set or cleared - is one field with its whole old and new
    value. An absent key counts as ``None``.
    """
    if isinstance(old, dict) and isinstance(new, dict):
        out: list[tuple[str, Any, Any]] = []
        for key in sorted(set(old) | set(new), key=str):
            out.extend(changed_fields(old.get(key), new.get(key), f"{prefix}{key}."))
        return out
    if to_json(old) == to_json(new):
        return []
    return [(prefix.rstrip("."), old, new)]


class ReviewMixin(ArchiveMixin):
    def _version_row(self, db: DbSession, test_id: int, version: int | None = None) -> AnalysisVersion:
        test = self._live_test(db, test_id)
        wanted = test.current_version if version is None else version
        row = db.execute(
            select(AnalysisVersion).where(AnalysisVersion.test_id == test_id, AnalysisVersion.version == wanted)
        ).scalar_one_or_none()
        if row is None:
            raise NotFound(f"Test {test_id} has no analysis version {wanted}.")
        return row

    def get_settings(self, test_id: int, *, version: int | None = None) -> tuple[dict[str, Any], int]:
        """``(settings dict, version)`` of the current (or a given) analysis version.

        Pass the returned version as ``expected_version`` to :meth:`save_settings`.
        """
        with self._read() as db:
            row = self._version_row(db, test_id, version)
            return json.loads(row.settings_json), row.version

    def get_results(self, test_id: int, *, version: int | None = None) -> dict[str, Any]:
        """Stored results (``to_json(TestResults)``) of the current or a given version.

        Returns an empty dict when the analysis could not be carried out; the reason is in
        ``get_test(test_id).summary.results_error``.
        """
        with self._read() as db:
            row = self._version_row(db, test_id, version)
            return {} if row.results_json is None else json.loads(row.results_json)

    def list_versions(self, test_id: int) -> list[dict[str, Any]]:
        """Every analysis version: number, when, who, reason, whether signed."""
        with self._read() as db:
            self._live_test(db, test_id)
            rows = db.execute(
                select(AnalysisVersion).where(AnalysisVersion.test_id == test_id).order_by(AnalysisVersion.version)
            ).scalars().all()
            signed = set(db.execute(select(SignOff.version).where(SignOff.test_id == test_id)).scalars())
            names = self._usernames(db, {r.created_by for r in rows})
        return [
            {
                "version": r.version, "created_at": aware(r.created_at),
                "created_by": names.get(r.created_by) if r.created_by else None,
                "reason": r.reason, "signed": r.version in signed, "results_error": r.results_error,
            }
            for r in rows
        ]

    def save_settings(
        self,
        test_id: int,
        settings: dict[str, Any],
        *,
        actor: Actor,
        reason: str = "",
        expected_version: int,
    ) -> int:
        """Save new analysis settings (threshold overrides, exclusions, options) as a new version.

        Every changed field is written to the audit trail with old value, new value, who, when
        and ``reason``. Results are recomputed with ``analyze_session`` and stored with the
        version. Earlier versions (and any sign-off on them) stay untouched.

        Parameters
        ----------
        expected_version : int
            The version the editor started from (from :meth:`get_settings`). If someone saved
            since, :class:`EditConflict` is raised and nothing is written.
        reason : str
            Why the change was made. Required when the current version is signed off.

        Returns
        -------
        int
            The new current version (unchanged when nothing differs).
        """
        require(isinstance(settings, dict), "settings", "a dict of analysis settings", type(settings).__name__)
        require(isinstance(expected_version, int), "expected_version", "the version number from get_settings", expected_version)
        reason = (reason or "").strip()
        with self._tx() as db:
            self._check_actor(db, actor, "reviewer", "change analysis settings")
            current = self._version_row(db, test_id)
            if current.version != expected_version:
                raise self._conflict(db, test_id, expected_version)
            old = json.loads(current.settings_json)
            signed = db.execute(
                select(SignOff.id).where(SignOff.test_id == test_id, SignOff.version == current.version)
            ).first() is not None
        new = self.analysis.validate_settings(settings)
        changes = changed_fields(old, new)
        if not changes:
            return expected_version
        if signed and not reason:
            raise StoreError(
                f"Version {expected_version} of test {test_id} is signed off; give a reason for the "
                "change (it starts a new, unsigned version)."
            )
        session = self.load_session(test_id)
        results, results_error = run_analysis(self.analysis, session, new)
        headline = self.analysis.headline(results) if results else None
        new_version = expected_version + 1
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "change analysis settings")
            # an UPDATE's result is a cursor result (it has a row count); Session.execute is typed for any statement
            bumped = cast(CursorResult[Any], db.execute(
                update(TestRow)
                .where(TestRow.id == test_id, TestRow.current_version == expected_version, TestRow.deleted_at.is_(None))
                .values(current_version=new_version)
                .execution_options(synchronize_session=False)
            ))
            if bumped.rowcount != 1:
                raise self._conflict(db, test_id, expected_version)
            # Checked again here: a sign-off may have landed while the results were computed
            # (the row lock taken by the UPDATE above makes a concurrent sign-off wait or be seen).
            if not reason and db.execute(
                select(SignOff.id).where(SignOff.test_id == test_id, SignOff.version == expected_version)
            ).first() is not None:
                raise StoreError(
                    f"Version {expected_version} of test {test_id} was signed off while you were editing; give a "
                    "reason for the change (it starts a new, unsigned version)."
                )
            now = self.now()
            db.add(
                analysis_version_row(
                    test_id=test_id, version=new_version, settings=new, results=results,
                    results_error=results_error, headline=headline, created_at=now,
                    created_by=actor_row.id if actor_row else None, reason=reason,
                )
            )
            person_id = db.execute(select(TestRow.person_id).where(TestRow.id == test_id)).scalar_one()
            for field, before, after in changes:
                self._audit(
                    db, actor=actor, actor_row=actor_row, action="settings_change", test_id=test_id,
                    person_id=person_id, field=field, old=before, new=after, reason=reason,
                )
        return new_version

    def _conflict(self, db: DbSession, test_id: int, expected_version: int) -> Exception:
        test = db.get(TestRow, test_id)
        if test is None or test.deleted_at is not None:
            return NotFound(f"No test with number {test_id} (it may have been deleted).")
        last = db.execute(
            select(AuditEvent.actor_name, AuditEvent.at)
            .where(AuditEvent.test_id == test_id, AuditEvent.action.in_(("settings_change", "sign_off")))
            .order_by(AuditEvent.id.desc())
        ).first()
        who = f" by {last.actor_name} at {aware(last.at):%Y-%m-%d %H:%M} UTC" if last else ""
        return EditConflict(
            f"Test {test_id} was changed{who} after you opened it (you had version {expected_version}, "
            f"it is now version {test.current_version}). Your change was not saved: reload the test, "
            "check the other change and apply yours again."
        )

    def sign_off(self, test_id: int, *, actor: Actor, version: int | None = None, note: str = "") -> int:
        """Sign off the current analysis version (reviewer or admin); returns the signed version.

        A signed version is frozen: its settings and results rows are never changed, and a
        later edit creates a new, unsigned version. Pass ``version`` (what the reviewer looked
        at) to refuse signing if someone saved a newer version meanwhile (:class:`EditConflict`).
        """
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "sign off tests")
            test = self._live_test(db, test_id)
            # Lock the test row (PostgreSQL; SQLite's BEGIN IMMEDIATE already serialises writers) so
            # that a save running at the same time either waits for this sign-off or is seen here.
            current = db.execute(
                select(TestRow.current_version).where(TestRow.id == test_id).with_for_update()
            ).scalar_one()
            if version is not None and version != current:
                raise self._conflict(db, test_id, version)
            exists = db.execute(
                select(SignOff.id).where(SignOff.test_id == test_id, SignOff.version == current)
            ).first()
            if exists is not None:
                return current
            if actor_row is None:
                raise StoreError("A sign-off needs a signed-in reviewer, not the command line.")
            db.add(SignOff(test_id=test_id, version=current, signed_by=actor_row.id, signed_at=self.now(), note=note or ""))
            self._audit(
                db, actor=actor, actor_row=actor_row, action="sign_off", test_id=test_id,
                person_id=test.person_id, field="version", new=current, reason=note,
            )
            reset = self._password_set_by_other(db, actor_row.username)
            if reset is not None:
                by, at = reset
                self._audit(
                    db, actor=actor, actor_row=actor_row, action="sign_off_after_reset", test_id=test_id,
                    person_id=test.person_id, field="version", new=current,
                    reason=(f"{actor_row.username}'s password was set by {by} at {at:%Y-%m-%d %H:%M} UTC and "
                            f"{actor_row.username} has not changed it since: check that {actor_row.username} "
                            "signed this off in person"),
                )
            return current

    def _password_set_by_other(self, db: DbSession, username: str) -> tuple[str, datetime] | None:
        """Who set ``username``'s password last and when, when that was somebody else."""
        last = db.execute(
            select(AuditEvent.actor_name, AuditEvent.at)
            .where(AuditEvent.action == "user_password", AuditEvent.field == username)
            .order_by(AuditEvent.id.desc()).limit(1)
        ).first()
        if last is None or last.actor_name == username:
            return None
        return last.actor_name, aware(last.at)

    def audit_log(self, test_id: int | None = None, *, person_id: int | None = None, limit: int = 1000) -> list[AuditEntry]:
        """Audit events, oldest first: of one test, one person, or (both ``None``) the whole store."""
        query = select(AuditEvent)
        if test_id is not None:
            query = query.where(AuditEvent.test_id == test_id)
        if person_id is not None:
            query = query.where(AuditEvent.person_id == person_id)
        with self._read() as db:
            rows = db.execute(query.order_by(AuditEvent.id.desc()).limit(limit)).scalars().all()
        return [
            AuditEntry(
                id=r.id, at=aware(r.at), actor=r.actor_name, action=r.action, test_id=r.test_id,
                person_id=r.person_id, field=r.field,
                old_value=None if r.old_value is None else json.loads(r.old_value),
                new_value=None if r.new_value is None else json.loads(r.new_value), reason=r.reason,
            )
            for r in reversed(rows)
        ]

    def audit_csv(self, test_id: int | None = None, *, person_id: int | None = None) -> str:
        """The audit trail of a test, a person or the whole store as spreadsheet-safe CSV text."""
        from store.audit_export import audit_to_csv

        return audit_to_csv(self.audit_log(test_id, person_id=person_id, limit=1_000_000))

    def soft_delete_test(self, test_id: int, *, actor: Actor, reason: str = "") -> None:
        """Hide a test from every list and share link (admin only). Rows are kept and logged."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "delete tests")
            test = self._live_test(db, test_id)
            test.deleted_at = self.now()
            test.deleted_by = actor_row.id if actor_row else None
            self._audit(db, actor=actor, actor_row=actor_row, action="soft_delete", test_id=test.id,
                        person_id=test.person_id, reason=reason)

    def soft_delete_person(self, person_id: int, *, actor: Actor, reason: str = "") -> None:
        """Hide a person and all their tests (admin only). Rows are kept and logged."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "delete people")
            person = db.get(PersonRow, person_id)
            if person is None or person.deleted_at is not None:
                raise NotFound(f"No person with number {person_id} (it may have been deleted).")
            now = self.now()
            person.deleted_at, person.deleted_by = now, actor_row.id if actor_row else None
            for test in db.execute(select(TestRow).where(TestRow.person_id == person_id, TestRow.deleted_at.is_(None))).scalars():
                test.deleted_at, test.deleted_by = now, person.deleted_by
                self._audit(db, actor=actor, actor_row=actor_row, action="soft_delete", test_id=test.id,
                            person_id=person_id, reason=reason)
            self._audit(db, actor=actor, actor_row=actor_row, action="soft_delete_person",
                        person_id=person_id, reason=reason)

    def restore_test(self, test_id: int, *, actor: Actor, reason: str = "") -> None:
        """Undo a soft delete (admin only, logged). Refused while a live test has the same file."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "restore tests")
            test = db.get(TestRow, test_id)
            if test is None or test.deleted_at is None:
                raise NotFound(f"No deleted test with number {test_id}.")
            person = db.get(PersonRow, test.person_id)
            if person is not None and person.deleted_at is not None:
                raise StoreError(f"Test {test_id} belongs to a deleted person; restore the person instead.")
            clash = db.execute(
                select(TestRow.id).where(TestRow.raw_sha256 == test.raw_sha256, TestRow.deleted_at.is_(None))
            ).scalar_one_or_none()
            if clash is not None:
                raise StoreError(f"The same file is already stored as test {clash}; test {test_id} stays deleted.")
            test.deleted_at, test.deleted_by = None, None
            self._audit(db, actor=actor, actor_row=actor_row, action="restore", test_id=test.id,
                        person_id=test.person_id, reason=reason)

    def restore_person(self, person_id: int, *, actor: Actor, reason: str = "") -> None:
        """Undo a person's soft delete and that of the tests deleted with them (admin only, logged)."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "restore people")
            person = db.get(PersonRow, person_id)
            if person is None or person.deleted_at is None:
                raise NotFound(f"No deleted person with number {person_id}.")
            deleted_at = person.deleted_at
            person.deleted_at, person.deleted_by = None, None
            live_hashes = set(db.execute(select(TestRow.raw_sha256).where(TestRow.deleted_at.is_(None))).scalars())
            for test in db.execute(
                select(TestRow).where(TestRow.person_id == person_id, TestRow.deleted_at == deleted_at)
            ).scalars():
                if test.raw_sha256 in live_hashes:
                    continue
                test.deleted_at, test.deleted_by = None, None
                live_hashes.add(test.raw_sha256)
                self._audit(db, actor=actor, actor_row=actor_row, action="restore", test_id=test.id,
                            person_id=person_id, reason=reason)
            self._audit(db, actor=actor, actor_row=actor_row, action="restore_person", person_id=person_id,
                        reason=reason)
