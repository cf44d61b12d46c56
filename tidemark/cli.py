"""``tidemark`` console command: one sub-command per module in :mod:`tidemark.commands`.

Exit codes: 0 ok, 2 bad input (message on stderr), 1 internal error.

Start-up stays fast because a sub-command's module is imported only when that sub-command is
run. ``tidemark --help`` lists every command from :data:`COMMANDS` (name, module, one line of
help) without importing any of them; ``tidemark analyze ...`` imports ``tidemark.commands.analyze``
and nothing of ``store``, ``users`` or ``oxygen``. To add a sub-command:

1. write ``tidemark/commands/<module>.py`` with ``add_parser(subparsers)`` (which calls
   ``p.set_defaults(func=run)``) and ``run(args) -> int``;
2. import what only some of its paths need (the store, streamlit, tqdm, scipy) inside the
   function that needs it, so the command's other paths do not pay for it;
3. add one line to :data:`COMMANDS` (its one-line help lives there, not in ``add_parser``).

``tests/cli/test_startup.py`` checks that ``tidemark --help`` imports none of the heavy packages.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import sys
from collections.abc import Sequence
from typing import NamedTuple

from analysis.errors import TidemarkError


class Command(NamedTuple):
    """How a sub-command is registered: its module in ``tidemark.commands`` and one line of help."""

    module: str
    help: str


#: Sub-command name -> its module and its line in ``tidemark --help``. The module is imported
#: only when the command is run (see the module docstring).
COMMANDS: dict[str, Command] = {
    "import": Command("import_file", "import a breath-by-breath export (CSV, TSV, semicolon text or .xlsx) as a session file"),
    "demo": Command("demo", "write the simulated demo tests (fictional people) and optionally load them"),
    "analyze": Command("analyze", "results of one test (summary or --json), or of every test in a folder (--out CSV)"),
    "oxygen": Command("oxygen", "saturation, O2 content and P50 on a dissociation curve"),
    "serve": Command("serve", "start the dashboard in the browser"),
    "users": Command("users", "manage staff accounts (add, list, set-role, disable)"),
    "audit": Command("audit", "check the store's audit trail (verify: the first broken link of its hash chain)"),
}

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_BAD_INPUT = 2

log = logging.getLogger("tidemark")


def chosen_command(argv: Sequence[str]) -> str | None:
    """The sub-command named on the command line (the first word not starting with ``-``)."""
    return next((a for a in argv if not a.startswith("-")), None)


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The ``tidemark`` parser; only ``command``'s module is imported and gets its full options.

    Every other command is listed with its line of help (enough for ``tidemark --help``).
    """
    parser = argparse.ArgumentParser(
        prog="tidemark",
        description="Review breath-by-breath cardiopulmonary exercise tests.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, spec in COMMANDS.items():
        if name == command:
            module = importlib.import_module(f"tidemark.commands.{spec.module}")
            module.add_parser(sub)
        else:
            sub.add_parser(name, help=spec.help)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser(chosen_command(argv))
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help(sys.stderr)
        return EXIT_BAD_INPUT
    try:
        return int(args.func(args) or EXIT_OK)
    except TidemarkError as exc:
        print(f"tidemark {args.command}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return EXIT_INTERNAL
    except Exception:  # last line of defence, logged with the traceback
        log.exception("internal error in 'tidemark %s'", args.command)
        print(
            f"tidemark {args.command}: internal error (details above). Please report it with the input file.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL
