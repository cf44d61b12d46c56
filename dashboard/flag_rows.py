"""Interpretation flags and patterns as rows for the pages and the report (plain functions,
tested without Streamlit). They read the typed result (``results.flags``,
``results.interpretation``)."""

from __future__ import annotations

from analysis.interpretation.flags import FLAG_GROUPS, FLAG_NAMES, Flag
from analysis.results import TestResults

#: Order of the groups on the page (the order of FLAG_GROUPS' first appearance).
GROUP_ORDER: tuple[str, ...] = tuple(dict.fromkeys(FLAG_GROUPS.values()))
SEVERITY_WORDS = {"abnormal": "outside the limit", "caution": "check", "info": "for information"}


def _flags(results: TestResults, *, sport_only: bool) -> list[Flag]:
    return [f for f in results.flags if f.sport_relevant or not sport_only]


def value_text(flag: Flag) -> str:
    """``"6.0 percentage points"`` (``"–"`` without a value)."""
    value = flag.value
    if value is None or value != value:  # missing or NaN
        return "–"
    digits = 2 if abs(value) < 2 else 1 if abs(value) < 100 else 0
    return f"{value:.{digits}f} {flag.unit}".strip()


def flag_row(flag: Flag) -> dict[str, str]:
    """One flag as the table row the pages and the report show."""
    return {
        "Flag": FLAG_NAMES.get(flag.code, flag.code.replace("_", " ")),
        "Severity": SEVERITY_WORDS.get(flag.severity, flag.severity),
        "Value": value_text(flag),
        "Limit": flag.limit,
        "Source": flag.source,
        "Finding": flag.text,
    }


def flag_groups(results: TestResults, *, sport_only: bool = False) -> list[tuple[str, list[dict[str, str]]]]:
    """``[(group heading, rows), ...]`` in the page order; ``sport_only`` keeps the coach's flags."""
    groups: dict[str, list[dict[str, str]]] = {}
    for f in _flags(results, sport_only=sport_only):
        groups.setdefault(FLAG_GROUPS.get(f.code, "Other"), []).append(flag_row(f))
    order = [*GROUP_ORDER, "Other"]
    return sorted(groups.items(), key=lambda kv: order.index(kv[0]) if kv[0] in order else len(order))


def pattern_summary(results: TestResults) -> tuple[list[str], str, str]:
    """``(pattern sentences, caution, statement)``; empty strings without an interpretation."""
    if results.interpretation is None:
        return [], "", ""
    patterns = results.interpretation.patterns
    return [p.text for p in patterns.patterns if p.text], patterns.caution, patterns.statement


def reference_set_name(results: TestResults) -> str:
    """Name of the reference set the flags' % predicted came from (``""`` when none)."""
    return "" if results.interpretation is None else results.interpretation.predicted.reference_name
