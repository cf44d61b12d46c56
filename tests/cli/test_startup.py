"""Command start-up pays only for what the command uses: sub-command modules are imported when
their command runs, and heavy packages only where they are needed (the imported modules are
checked, never the time)."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from tests.support import ROOT
from tidemark import cli

HEAVY = ("numpy", "pandas", "scipy", "sqlalchemy", "alembic", "streamlit", "plotly", "tqdm", "openpyxl")


def _imported_after(code: str) -> set[str]:
    """Top-level names of the modules imported by ``code`` in a fresh interpreter, plus the
    ``scipy`` sub-packages (``scipy.stats`` by name)."""
    probe = (
        "import sys, json, io, contextlib\n"
        f"{code}\n"
        "names = {m.split('.')[0] for m in sys.modules} | {'.'.join(m.split('.')[:2]) for m in sys.modules if m.startswith('scipy.')}\n"
        "sys.__stdout__.write(json.dumps(sorted(names)))\n"
    )
    out = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, capture_output=True, text=True, check=True)
    return set(json.loads(out.stdout.strip().splitlines()[-1]))


def test_help_imports_no_command_module_and_no_heavy_package():
    loaded = _imported_after(
        "from tidemark import cli\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    try:\n        cli.main(['--help'])\n    except SystemExit:\n        pass"
    )
    assert not loaded & set(HEAVY)
    assert not {m for m in loaded if m.startswith("store")}


@pytest.mark.parametrize("command", ["serve", "demo"])
def test_light_commands_parse_without_heavy_packages(command):
    # the serve launcher stays small while the dashboard runs in its own process
    loaded = _imported_after(f"from tidemark import cli\ncli.build_parser({command!r}).parse_args([{command!r}])")
    assert not loaded & set(HEAVY)


def test_analyze_one_file_imports_neither_the_store_nor_scipy_stats():
    demo = sorted((ROOT / "demo_sessions").glob("*.session.csv"))[0]
    loaded = _imported_after(
        "from tidemark import cli\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    assert cli.main(['analyze', {str(demo)!r}]) == 0"
    )
    assert {"numpy", "pandas", "scipy.ndimage", "scipy.optimize"} <= loaded  # what the analysis uses
    assert not loaded & {"sqlalchemy", "alembic", "streamlit", "plotly", "tqdm", "openpyxl", "scipy.stats", "store"}


@pytest.mark.parametrize("name", sorted(cli.COMMANDS))
def test_every_registered_command_builds_its_own_parser(name):
    parser = cli.build_parser(name)
    action = next(a for a in parser._actions if a.dest == "command")
    full = action.choices[name]
    assert any(a.dest != "help" for a in full._actions)  # the module's own options, not the stub
    assert full.get_default("func").__module__ == f"tidemark.commands.{cli.COMMANDS[name].module}"
    assert cli.COMMANDS[name].help  # one line for `tidemark --help`


def test_help_lists_every_command_with_its_line(capsys):
    with pytest.raises(SystemExit) as done:
        cli.main(["--help"])
    assert done.value.code == 0
    out = capsys.readouterr().out
    for name, spec in cli.COMMANDS.items():
        assert name in out and spec.help.split()[0] in out


def test_chosen_command_is_the_first_word():
    assert cli.chosen_command(["analyze", "x.csv", "--json"]) == "analyze"
    assert cli.chosen_command(["--help"]) is None
    assert cli.chosen_command(["-h", "users", "list"]) == "users"
