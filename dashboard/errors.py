"""Show problems to the user plainly; keep tracebacks in the server log.

Pages wrap their work in :func:`user_errors`. A :class:`~analysis.errors.TidemarkError` is
written for a lab user already and is shown as it is; anything else becomes a short apology
with a reference the administrator can find in the server log.
"""

from __future__ import annotations

import logging
import uuid
from collections.abc import Iterator
from contextlib import contextmanager

import streamlit as st

from analysis.errors import ImportRejected, TidemarkError

log = logging.getLogger("tidemark.dashboard")


class DashboardError(TidemarkError):
    """A problem in what the user asked the dashboard to do (message written for the user)."""


def describe(exc: BaseException) -> str:
    """The text a user should read for ``exc`` (no traceback, no internal names)."""
    if isinstance(exc, ImportRejected):
        return "\n".join(f"- {p.describe()}" for p in exc.problems)
    if isinstance(exc, TidemarkError):
        return str(exc)
    return "Something went wrong on the server. Nothing was changed."


def show_error(exc: BaseException, *, context: str = "") -> str:
    """Render ``exc`` with ``st.error`` and log it; returns the message shown.

    Unexpected errors are logged with their traceback under a short reference code that the
    message quotes, so staff can find the details without the user seeing them.
    """
    head = f"{context}: " if context else ""
    if isinstance(exc, TidemarkError):
        log.info("user-facing problem %s%s", head, exc)
        text = head + describe(exc)
    else:
        ref = uuid.uuid4().hex[:8]
        log.error("internal error [%s] %s", ref, head, exc_info=exc)
        text = f"{head}{describe(exc)} (reference {ref} in the server log)"
    st.error(_escaped(exc, text, head=head))
    return text


def _escaped(exc: BaseException, text: str, *, head: str) -> str:
    """``text`` as markdown with everything that came from data escaped (a rejected file's
    problems quote its cells and names); the list of problems stays a list."""
    from dashboard.lab import markdown_text

    if isinstance(exc, ImportRejected):
        items = "\n".join(f"- {markdown_text(p.describe())}" for p in exc.problems)
        return f"{markdown_text(head)}\n\n{items}" if head else items
    return markdown_text(text)


@contextmanager
def user_errors(context: str = "") -> Iterator[None]:
    """Context manager: any exception inside is shown with :func:`show_error`, not raised.

    Streamlit's own control-flow exceptions (rerun, stop, page switch) pass through.
    """
    try:
        yield
    except Exception as exc:  # shown to the user, logged with its traceback
        if _is_streamlit_control_flow(exc):
            raise
        show_error(exc, context=context)


def _is_streamlit_control_flow(exc: BaseException) -> bool:
    name = type(exc).__name__
    return name in {"RerunException", "StopException"} or "scriptrunner" in type(exc).__module__
