"""``tidemark serve``: start the dashboard on this computer.

Runs Streamlit on ``dashboard/app.py`` with the store URL passed through the ``TIDEMARK_STORE``
environment variable. Default address ``http://127.0.0.1:8630``.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
from pathlib import Path

from analysis.errors import require

DEFAULT_PORT = 8630
DEFAULT_HOST = "127.0.0.1"
STORE_ENV = "TIDEMARK_STORE"


def app_path() -> Path:
    """Path of the dashboard's entry script."""
    import dashboard

    return Path(dashboard.__file__).resolve().parent / "app.py"


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "serve",
        help="start the dashboard in the browser",
        description=(
            "Start the Tidemark dashboard. Open the printed address in a browser. "
            f"Default http://{DEFAULT_HOST}:{DEFAULT_PORT}. Stop with Ctrl+C."
        ),
    )
    p.add_argument("--port", type=int, default=DEFAULT_PORT, help=f"TCP port (default {DEFAULT_PORT})")
    p.add_argument(
        "--host",
        default=DEFAULT_HOST,
        help=f"address to listen on (default {DEFAULT_HOST}: this computer only; "
        "use 0.0.0.0 only behind a proxy with TLS)",
    )
    p.add_argument("--store", default=None, help=f"store URL (default: ${STORE_ENV} or the store's default file)")
    p.set_defaults(func=run)
    return p


def streamlit_command(*, port: int, host: str) -> list[str]:
    """The command line that starts Streamlit on the dashboard."""
    require(1 <= port <= 65535, "--port", "a TCP port between 1 and 65535", port)
    require(bool(host.strip()), "--host", "an address such as 127.0.0.1", host)
    return [
        sys.executable,
        "-m",
        "tidemark.commands.serve",
        "run",
        str(app_path()),
        "--server.port",
        str(port),
        "--server.address",
        host,
        "--server.headless",
        "true",
        "--browser.gatherUsageStats",
        "false",
        "--server.maxUploadSize",
        "50",
    ]


def run(args: argparse.Namespace) -> int:
    cmd = streamlit_command(port=args.port, host=args.host)
    env = dict(os.environ)
    if args.store:
        env[STORE_ENV] = args.store
    print(f"Tidemark dashboard: http://{args.host}:{args.port}  (Ctrl+C to stop)", flush=True)
    try:
        return subprocess.call(cmd, env=env)
    except KeyboardInterrupt:
        return 0


def _boot_streamlit(argv: list[str]) -> int:
    """Run Streamlit's own command line with the ``pages/`` folder convention switched off.

    ``dashboard/pages/`` holds the page modules that ``dashboard/app.py`` puts into its
    navigation; Streamlit would otherwise also treat that folder as file-based pages until the
    first ``st.navigation`` call, so a bookmarked ``/oxygen`` on a fresh server would run the
    module as a bare script. Telling Streamlit up front that the app builds its own navigation
    avoids that for every page.
    """
    try:
        from streamlit.runtime.pages_manager import PagesManager

        PagesManager.uses_pages_directory = False
    except (ImportError, AttributeError):  # a Streamlit without this switch: the page modules hand over themselves
        pass
    from streamlit.web.cli import main as streamlit_main

    sys.argv = ["streamlit", *argv]
    return int(streamlit_main() or 0)


if __name__ == "__main__":
    raise SystemExit(_boot_streamlit(sys.argv[1:]))
