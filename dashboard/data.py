"""Cached access to the store and to the analysis.

- :func:`get_store` — one store handle per server process (``st.cache_resource``), opened from
  the URL in the ``TIDEMARK_STORE`` environment variable (``tidemark serve --store`` sets it;
  unset means the store's own default).
- :func:`load_session` — a test's breaths from the store (the store keeps parsed sessions per
  test and hash of the stored text, so a change made through another server is never missed).
- :func:`analyze` — :func:`analysis.pipeline.analyze_session` keyed by (test id, hash of the
  stored session, settings JSON), so moving a threshold back to an earlier position, or any
  rerun that does not change the settings, costs a cache look-up instead of a new analysis,
  and a session edited on another server is analysed afresh.
- :func:`preview_import` — the import check of an uploaded file, keyed by its bytes and options.

Nothing here computes a number itself.
"""

from __future__ import annotations

import json
import logging
import os
import threading
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import streamlit as st

from analysis.session import Session

if TYPE_CHECKING:
    from analysis.results import TestResults
    from store import Store

log = logging.getLogger("tidemark.dashboard")

#: Environment variable holding the store URL (shared with the store and ``tidemark serve``).
STORE_ENV = "TIDEMARK_STORE"


def store_url() -> str | None:
    """The configured store URL, or ``None`` for the store's default."""
    return os.environ.get(STORE_ENV) or None


@st.cache_resource(show_spinner=False)
def _open_store(url: str | None) -> Store:
    from store import open_store

    log.info("opening store %s", "(default)" if url is None else url.split("@")[-1])
    return open_store(url)


def get_store() -> Store:
    """The store handle of this server process."""
    return _open_store(store_url())


def load_session(test_id: int) -> Session:
    """The session of a stored test (the store's own copy for this caller)."""
    return get_store().load_session(int(test_id))


def settings_from_dict(settings: dict[str, Any] | None) -> Any:
    """An :class:`analysis.settings.AnalysisSettings` from its JSON-safe dict (``None`` → defaults)."""
    from analysis.settings import AnalysisSettings

    return AnalysisSettings.from_dict(settings) if settings else AnalysisSettings()


def default_settings_dict() -> dict[str, Any]:
    from analysis.settings import AnalysisSettings

    return AnalysisSettings().to_dict()


@st.cache_data(show_spinner=False, max_entries=64)
def _analyze(test_id: int, settings_json: str, session_digest: str, url: str | None) -> TestResults:
    from analysis.pipeline import analyze_session

    session = _open_store(url).load_session(int(test_id))
    return analyze_session(session, settings_from_dict(json.loads(settings_json)))


def analyze(test_id: int, settings_json: str) -> TestResults:
    """:class:`analysis.results.TestResults` of a stored test under the given settings JSON."""
    return _analyze(int(test_id), settings_json, get_store().session_digest(int(test_id)), store_url())


def stored_results(store: Store, test_id: int, *, version: int | None = None) -> TestResults | None:
    """The results the store kept for a version (current by default), read back by the codec.

    The one place a stored results JSON becomes a record again
    (:func:`analysis.results.results_from_json`); ``None`` when the analysis of that version
    could not be carried out (the reason is in the test summary's ``results_error``).
    """
    from analysis.results import results_from_json

    stored = store.get_results(int(test_id), version=version)
    return results_from_json(stored) if stored else None


@st.cache_data(show_spinner=False, max_entries=16)
def preview_import(
    data: bytes,
    *,
    file_name: str,
    mapping_json: str | None = None,
    sheet: str | None = None,
    gas_unit: str = "auto",
    time_format: str = "auto",
    ve_condition: str = "auto",
    barometric_mmhg: float | None = None,
    ambient_c: float | None = None,
) -> Any:
    """The import check of an uploaded file (:func:`analysis.io.import_bytes`, cached).

    Raises :class:`analysis.errors.ImportRejected` when the file cannot be imported as set up.
    """
    from analysis.io import ColumnMapping, import_bytes

    mapping = ColumnMapping.from_dict(json.loads(mapping_json)) if mapping_json else None
    return import_bytes(
        data, file_name=file_name, mapping=mapping, sheet=sheet, gas_unit=gas_unit, time_format=time_format,
        ve_condition=ve_condition, barometric_mmhg=barometric_mmhg, ambient_c=ambient_c,
    )



@st.cache_data(show_spinner=False, max_entries=8)
def sheet_names(data: bytes) -> list[str]:
    """Sheet names of an .xlsx upload."""
    from analysis.io import list_sheets

    return list_sheets(data)


def clear_test_caches() -> None:
    """Forget cached analyses (after a store change that alters what a test id holds)."""
    _analyze.clear()


@st.cache_data(show_spinner=False, max_entries=16)
def source_headers(data: bytes, *, file_name: str, sheet: str | None = None) -> list[str] | None:
    """Every column header of an uploaded table (for the mapping editor), or ``None``.

    The importer's public :func:`analysis.io.read_headers`, so the headers are exactly what the
    import sees (same sheet choice for a workbook). ``None`` when the file has no recognisable
    header row (the import check says why).
    """
    from analysis.errors import TidemarkError
    from analysis.io import read_headers

    try:
        return read_headers(data, file_name=file_name, sheet=sheet)
    except TidemarkError:
        return None


def profiles_dir() -> Path:
    """Folder of saved column-mapping profiles: beside a SQLite store file, else ``~/.tidemark``."""
    from sqlalchemy.engine import make_url

    url = getattr(get_store(), "url", None) or store_url()
    base = Path("~/.tidemark").expanduser()
    try:
        parsed = make_url(url) if url else None
    except Exception:  # noqa: BLE001 - fall back to the home folder
        parsed = None
    if parsed is not None and parsed.get_backend_name() == "sqlite" and parsed.database not in (None, "", ":memory:"):
        base = Path(parsed.database).expanduser().resolve().parent
    return base / "mapping-profiles"


def list_profiles() -> dict[str, Path]:
    """Saved mapping profiles: name -> file."""
    folder = profiles_dir()
    if not folder.is_dir():
        return {}
    return {p.stem: p for p in sorted(folder.glob("*.json"))}


# --- saving settings without making the reviewer wait ---------------------------------------

#: One worker: saves run one after another, in the order they were made (each save needs the
#: version the previous one produced).
_SAVE_POOL = ThreadPoolExecutor(max_workers=1, thread_name_prefix="tidemark-save")


@dataclass
class SaveTracker:
    """What the background saves of one browser session have done (thread-safe).

    ``versions[test_id]`` is the store version the next save must expect; ``pending`` counts
    queued saves; ``failed`` holds the message of a refused save (later queued saves of that test
    are skipped until the reviewer reloads); ``saved_keys`` the settings JSON last stored.
    """

    versions: dict[int, int] = field(default_factory=dict)
    pending: dict[int, int] = field(default_factory=dict)
    failed: dict[int, str] = field(default_factory=dict)
    saved_keys: dict[int, str] = field(default_factory=dict)
    lock: threading.Lock = field(default_factory=threading.Lock)

    def status(self, test_id: int) -> tuple[int, int | None, str | None, str | None]:
        """``(pending saves, current version, failure message, settings JSON last saved)``."""
        with self.lock:
            return (self.pending.get(test_id, 0), self.versions.get(test_id), self.failed.get(test_id),
                    self.saved_keys.get(test_id))

    def forget(self, test_id: int) -> None:
        with self.lock:
            if not self.pending.get(test_id):
                self.versions.pop(test_id, None)
                self.failed.pop(test_id, None)
                self.saved_keys.pop(test_id, None)


def save_in_background(
    store: Store, tracker: SaveTracker, test_id: int, settings: dict[str, Any], *, actor: Any, reason: str,
    expected_version: int, settings_json: str,
) -> Future:
    """Queue ``store.save_settings`` for this change; the page does not wait for it.

    The store re-reads the session and recomputes the results for the audit trail, which takes
    longer than showing the change; the reviewer sees the new numbers at once (computed here by
    the same ``analyze_session``) and a "saving" note until the store confirms the new version.
    """
    with tracker.lock:
        tracker.versions.setdefault(test_id, int(expected_version))
        tracker.pending[test_id] = tracker.pending.get(test_id, 0) + 1

    def job() -> None:
        from analysis.errors import TidemarkError

        with tracker.lock:
            skip = test_id in tracker.failed
            expected = tracker.versions[test_id]
        try:
            if not skip:
                version = store.save_settings(test_id, settings, actor=actor, reason=reason, expected_version=expected)
                with tracker.lock:
                    tracker.versions[test_id] = int(version)
                    tracker.saved_keys[test_id] = settings_json
        except TidemarkError as exc:
            with tracker.lock:
                tracker.failed[test_id] = str(exc)
        except Exception:  # logged with its traceback, the user gets a plain message
            log.exception("saving settings of test %s failed", test_id)
            with tracker.lock:
                tracker.failed[test_id] = "The change could not be saved because of a server problem (see the server log)."
        finally:
            with tracker.lock:
                tracker.pending[test_id] = max(0, tracker.pending.get(test_id, 1) - 1)

    return _SAVE_POOL.submit(job)


def wait_for_saves(timeout_s: float = 60.0) -> None:
    """Block until every queued save has finished (tests, sign-off)."""
    _SAVE_POOL.submit(lambda: None).result(timeout=timeout_s)
