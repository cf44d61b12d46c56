"""Interpretation flags and patterns as rows for the pages and the report (plain functions,
tested without Streamlit). They read the result's JSON form (``to_json(results)``)."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from analysis.interpretation.flags import FLAG_GROUPS, FLAG_NAMES

#: Order of the groups on the page (the order of FLAG_GROUPS' first appearance).
GROUP_ORDER: tuple[str, ...] = tuple(dict.fromkeys(FLAG_GROUPS.values()))
SEVERITY_WORDS = {"abnormal": "outside the limit", "caution": "check", "info": "for information"}


def _flags(results_json: Mapping[str, Any], *, sport_only: bool) -> list[Mapping[str, Any]]:
    flags = results_json.get("flags") or []
    out = [f for f in flags if isinstance(f, Mapping) and f.get("code")]
    return [f for f in out if f.get("sport_relevant")] if sport_only else out


def value_text(flag: Mapping[str, Any]) -> str:
    """``"6.0 percentage points"`` (``"–"`` without a value)."""
    value = flag.get("value")
    if not isinstance(value, int | float):
        return "–"
    digits = 2 if abs(value) < 2 else 1 if abs(value) < 100 else 0
    unit = str(flag.get("unit") or "")
    return f"{value:.{digits}f} {unit}".strip()


def flag_row(flag: Mapping[str, Any]) -> dict[str, str]:
    """One flag as the table row the pages and the report show."""
    code = str(flag.get("code"))
    return {
        "Flag": FLAG_NAMES.get(code, code.replace("_", " ")),
        "Severity": SEVERITY_WORDS.get(str(flag.get("severity")), str(flag.get("severity") or "")),
        "Value": value_text(flag),
        "Limit": str(flag.get("limit") or ""),
        "Source": str(flag.get("source") or ""),
        "Finding": str(flag.get("text") or ""),
    }


def flag_groups(results_json: Mapping[str, Any], *, sport_only: bool = False) -> list[tuple[str, list[dict[str, str]]]]:
    """``[(group heading, rows), ...]`` in the page order; ``sport_only`` keeps the coach's flags."""
    groups: dict[str, list[dict[str, str]]] = {}
    for f in _flags(results_json, sport_only=sport_only):
        groups.setdefault(FLAG_GROUPS.get(str(f.get("code")), "Other"), []).append(flag_row(f))
    order = [*GROUP_ORDER, "Other"]
    return sorted(groups.items(), key=lambda kv: order.index(kv[0]) if kv[0] in order else len(order))


def pattern_summary(results_json: Mapping[str, Any]) -> tuple[list[str], str, str]:
    """``(pattern sentences, caution, statement)``; empty strings without an interpretation."""
    interp = results_json.get("interpretation")
    patterns = interp.get("patterns") if isinstance(interp, Mapping) else None
    if not isinstance(patterns, Mapping):
        return [], "", ""
    texts = [str(p.get("text")) for p in patterns.get("patterns") or [] if isinstance(p, Mapping) and p.get("text")]
    return texts, str(patterns.get("caution") or ""), str(patterns.get("statement") or "")


def reference_set_name(results_json: Mapping[str, Any]) -> str:
    """Name of the reference set the flags' % predicted came from (``""`` when none)."""
    interp = results_json.get("interpretation")
    predicted = interp.get("predicted") if isinstance(interp, Mapping) else None
    return str(predicted.get("reference_name") or "") if isinstance(predicted, Mapping) else ""
