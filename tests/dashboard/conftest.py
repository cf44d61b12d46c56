"""Fixtures for the dashboard's AppTest tests (shared by both dashboard engineers).

- ``demo_store`` (module scope): a temporary SQLite store loaded with two demo sessions (a
  cycle ramp and a treadmill ramp) in demo mode; ``TIDEMARK_STORE`` points at it while the
  module runs. Yields a :class:`DemoStore` with the URL, the open store, the test ids, the
  demo reviewer and the demo files.
- ``page_test(script_fn, **state)``: an ``AppTest`` of a page function with session state set.
  The session has drawn Review once (``review.PAGE_DRAWN``): a browser reports the overview
  drawn and the next run adds the sections under it; AppTest has no browser, so each run draws
  the whole page (``test_review_page`` checks the first run of a session on its own).
- ``reviewer`` / ``viewer`` accounts are made on demand with :func:`make_user` (scrypt is slow:
  create them once per module).
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pytest

from tests.support import ROOT

#: Generous: the machine is slow and the first run imports plotly and the analysis.
APPTEST_TIMEOUT_S = 60

DEMO_FILES = (
    "SEL-0107_2026-02-03_cycle-ramp.session.csv",
    "SEL-0212_2026-02-10_treadmill-ramp.session.csv",
)


@dataclass
class DemoStore:
    url: str
    store: Any
    test_ids: list[int]
    user: Any
    files: list[Path]


def demo_paths() -> list[Path]:
    paths = [ROOT / "demo_sessions" / name for name in DEMO_FILES]
    missing = [p.name for p in paths if not p.is_file()]
    if missing:
        pytest.fail(f"demo sessions missing: {missing} (run `tidemark demo`)")
    return paths


@contextlib.contextmanager
def demo_store_of(files: list[Path], folder: Path) -> Iterator[DemoStore]:
    """A SQLite store in ``folder`` loaded with ``files`` in demo mode; ``TIDEMARK_STORE`` points
    at it until the block ends."""
    from store.demo_loader import load_demo_sessions

    url = f"sqlite:///{folder / 'tidemark.sqlite'}"
    ids = load_demo_sessions(files, url=url)
    with store_for_pages(url) as store:
        yield DemoStore(url=url, store=store, test_ids=list(ids), user=store.demo_user(), files=files)


@contextlib.contextmanager
def store_for_pages(url: str) -> Iterator[Any]:
    """The store at ``url``, open, and named in ``TIDEMARK_STORE`` for the pages; both undone after."""
    from store import open_store

    old = os.environ.get("TIDEMARK_STORE")
    os.environ["TIDEMARK_STORE"] = url
    store = open_store(url)
    try:
        yield store
    finally:
        store.close()
        if old is None:
            os.environ.pop("TIDEMARK_STORE", None)
        else:
            os.environ["TIDEMARK_STORE"] = old


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory: pytest.TempPathFactory) -> Iterator[DemoStore]:
    with demo_store_of(demo_paths(), tmp_path_factory.mktemp("dash-store")) as demo:
        yield demo


def make_user(store: Any, username: str, role: str, password: str = "Saltmarsh-test-pass-2026!") -> Any:
    """Create a staff account through the store (as the command-line operator)."""
    from store.records import LOCAL_OPERATOR

    return store.create_user(username, role=role, actor=LOCAL_OPERATOR, password=password)


@pytest.fixture()
def page_test() -> Callable[..., Any]:
    """Build an AppTest running ``script_fn`` with the given session-state values."""
    from streamlit.testing.v1 import AppTest

    from dashboard.views.review import PAGE_DRAWN

    def build(script_fn: Callable[[], None], **session_state: Any) -> Any:
        at = AppTest.from_function(script_fn, default_timeout=APPTEST_TIMEOUT_S)
        session_state.setdefault(PAGE_DRAWN, True)
        for key, value in session_state.items():
            at.session_state[key] = value
        return at

    return build
