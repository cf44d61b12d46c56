"""``tidemark demo``: regenerate the simulated demo sessions and optionally load them."""

from __future__ import annotations

import argparse
from pathlib import Path

from analysis.errors import TidemarkError

#: The project's demo folder (``demo_sessions/`` next to the packages).
DEFAULT_DEMO_DIR = Path(__file__).resolve().parents[2] / "demo_sessions"


class StoreUnavailable(TidemarkError):
    """The store cannot take the demo sessions (not installed or not built yet)."""


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "demo",
        description=(
            "Regenerate the simulated demo sessions (fictional people; same bytes every time) "
            "and print the files written. With --load, also load them into the store."
        ),
    )
    p.add_argument("--out", type=Path, default=DEFAULT_DEMO_DIR, metavar="DIR",
                   help=f"folder for the session files (default: {DEFAULT_DEMO_DIR})")
    p.add_argument("--load", action="store_true", help="load the written sessions into the store")
    p.add_argument("--store", default=None, metavar="URL",
                   help="database URL or SQLite file of the demo store (default: ~/.tidemark/demo.sqlite; "
                   "never the store for real data)")
    p.set_defaults(func=run)
    return p


def _load(paths: list[Path], url: str | None) -> object:
    try:
        from store.demo_loader import load_demo_sessions
    except ImportError as exc:
        raise StoreUnavailable(
            f"the store is not available yet ({exc}); the demo files were written, load them later "
            "with 'tidemark demo --load'"
        ) from exc
    return load_demo_sessions(paths, url=url)


def run(args: argparse.Namespace) -> int:
    from analysis.simulation import generate_demo

    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise TidemarkError(f"'{out}' is a file, not a folder — give a folder with --out")
    try:
        paths = generate_demo(out)
    except OSError as exc:
        raise TidemarkError(f"cannot write the demo sessions to '{out}': {exc.strerror or exc}") from exc
    print(f"Wrote {len(paths)} simulated demo sessions (fictional people of a fictional lab):")
    for path in paths:
        print(f"  {path}")
    if args.load:
        result = _load(paths, args.store)
        where = args.store or "the demo store ~/.tidemark/demo.sqlite"
        if isinstance(result, (list, tuple)):
            ids = ", ".join(str(x) for x in result)
            print(f"Loaded {len(result)} sessions into {where} (test ids {ids}).")
        else:
            print(f"Loaded the sessions into {where}.")
    return 0
