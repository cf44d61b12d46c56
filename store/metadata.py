"""Subject and test details of a stored test (date, body mass, age, sex, ...), edited after import.

The details live in the session's metadata. An edit stores the new values as the test's
``meta_overrides`` import option, converts the kept original again with them (the same
conversion as at import, so the session text always follows from the original bytes and the
stored options), recomputes the results under the current settings and stores them as a new
analysis version. Each changed key is an audit event (``action="metadata_change"``,
``field="meta.body_mass_kg"``) with its old and new value, who, when and why.
"""

from __future__ import annotations

import json
from typing import Any

from sqlalchemy import select, update

from analysis.errors import require
from store.analysis_bridge import run_analysis
from store.archive import _sex_from_file as _normalise_sex  # the one sex normaliser, lenient for edits
from store.archive import stored_session_text
from store.core import Actor, analysis_version_row, to_json
from store.errors import StoreError
from store.models import PersonRow, SignOff, TestRow
from store.review import ReviewMixin, changed_fields

#: Details a reviewer may set or change (metadata keys of the session file).
EDITABLE_KEYS: tuple[str, ...] = (
    "test_date", "body_mass_kg", "age_y", "sex", "height_cm", "hb_g_dl", "protocol", "operator", "beta_blocker",
)
#: Longest text kept for one value.
MAX_VALUE_CHARS = 200


def _text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:g}"
    return " ".join(str(value).split())


class MetadataMixin(ReviewMixin):
    """Editing a stored test's subject and test details."""

    def test_metadata(self, test_id: int) -> dict[str, Any]:
        """The session metadata of a stored test as the analysis reads it."""
        return dict(self.load_session(test_id).meta)

    def update_test_metadata(
        self,
        test_id: int,
        changes: dict[str, Any],
        *,
        actor: Actor,
        expected_version: int,
        reason: str = "",
        settings: dict[str, Any] | None = None,
    ) -> int:
        """Set subject and test details (reviewer or admin); returns the new version.

        Parameters
        ----------
        changes : dict
            Keys of :data:`EDITABLE_KEYS` with their new values (text or numbers); an empty
            value removes a value set earlier in Tidemark (the file's own value comes back).
        expected_version : int
            The version the reviewer was looking at; :class:`store.errors.EditConflict` when
            someone saved since (nothing is written).
        reason : str
            Why; required when the current version is signed off (the edit starts a new,
            unsigned version).
        settings : dict, optional
            Analysis settings to store in the same new version (the reviewer's unsaved Review
            changes saved together with the details: one version per save); each changed
            setting is audited as in :meth:`save_settings`. ``None`` keeps the current settings.

        Returns
        -------
        int
            The new current version (unchanged when nothing differs).
        """
        require(isinstance(changes, dict), "changes", "a dict of metadata keys and values", type(changes).__name__)
        unknown = sorted(set(changes) - set(EDITABLE_KEYS))
        require(not unknown, "changes", f"keys among {', '.join(EDITABLE_KEYS)}", unknown)
        reason = (reason or "").strip()
        cleaned = {k: _text(v)[:MAX_VALUE_CHARS] for k, v in changes.items()}
        with self._read() as db:
            self._check_actor(db, actor, "reviewer", "edit a test's details")
            test = self._live_test(db, test_id)
            current = self._version_row(db, test_id)
            if current.version != expected_version:
                raise self._conflict(db, test_id, expected_version)
            options = json.loads(test.import_options_json or "{}")
            mapping = None if test.mapping_json is None else json.loads(test.mapping_json)
            raw, name, current_settings = test.raw_bytes, test.original_file_name, json.loads(current.settings_json)
            signed = db.execute(
                select(SignOff.id).where(SignOff.test_id == test_id, SignOff.version == current.version)
            ).first() is not None
        before = self.test_metadata(test_id)
        overrides = {str(k): str(v) for k, v in (options.get("meta_overrides") or {}).items()}
        for key, value in cleaned.items():
            if value:
                overrides[key] = value
            else:
                overrides.pop(key, None)
        new_options = {**options, "meta_overrides": overrides}
        if not overrides:
            new_options.pop("meta_overrides")
        imported = self.analysis.import_file(raw, file_name=name, mapping=mapping, options=new_options)
        after = dict(imported.session.meta)
        changed = [(k, before.get(k), after.get(k)) for k in EDITABLE_KEYS if _text(before.get(k)) != _text(after.get(k))]
        setting_changes: list[tuple[str, Any, Any]] = []
        if settings is not None:
            require(isinstance(settings, dict), "settings", "a dict of analysis settings", type(settings).__name__)
            new_settings = self.analysis.validate_settings(settings)
            setting_changes = changed_fields(current_settings, new_settings)
            settings = new_settings
        else:
            settings = current_settings
        if not changed and not setting_changes:
            return expected_version
        if signed and not reason:
            raise StoreError(
                f"Version {expected_version} of test {test_id} is signed off; give a reason for the change "
                "(it starts a new, unsigned version)."
            )
        results, results_error = run_analysis(self.analysis, imported.session, settings)
        headline = self.analysis.headline(results) if results else None
        new_version = expected_version + 1
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "edit a test's details")
            bumped = db.execute(
                update(TestRow)
                .where(TestRow.id == test_id, TestRow.current_version == expected_version, TestRow.deleted_at.is_(None))
                .values(
                    current_version=new_version,
                    session_text=stored_session_text(imported.session_text, raw),
                    import_options_json=to_json(new_options),
                    test_date=str(after.get("test_date") or "").strip()[:32] or None,
                    protocol=str(after.get("protocol") or "").strip()[:200] or None,
                )
                .execution_options(synchronize_session=False)
            )
            if bumped.rowcount != 1:  # type: ignore[attr-defined]
                raise self._conflict(db, test_id, expected_version)
            now = self.now()
            db.add(
                analysis_version_row(
                    test_id=test_id, version=new_version, settings=settings, results=results,
                    results_error=results_error, headline=headline, created_at=now,
                    created_by=actor_row.id if actor_row else None, reason=reason or "subject and test details changed",
                )
            )
            person_id = db.execute(select(TestRow.person_id).where(TestRow.id == test_id)).scalar_one()
            sex = _normalise_sex(after.get("sex"))
            person = db.get(PersonRow, person_id)
            if person is not None and sex and person.sex != sex:
                person.sex = sex
            for key, old, new in changed:
                self._audit(
                    db, actor=actor, actor_row=actor_row, action="metadata_change", test_id=test_id,
                    person_id=person_id, field=f"meta.{key}", old=old, new=new, reason=reason,
                )
            for field, before_value, after_value in setting_changes:
                self._audit(
                    db, actor=actor, actor_row=actor_row, action="settings_change", test_id=test_id,
                    person_id=person_id, field=field, old=before_value, new=after_value, reason=reason,
                )
        return new_version
