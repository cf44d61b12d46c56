"""Pure helpers for exported tables: formula-safe CSV cells and the one-row-per-test summary.

Nothing here touches the file system; writers call these and write the text themselves.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from typing import Any

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


def _get(d: Mapping[str, Any] | None, *path: str) -> Any:
    node: Any = d
    for key in path:
        if not isinstance(node, Mapping):
            return None
        node = node.get(key)
    return node


def summary_row(results_json: Mapping[str, Any], *, file: str) -> dict[str, Any]:
    """One summary row (keys :data:`SUMMARY_COLUMNS`) from ``to_json(TestResults)``.

    Parameters
    ----------
    results_json : mapping
        The results JSON of one test.
    file : str, keyword-only
        File name shown in the ``file`` column.
    """
    r = results_json
    row: dict[str, Any] = {
        "file": file,
        "status": "ok",
        "error": "",
        "subject_id": _get(r, "subject", "subject_id"),
        "test_date": _get(r, "subject", "test_date"),
        "mode": _get(r, "subject", "mode"),
        "vo2_peak_ml_min": r.get("vo2_peak_ml_min"),
        "vo2_peak_ml_kg_min": r.get("vo2_peak_ml_kg_min"),
        "rer_peak": r.get("rer_peak"),
        "hr_peak_bpm": r.get("hr_peak_bpm"),
        "maximality": _get(r, "maximality", "label"),
        "ve_vco2_slope": r.get("ve_vco2_slope"),
        "ventilatory_class": _get(r, "classes", "ventilatory"),
        "oues": r.get("oues"),
        "o2_pulse_peak_ml_beat": r.get("o2_pulse_peak_ml_beat"),
        "pct_predicted_vo2max": _get(r, "predicted", "pct_predicted_vo2max"),
        "weber_class": _get(r, "classes", "weber"),
        "excluded_breaths": len(r.get("excluded_breaths") or []),
        "warnings": " | ".join(str(w) for w in (r.get("warnings") or [])),
    }
    for kind in ("vt1", "vt2"):
        row[f"{kind}_vo2_ml_min"] = _get(r, kind, "vo2_ml_min")
        row[f"{kind}_time_s"] = _get(r, kind, "time_s")
        row[f"{kind}_hr_bpm"] = _get(r, kind, "hr_bpm")
        row[f"{kind}_method"] = _get(r, kind, "method")
    return {k: row.get(k) for k in SUMMARY_COLUMNS}


def error_row(*, file: str, error: str) -> dict[str, Any]:
    """A summary row for a file that could not be analysed (every result empty)."""
    row: dict[str, Any] = dict.fromkeys(SUMMARY_COLUMNS)
    row.update(file=file, status="error", error=error)
    return row
