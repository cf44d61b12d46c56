"""``tidemark demo --load``: put the fictional demo tests into a store in local demo mode."""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

from analysis.errors import ImportRejected, Problem
from analysis.simulation.simulate import LAB_NAME as DEMO_LAB_NAME
from store.config import DEMO_PATH, is_default_real_store
from store.errors import StoreError
from store.records import LOCAL_OPERATOR
from store.store import open_store

#: The fictional demo lab's letterhead (demo data, like the sessions themselves).
DEMO_LAB_ADDRESS = "1 Tideway, Saltmarsh (fictional address)"
DEMO_REPORT_FOOTER = "Fictional demo data made by Tidemark's simulator; not a real person's test."


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
        Store URL or SQLite path; default ``~/.tidemark/demo.sqlite`` (never the default store for
        real data, ``~/.tidemark/tidemark.sqlite``, which is refused).

    Returns
    -------
    list of int
        The test ids, in the order of ``paths``.

    Raises
    ------
    StoreError
        The store already holds real accounts or tests, or is the default store for real data.
    ImportRejected
        A demo file is missing or unreadable.
    """
    files = [Path(p) for p in paths]
    missing = [p for p in files if not p.is_file()]
    if missing:
        raise ImportRejected(
            [Problem("The demo file does not exist.", "Run 'tidemark demo' first.", file=str(p)) for p in missing]
        )
    target = url or str(DEMO_PATH)
    if is_default_real_store(target):
        raise StoreError(
            "The demo is never loaded into the default store for real data (~/.tidemark/tidemark.sqlite). "
            "Leave out --store to use the demo store ~/.tidemark/demo.sqlite, or name another file."
        )
    store = open_store(target)
    try:
        demo_user = store.enable_demo_mode()
        if not store.lab_identity().name:  # the demo lab's name is demo data, written here only
            store.set_lab_identity(actor=LOCAL_OPERATOR, name=DEMO_LAB_NAME, address=DEMO_LAB_ADDRESS,
                                   report_footer=DEMO_REPORT_FOOTER, reason="demo store")
        return [
            store.import_test(path.read_bytes(), file_name=path.name, actor=demo_user).test_id for path in files
        ]
    finally:
        store.close()
