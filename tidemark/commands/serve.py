"""``tidemark serve``: start the dashboard on this computer.

Runs Streamlit on ``dashboard/app.py`` with the store URL passed through the ``TIDEMARK_STORE``
environment variable. Default address ``http://127.0.0.1:8630``. The options given here repeat
``dashboard/.streamlit/config.toml`` (which a plain ``streamlit run dashboard/app.py`` reads too),
so the command behaves the same whatever the working folder.
"""

from __future__ import annotations

import argparse
import os
import signal
import subprocess
import sys
from pathlib import Path
from types import FrameType

from analysis.errors import require

DEFAULT_PORT = 8630
DEFAULT_HOST = "127.0.0.1"
STORE_ENV = "TIDEMARK_STORE"
PUBLIC_URL_ENV = "TIDEMARK_PUBLIC_URL"
#: Seconds the dashboard gets to stop after SIGTERM before it is killed.
STOP_GRACE_S = 10.0


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
    p.add_argument(
        "--public-url",
        default=None,
        metavar="URL",
        help=f"address coaches reach the dashboard at, e.g. https://tests.lab.example (sets ${PUBLIC_URL_ENV}; "
        "share links start with it)",
    )
    p.set_defaults(func=run)
    return p


def streamlit_command(*, port: int, host: str) -> list[str]:
    """The command line that starts Streamlit on the dashboard."""
    from analysis.io._decode import MAX_UPLOAD_MB  # the importer's limit, the same number in the browser

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
        str(MAX_UPLOAD_MB),
        "--client.toolbarMode",
        "viewer",
    ]


class _Stop(Exception):
    """A stop signal (SIGTERM, SIGHUP) arrived while the dashboard was running."""


def _raise_stop(signum: int, _frame: FrameType | None) -> None:
    raise _Stop(signum)


def stop_child(proc: subprocess.Popen, *, grace_s: float = STOP_GRACE_S) -> int:
    """Ask the dashboard process to stop (SIGTERM), kill it after ``grace_s``; its exit code."""
    if proc.poll() is None:
        proc.terminate()
        try:
            return proc.wait(timeout=grace_s)
        except subprocess.TimeoutExpired:
            proc.kill()
    return proc.wait()


def run(args: argparse.Namespace) -> int:
    cmd = streamlit_command(port=args.port, host=args.host)
    env = dict(os.environ)
    if args.store:
        env[STORE_ENV] = args.store
    if getattr(args, "public_url", None):
        from store.lab import normalise_public_url

        env[PUBLIC_URL_ENV] = normalise_public_url(args.public_url)
    print(f"Tidemark dashboard: http://{args.host}:{args.port}  (Ctrl+C to stop)", flush=True)
    # The dashboard runs as a child process: a stop signal to this command stops it too, so a
    # service manager's SIGTERM never leaves a server holding the port.
    previous = {sig: signal.signal(sig, _raise_stop) for sig in (signal.SIGTERM, signal.SIGHUP)}
    proc: subprocess.Popen | None = None
    try:
        proc = subprocess.Popen(cmd, env=env)
        return proc.wait()
    except (KeyboardInterrupt, _Stop):
        return 0
    finally:
        if proc is not None:
            stop_child(proc)
        for sig, handler in previous.items():
            signal.signal(sig, handler)
