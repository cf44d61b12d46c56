"""The store's only contact with the analysis library: import, default settings, analysis.

Kept in one small class so that the store computes nothing itself: every number it keeps
comes from :mod:`analysis` (``import_bytes``, ``AnalysisSettings``, ``analyze_session``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from analysis.errors import AnalysisError, InvalidParameter
from analysis.numeric import finite_or_none
from analysis.session import Session

if TYPE_CHECKING:
    from analysis.results import TestResults


@dataclass(frozen=True)
class ImportedFile:
    session: Session
    session_text: str
    mapping: dict[str, Any] | None
    flags: list[dict[str, Any]]


@dataclass(frozen=True)
class Headline:
    """Headline numbers copied from a results dict for fast listing (never recomputed here)."""

    vo2peak_ml_min: float | None = None
    vt1_vo2_ml_min: float | None = None
    ve_vco2_slope: float | None = None


def headline_of(results: TestResults) -> Headline:
    """The one place the store's headline columns come from: attributes of the result record."""
    return Headline(
        vo2peak_ml_min=finite_or_none(results.vo2_peak_ml_min),
        vt1_vo2_ml_min=finite_or_none(results.vt1.vo2_ml_min) if results.vt1 is not None else None,
        ve_vco2_slope=finite_or_none(results.ve_vco2_slope),
    )


def plain_json(value: Any) -> Any:
    """Plain JSON values of ``value`` by the analysis' result codec (:func:`analysis.records.to_json`)."""
    from analysis.records import to_json

    return to_json(value)


def flags_to_records(session: Session) -> list[dict[str, Any]]:
    """The session's import flags as JSON-ready records."""
    records = []
    for row in session.flags.to_dict(orient="records"):
        records.append({str(k): (v.item() if hasattr(v, "item") else v) for k, v in row.items()})
    return records


class AnalysisBridge:
    """Calls into :mod:`analysis`. Replaceable per store (tests may substitute a stand-in)."""

    def import_file(
        self, data: bytes, *, file_name: str, mapping: dict[str, Any] | None, options: dict[str, Any] | None = None,
    ) -> ImportedFile:
        """Convert an upload with ``analysis.io.import_bytes`` (raises ImportRejected)."""
        from analysis.io import ColumnMapping, import_bytes, session_to_text

        outcome = import_bytes(
            data,
            file_name=file_name,
            mapping=None if mapping is None else ColumnMapping.from_dict(mapping),
            **(options or {}),
        )
        session = outcome.session
        return ImportedFile(session, session_to_text(session), outcome.mapping.to_dict(), flags_to_records(session))

    def read_session_text(self, text: str, *, source_name: str) -> Session:
        """Read the stored session text back with the strict session-file reader."""
        from analysis.io import read_session

        return read_session(text.encode("utf-8"), file_name=source_name)

    def default_settings(self, session: Session) -> dict[str, Any]:
        from analysis.settings import AnalysisSettings

        return AnalysisSettings().to_dict()

    def validate_settings(self, settings: dict[str, Any]) -> dict[str, Any]:
        """Round-trip through ``AnalysisSettings`` (raises InvalidParameter when invalid)."""
        from analysis.settings import AnalysisSettings

        return AnalysisSettings.from_dict(settings).to_dict()

    def analyze(self, session: Session, settings: dict[str, Any]) -> dict[str, Any]:
        from analysis.pipeline import analyze_session
        from analysis.records import to_json
        from analysis.settings import AnalysisSettings

        return to_json(analyze_session(session, AnalysisSettings.from_dict(settings)))

    def headline(self, results: dict[str, Any]) -> Headline:
        """The list columns of stored results: the record read back by the codec, then :func:`headline_of`."""
        from analysis.results import results_from_json

        return headline_of(results_from_json(results))


def run_analysis(bridge: AnalysisBridge, session: Session, settings: dict[str, Any]) -> tuple[dict | None, str | None]:
    """Results, or ``(None, message)`` when the analysis cannot be done on this data."""
    try:
        return bridge.analyze(session, settings), None
    except AnalysisError as exc:
        return None, str(exc)
    except InvalidParameter as exc:
        # data the importer accepted but a method cannot use (e.g. no ventilation at all): the
        # test is still stored and the reason shown, as for AnalysisError
        return None, f"The analysis could not be carried out on these data ({exc}) Check the flagged rows."
