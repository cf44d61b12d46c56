"""A small, deterministic stand-in for the analysis library, used by most store tests.

The store's job is persistence and access control; these tests check what it keeps, not the
physiology. The stand-in reads a plain CSV with the four required canonical columns, rejects
anything else with :class:`ImportRejected`, and "analyses" by taking the highest VO2 (so
stored results are easy to predict). ``test_store_with_analysis.py`` runs the real library.
"""

from __future__ import annotations

import io
from typing import Any

import pandas as pd

from analysis import columns as C
from analysis.errors import AnalysisError, ImportRejected, InvalidParameter, Problem
from analysis.io.session_file import session_to_text
from analysis.session import Session
from store.analysis_bridge import AnalysisBridge, Headline, ImportedFile

DEFAULT_SETTINGS: dict[str, Any] = {
    "smoothing": {"window_s": 30},
    "exclusions": [],
    "thresholds": {"vt1_override_s": None, "vt2_override_s": None},
}


def csv_bytes(vo2_peak_ml_min: float, *, n: int = 30, subject: str | None = None) -> bytes:
    """A tiny valid file whose stand-in 'VO2peak' is ``vo2_peak_ml_min``."""
    lines = []
    if subject is not None:
        lines.append(f"# subject_id: {subject}")
        lines.append("# test_date: 2026-03-14")
    lines.append("t_s,vo2_ml_min,vco2_ml_min,ve_l_min")
    for i in range(n):
        vo2 = 400 + (vo2_peak_ml_min - 400) * i / (n - 1)
        lines.append(f"{i * 5},{vo2:.1f},{vo2 * 0.95:.1f},{10 + vo2 / 40:.2f}")
    return ("\n".join(lines) + "\n").encode()


class StandInBridge(AnalysisBridge):
    def import_file(
        self, data: bytes, *, file_name: str, mapping: dict[str, Any] | None, options: dict[str, Any] | None = None
    ) -> ImportedFile:
        try:
            text = data.decode("utf-8", errors="strict")
        except UnicodeDecodeError as exc:
            raise ImportRejected(Problem("Not UTF-8 text.", file=file_name)) from exc
        meta = {}
        body = []
        for line in text.splitlines():
            if line.startswith("#") and ":" in line:
                k, v = line[1:].split(":", 1)
                meta[k.strip()] = v.strip()
            else:
                body.append(line)
        try:
            frame = pd.read_csv(io.StringIO("\n".join(body)))
        except Exception as exc:  # noqa: BLE001
            raise ImportRejected(Problem(f"Not a table ({exc}).", file=file_name)) from exc
        missing = [c for c in C.REQUIRED if c not in frame.columns]
        if missing or frame.empty:
            raise ImportRejected(Problem(f"Missing columns {missing}.", "Map the columns.", file=file_name))
        session = Session(meta=meta, breaths=frame, source_name=file_name)
        return ImportedFile(session, session_to_text(session), mapping, [])

    def read_session_text(self, text: str, *, source_name: str) -> Session:
        return self.import_file(text.encode(), file_name=source_name, mapping=None).session

    def default_settings(self, session: Session) -> dict[str, Any]:
        return {k: (dict(v) if isinstance(v, dict) else v) for k, v in DEFAULT_SETTINGS.items()}

    def validate_settings(self, settings: dict[str, Any]) -> dict[str, Any]:
        unknown = set(settings) - set(DEFAULT_SETTINGS)
        if unknown:
            raise InvalidParameter("settings", f"keys among {sorted(DEFAULT_SETTINGS)}", sorted(unknown))
        return settings

    def analyze(self, session: Session, settings: dict[str, Any]) -> dict[str, Any]:
        if len(session.breaths) < 5:
            raise AnalysisError("Too few breaths to analyse.")
        return {
            "vo2peak_ml_min": float(session.breaths[C.VO2_ML_MIN].max()),
            "window_s": settings["smoothing"]["window_s"],
        }

    def headline(self, results: dict[str, Any]) -> Headline:
        return Headline(vo2peak_ml_min=results.get("vo2peak_ml_min"))
