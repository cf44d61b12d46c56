"""``tidemark users``: manage staff accounts of the store from the command line.

Sub-commands: ``add NAME --role ROLE`` (password from an interactive prompt, or one line on
standard input with ``--password-stdin``; ``--oidc`` for an account that signs in through the
identity provider), ``list``, ``set-role NAME ROLE``, ``disable NAME``, ``enable NAME``,
``set-password NAME``, ``unlock NAME`` (after repeated failed sign-ins). There is never a default password. Whoever runs this command acts as
the local operator (they already hold the store); every change is written to the audit trail.
"""

from __future__ import annotations

import argparse
import getpass
import sys

from store import LOCAL_OPERATOR, ROLE_ORDER, Store, StoreError, open_store
from store.config import STORE_ENV, describe_url


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "users",
        description="Manage staff accounts. Roles: viewer (reads), reviewer (imports, edits, signs off, "
        "shares), admin (also manages accounts and deletes).",
    )
    store_help = f"store URL or SQLite file (default: ${STORE_ENV} or ~/.tidemark/tidemark.sqlite)"
    p.add_argument("--store", default=None, help=store_help)
    # --store is accepted before or after the action ("users --store X list" or "users list --store X").
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--store", default=argparse.SUPPRESS, help=store_help)
    actions = p.add_subparsers(dest="users_action", metavar="ACTION", required=True)

    add = actions.add_parser("add", help="create an account", parents=[common])
    add.add_argument("name", help="user name (letters, digits, . _ @ -); for --oidc the e-mail the provider reports")
    add.add_argument("--role", required=True, choices=ROLE_ORDER)
    how = add.add_mutually_exclusive_group()
    how.add_argument("--password-stdin", action="store_true", help="read the password as one line from standard input")
    how.add_argument("--oidc", action="store_true", help="the account signs in through the identity provider (no password)")

    actions.add_parser("list", help="list accounts", parents=[common])

    role = actions.add_parser("set-role", help="change an account's role", parents=[common])
    role.add_argument("name")
    role.add_argument("role", choices=ROLE_ORDER)

    disable = actions.add_parser("disable", help="disable an account (it stays in the history)", parents=[common])
    disable.add_argument("name")
    enable = actions.add_parser("enable", help="enable a disabled account", parents=[common])
    enable.add_argument("name")

    unlock = actions.add_parser("unlock", help="lift a sign-in lock after repeated failures", parents=[common])
    unlock.add_argument("name")

    pw = actions.add_parser("set-password", help="set a local account's password", parents=[common])
    pw.add_argument("name")
    pw.add_argument("--password-stdin", action="store_true", help="read the password as one line from standard input")

    p.set_defaults(func=run)
    return p


def read_password(*, from_stdin: bool) -> str:
    """One line from standard input, or an interactive prompt asked twice."""
    if from_stdin:
        line = sys.stdin.readline()
        password = line[:-1] if line.endswith("\n") else line
        if password.endswith("\r"):
            password = password[:-1]
        if not password:
            raise StoreError("No password was given on standard input.")
        return password
    if not sys.stdin.isatty():
        raise StoreError("No terminal to ask for the password; pipe it in and add --password-stdin.")
    first = getpass.getpass("New password: ")
    if getpass.getpass("Repeat the password: ") != first:
        raise StoreError("The two passwords differ; nothing was changed.")
    return first


def refuse_demo_store(store: Store) -> None:
    """Accounts for real work are never added to a demo store (fictional data, auto sign-in)."""
    if store.is_demo_store():
        raise StoreError(
            f"{describe_url(store.url)} is a demo store: it holds fictional data and signs everyone in as the "
            "demo reviewer, so no accounts can be added to it. For real data use a store of its own, e.g. "
            "export TIDEMARK_STORE=/srv/lab/tidemark.sqlite (or leave it unset for ~/.tidemark/tidemark.sqlite) "
            "and run this command again."
        )


def run(args: argparse.Namespace) -> int:
    store = open_store(args.store)
    try:
        action = args.users_action
        if action == "add":
            refuse_demo_store(store)
            password = None if args.oidc else read_password(from_stdin=args.password_stdin)
            user = store.create_user(
                args.name, role=args.role, actor=LOCAL_OPERATOR, password=password,
                auth_source="oidc" if args.oidc else "local",
            )
            print(f"Created {user.role} account '{user.username}' in {describe_url(store.url)}.")
        elif action == "list":
            users = store.list_users()
            if not users:
                print(f"No accounts yet in {describe_url(store.url)}. Create the first one with: "
                      "tidemark users add NAME --role admin")
            for u in users:
                state = "active" if u.is_active else "disabled"
                extra = " (demo)" if u.is_demo else ""
                print(f"{u.username}\t{u.role}\t{u.auth_source}\t{state}{extra}")
        elif action == "set-role":
            user = store.set_role(args.name, args.role, actor=LOCAL_OPERATOR)
            print(f"'{user.username}' is now {user.role}.")
        elif action == "disable":
            user = store.disable_user(args.name, actor=LOCAL_OPERATOR)
            print(f"'{user.username}' is disabled.")
        elif action == "enable":
            user = store.enable_user(args.name, actor=LOCAL_OPERATOR)
            print(f"'{user.username}' is enabled.")
        elif action == "unlock":
            store.unlock_login(args.name, actor=LOCAL_OPERATOR)
            print(f"Sign-in for '{args.name.strip().lower()}' is unlocked.")
        elif action == "set-password":
            store.set_password(args.name, read_password(from_stdin=args.password_stdin), actor=LOCAL_OPERATOR)
            print(f"The password of '{args.name.strip().lower()}' was changed.")
        return 0
    finally:
        store.close()
