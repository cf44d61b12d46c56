"""Downloadable exports of one analysed test: processed breaths CSV, averages CSV, results JSON.

CSV text cells (markers, notes, reasons, phases) are passed through
:func:`analysis.exports.safe_csv_cell`, so a cell starting with ``=``, ``+``, ``-`` or ``@``
cannot run as a formula when the file is opened in a spreadsheet. Numeric columns are written
as numbers (a negative grade stays a number).

The writers return text/bytes; they never touch the file system.
"""

from __future__ import annotations

import io
import json
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import pandas as pd

from analysis import columns as C
from analysis.exports import safe_csv_cell
from analysis.records import to_json
from analysis.session import Session

if TYPE_CHECKING:
    from analysis.results import TestResults

#: Column added to the processed breath table: why a breath was left out ("" when kept).
EXCLUDED_REASON = "excluded_reason"
EXCLUDED = "excluded"


@dataclass(frozen=True)
class ExportFile:
    """One download: file name, content and MIME type."""

    file_name: str
    data: bytes
    mime: str


def safe_frame_csv(frame: pd.DataFrame, *, float_format: str = "%.6g") -> str:
    """CSV text of ``frame`` with every text cell neutralised against formula injection.

    Parameters
    ----------
    frame : pandas.DataFrame
        Any table; object, string and category columns are treated as text.
    float_format : str
        Format of floating-point cells.

    Returns
    -------
    str
        UTF-8 CSV text with ``\\n`` line ends and a header row (headers are neutralised too).
    """
    out = frame.copy()
    for col in out.columns:
        series = out[col]
        if not (pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series)):
            out[col] = series.map(lambda v: "" if v is None or (isinstance(v, float) and math.isnan(v)) else safe_csv_cell(v))
    out.columns = [safe_csv_cell(str(c)) for c in out.columns]
    buf = io.StringIO()
    out.to_csv(buf, index=False, float_format=float_format, lineterminator="\n")
    return buf.getvalue()


def processed_breaths(breaths: pd.DataFrame, excluded: pd.DataFrame | None = None) -> pd.DataFrame:
    """The breath table with an ``excluded`` flag and the reason for each left-out breath.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breaths in canonical columns with ``source_row``.
    excluded : pandas.DataFrame, optional
        Left-out breaths with ``source_row`` and a ``reason`` column.

    Returns
    -------
    pandas.DataFrame
        Canonical columns first (in :data:`analysis.columns.COLUMNS` order), then
        ``source_row``, ``excluded`` and ``excluded_reason``.
    """
    cols = [c for c in C.COLUMNS if c in breaths.columns]
    extra = [c for c in breaths.columns if c not in cols and c not in (EXCLUDED, EXCLUDED_REASON)]
    out = breaths[cols + extra].copy()
    reasons = pd.Series("", index=out.index, dtype=object)
    if excluded is not None and len(excluded) and "source_row" in excluded.columns and "source_row" in out.columns:
        reason_col = next((c for c in ("reason", "reasons", EXCLUDED_REASON) if c in excluded.columns), None)
        by_row: dict[int, str] = {}
        for _, row in excluded.iterrows():
            text = str(row[reason_col]) if reason_col else "excluded"
            key = int(row["source_row"])
            by_row[key] = f"{by_row[key]}; {text}" if key in by_row else text
        reasons = out["source_row"].map(lambda r: by_row.get(int(r), "") if pd.notna(r) else "").astype(object)
    out[EXCLUDED] = reasons != ""
    out[EXCLUDED_REASON] = reasons
    return out


def results_json_text(results_json: Mapping[str, Any]) -> str:
    """Pretty, strict JSON text of a results dict (NaN and infinity written as ``null``)."""
    return json.dumps(to_json(results_json), indent=2, sort_keys=False, allow_nan=False, ensure_ascii=False) + "\n"


def export_files(results: TestResults, session: Session, *, stem: str = "test") -> dict[str, ExportFile]:
    """The three downloads of a test, keyed ``"breaths_csv"``, ``"averages_csv"``, ``"results_json"``.

    Parameters
    ----------
    results : TestResults
        From :func:`analysis.pipeline.analyze_session`; its averaged frame and excluded breaths
        are used, and its JSON form (:func:`analysis.records.to_json`).
    session : Session
        The analysed session (its breaths).
    stem : str
        Start of the file names (e.g. the person code and test date). Characters outside
        letters, digits, ``-`` and ``_`` become ``_``.
    """
    safe_stem = "".join(ch if ch.isalnum() or ch in "-_" else "_" for ch in stem) or "test"
    excluded = results.excluded_table()
    averaged = results.averaged
    files = {
        "breaths_csv": ExportFile(
            f"{safe_stem}_breaths.csv",
            safe_frame_csv(processed_breaths(session.breaths, excluded)).encode("utf-8"),
            "text/csv",
        ),
        "results_json": ExportFile(
            f"{safe_stem}_results.json", results_json_text(to_json(results)).encode("utf-8"), "application/json"
        ),
    }
    if not averaged.empty:
        files["averages_csv"] = ExportFile(
            f"{safe_stem}_averages.csv", safe_frame_csv(averaged).encode("utf-8"), "text/csv"
        )
    return files
