"""``tidemark demo --load``: put the fictional demo tests into a store in local demo mode."""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

from analysis.errors import ImportRejected, Problem
from store.store import open_store


def load_demo_sessions(paths: Iterable[str | Path], *, url: str | None = None) -> list[int]:
    """Import the demo files into the store at ``url`` and mark it as a demo store.

    The store is created if needed and flagged ``demo``; its built-in "demo-reviewer" account
    (no password) is what the dashboard signs in automatically, only in such a store.
    Loading twice imports nothing new (files are recognised by their SHA-256).

    Parameters
    ----------
    paths : iterable of path
        Demo session files (fictional people of the Saltmarsh Exercise Lab).
    url : str, optional
        Store URL or SQLite path; default as for :func:`store.open_store`.

    Returns
    -------
    list of int
        The test ids, in the order of ``paths``.

    Raises
    ------
    StoreError
        The store already holds real accounts or tests.
    ImportRejected
        A demo file is missing or unreadable.
    """
    files = [Path(p) for p in paths]
    missing = [p for p in files if not p.is_file()]
    if missing:
        raise ImportRejected(
            [Problem("The demo file does not exist.", "Run 'tidemark demo' first.", file=str(p)) for p in missing]
        )
    store = open_store(url)
    try:
        demo_user = store.enable_demo_mode()
        return [
            store.import_test(path.read_bytes(), file_name=path.name, actor=demo_user).test_id for path in files
        ]
    finally:
        store.close()
