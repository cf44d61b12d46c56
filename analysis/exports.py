"""Pure helpers for exported tables: formula-safe CSV cells and the one-row-per-test summary.

Nothing here touches the file system; writers call these and write the text themselves.
"""

from __future__ import annotations

import math
import numbers
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from analysis.indices.threshold_values import ThresholdResult
    from analysis.results import TestResults

#: Leading characters that make a spreadsheet treat a cell as a formula (= + - @) plus tab and
#: carriage return, which some spreadsheets strip before checking (OWASP "CSV Injection"
#: guidance, common practice).
FORMULA_TRIGGERS: tuple[str, ...] = ("=", "+", "-", "@", "\t", "\r")


def safe_csv_cell(value: Any) -> str:
    """Text of a CSV cell that cannot be run as a spreadsheet formula.

    Parameters
    ----------
    value : object
        Cell content. Real numbers are written as numbers (a negative number stays ``-5``);
        ``None`` and NaN become an empty cell; any other value is turned into text.

    Returns
    -------
    str
        The text, with a leading apostrophe added when it starts with ``=``, ``+``, ``-``,
        ``@``, a tab or a carriage return.

    Examples
    --------
    >>> safe_csv_cell("=HYPERLINK(\\"http://x\\")")
    '\\'=HYPERLINK("http://x")'
    >>> safe_csv_cell(-2.5)
    '-2.5'
    >>> safe_csv_cell("VT1 ok")
    'VT1 ok'
    """
    if value is None:
        return ""
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        f = float(value)
        if not math.isfinite(f):
            return ""
        return str(int(value)) if isinstance(value, numbers.Integral) else repr(f)
    text = str(value)
    if text.startswith(FORMULA_TRIGGERS):
        return "'" + text
    return text


#: Columns of the batch summary (one row per session), in order.
SUMMARY_COLUMNS: tuple[str, ...] = (
    "file",
    "status",
    "error",
    "subject_id",
    "test_date",
    "mode",
    "vo2_peak_ml_min",
    "vo2_peak_ml_kg_min",
    "rer_peak",
    "hr_peak_bpm",
    "maximality",
    "vt1_vo2_ml_min",
    "vt1_time_s",
    "vt1_hr_bpm",
    "vt1_method",
    "vt2_vo2_ml_min",
    "vt2_time_s",
    "vt2_hr_bpm",
    "vt2_method",
    "ve_vco2_slope",
    "ventilatory_class",
    "oues",
    "o2_pulse_peak_ml_beat",
    "pct_predicted_vo2max",
    "weber_class",
    "excluded_breaths",
    "warnings",
)


def summary_row(results: TestResults, *, file: str) -> dict[str, Any]:
    """One summary row (keys :data:`SUMMARY_COLUMNS`) from the typed result of one test.

    Parameters
    ----------
    results : TestResults
        The result of :func:`analysis.pipeline.analyze_session` (a stored version is read back
        with :func:`analysis.results.results_from_json`).
    file : str, keyword-only
        File name shown in the ``file`` column.
    """
    r = results
    row: dict[str, Any] = {
        "file": file,
        "status": "ok",
        "error": "",
        "subject_id": r.subject.subject_id,
        "test_date": r.subject.test_date,
        "mode": r.subject.mode,
        "vo2_peak_ml_min": r.vo2_peak_ml_min,
        "vo2_peak_ml_kg_min": r.vo2_peak_ml_kg_min,
        "rer_peak": r.rer_peak,
        "hr_peak_bpm": r.hr_peak_bpm,
        "maximality": r.maximality.label,
        "ve_vco2_slope": r.ve_vco2_slope,
        "ventilatory_class": r.classes.ventilatory,
        "oues": r.oues,
        "o2_pulse_peak_ml_beat": r.o2_pulse_peak_ml_beat,
        "pct_predicted_vo2max": r.predicted.pct_predicted_vo2max,
        "weber_class": r.classes.weber,
        "excluded_breaths": len(r.excluded_breaths),
        "warnings": " | ".join(r.warnings),
    }
    for kind in ("vt1", "vt2"):
        t: ThresholdResult | None = getattr(r, kind)
        row[f"{kind}_vo2_ml_min"] = None if t is None else t.vo2_ml_min
        row[f"{kind}_time_s"] = None if t is None else t.t_s
        row[f"{kind}_hr_bpm"] = None if t is None else t.hr_bpm
        row[f"{kind}_method"] = None if t is None else t.method
    return {k: row.get(k) for k in SUMMARY_COLUMNS}


def error_row(*, file: str, error: str) -> dict[str, Any]:
    """A summary row for a file that could not be analysed (every result empty)."""
    row: dict[str, Any] = dict.fromkeys(SUMMARY_COLUMNS)
    row.update(file=file, status="error", error=error)
    return row
