"""``tidemark audit verify``: check the hash chain of the store's audit trail.

Walks every audit row in the order written and reports the first broken link (a row changed,
removed, inserted or moved outside Tidemark, or rows missing at the end). Exit code 0 when the
chain holds, 3 when it is broken, 2 when the store cannot be read. Prints the last link, which
a lab may note outside the database (a paper log, another system) to anchor the trail.
"""

from __future__ import annotations

import argparse

#: Exit code of ``tidemark audit verify`` when the chain is broken.
EXIT_BROKEN = 3


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    from store.config import STORE_ENV

    p = subparsers.add_parser("audit", description="Check the store's audit trail.")
    actions = p.add_subparsers(dest="audit_action", metavar="ACTION", required=True)
    verify = actions.add_parser("verify", help="check the hash chain over the audit rows; report the first broken link")
    verify.add_argument(
        "--store", default=None, help=f"store URL or SQLite file (default: ${STORE_ENV} or ~/.tidemark/tidemark.sqlite)"
    )
    p.set_defaults(func=run)
    return p


def run(args: argparse.Namespace) -> int:
    from store import open_store
    from store.config import describe_url

    with open_store(args.store) as store:
        report = store.verify_audit_chain()
        where = describe_url(store.url)
    if report.ok:
        print(f"Audit trail of {where}: {report.rows} row(s), every link holds.")
        print(f"Last link: {report.last_hash}")
        return 0
    print(f"Audit trail of {where}: BROKEN after {report.rows - (1 if report.broken_at_id else 0)} good row(s).")
    print(f"First broken link: {report.problem}.")
    print("Restore the store from a backup taken before that row, and find out who had access to the database.")
    return EXIT_BROKEN
