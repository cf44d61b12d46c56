"""Helpers for the AppTest tests of the Oxygen path, Progress, Reports, Share links and coach pages."""

from __future__ import annotations

from typing import Any

from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.results import TestResults
from analysis.settings import AnalysisSettings
from dashboard import state

#: Session-state keys of a signed-in demo reviewer (dashboard.state names).
USER_KEYS = (state.USER, state.DEMO_MODE)


def signed_in(user: Any, **extra: Any) -> dict[str, Any]:
    """Session-state values of a signed-in user, for ``page_test(script, **values)``."""
    return {state.USER: user, state.DEMO_MODE: bool(getattr(user, "is_demo", False)), **extra}


def analysis_result(store: Any, test_id: int, settings: dict[str, Any] | None = None) -> TestResults:
    """What ``analysis`` computes for a stored test (the numbers a page must show)."""
    if settings is None:
        settings, _ = store.get_settings(test_id)
    return analyze_session(store.load_session(test_id), AnalysisSettings.from_dict(settings))


def analysis_json(store: Any, test_id: int, settings: dict[str, Any] | None = None) -> dict[str, Any]:
    """:func:`analysis_result` in its JSON form (what the CLI and the export files hold)."""
    return to_json(analysis_result(store, test_id, settings))


def parse_number(text: str) -> float:
    """``'3\u2009210 mL/min'`` -> 3210.0 (thin-space thousands, optional unit or sign)."""
    token = str(text).replace("\u2009", "").replace(",", "").split()[0]
    return float(token.replace("%", ""))


def dataframe_text(at: Any) -> str:
    """All dataframe cells of an AppTest run as one string (for presence checks)."""
    return "\n".join(df.value.to_string() for df in at.dataframe)


def page_text(at: Any) -> list[str]:
    """Every text-like element of a run, in order (titles, markdown, captions, alerts, code)."""
    out: list[str] = []
    for kind in ("title", "header", "subheader", "markdown", "caption", "text", "info", "warning", "error", "success", "code"):
        out.extend(str(e.value) for e in getattr(at, kind))
    return out
