"""``tidemark serve``: start the dashboard on this computer.

Runs Streamlit on ``dashboard/app.py`` with the store URL passed through the ``TIDEMARK_STORE``
environment variable. Default address ``http://127.0.0.1:8630``. The options given here repeat
``dashboard/.streamlit/config.toml`` (which a plain ``streamlit run dashboard/app.py`` reads too),
so the command behaves the same whatever the working folder.
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
        "streamlit",
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
        "--client.toolbarMode",
        "viewer",
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
