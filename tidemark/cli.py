"""``tidemark`` console command: one sub-command per module in :mod:`tidemark.commands`.

Exit codes: 0 ok, 2 bad input (message on stderr), 1 internal error.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import sys
from collections.abc import Sequence

from analysis.errors import TidemarkError

#: Sub-command name -> module in tidemark.commands. Each module defines
#: ``add_parser(subparsers)`` (which sets ``func``) and a ``run(args) -> int``.
COMMANDS: dict[str, str] = {
    "import": "import_file",
    "demo": "demo",
    "analyze": "analyze",
    "oxygen": "oxygen",
    "serve": "serve",
    "users": "users",
}

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_BAD_INPUT = 2

log = logging.getLogger("tidemark")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="tidemark",
        description="Review breath-by-breath cardiopulmonary exercise tests.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, module_name in COMMANDS.items():
        try:
            module = importlib.import_module(f"tidemark.commands.{module_name}")
        except ModuleNotFoundError as exc:  # a command still being built is simply absent
            if exc.name != f"tidemark.commands.{module_name}":
                raise
            continue
        module.add_parser(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
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
    except Exception:  # noqa: BLE001 - last line of defence, logged with the traceback
        log.exception("internal error in 'tidemark %s'", args.command)
        print(
            f"tidemark {args.command}: internal error (details above). Please report it with the input file.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL
