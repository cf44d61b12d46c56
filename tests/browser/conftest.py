"""Real-browser fixtures: a dashboard server on a free localhost port and the system Chromium.

Shared by every browser test (Dashboard-core and Dashboard-pages):

- ``browser_store_url`` — a temporary SQLite store for the whole browser session, loaded with
  two demo sessions and marked as a demo store when the store offers that (demo mode signs in
  the built-in demo reviewer).
- ``app_server`` — starts ``python -m streamlit run dashboard/app.py`` on a free port with
  ``TIDEMARK_STORE`` pointing at that store; yields its base URL; stops it at the end.
- ``browser`` / ``page`` — Playwright with the SYSTEM Chromium (never downloaded); when Chromium
  is missing the test is skipped, or fails when ``TIDEMARK_REQUIRE_BROWSER`` is set (CI).
- ``screenshot(page, name)`` — full-page PNG into ``test-artifacts/screenshots/``.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest

from tests.support import ARTIFACTS, ROOT, skip_or_fail

CHROMIUM_ENV = "TIDEMARK_CHROMIUM"
REQUIRE_ENV = "TIDEMARK_REQUIRE_BROWSER"
SCREENSHOTS = ARTIFACTS / "screenshots"
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]
#: Seconds to wait for the server to answer its health check (the machine is slow).
SERVER_START_TIMEOUT_S = 90


def pytest_collection_modifyitems(items: list[pytest.Item]) -> None:
    here = Path(__file__).parent
    for item in items:
        if Path(str(item.fspath)).is_relative_to(here):
            item.add_marker(pytest.mark.browser)


def chromium_path() -> str | None:
    """The system Chromium to drive, or ``None`` when there is none."""
    path = os.environ.get(CHROMIUM_ENV, "/usr/bin/chromium")
    if Path(path).is_file() and os.access(path, os.X_OK):
        return path
    return shutil.which("chromium") or shutil.which("chromium-browser")


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def wait_for_health(base_url: str, *, timeout_s: float, proc: subprocess.Popen | None = None) -> None:
    """Poll Streamlit's health endpoint until it answers ``ok``."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc is not None and proc.poll() is not None:
            raise RuntimeError(f"dashboard server exited early with code {proc.returncode}")
        try:
            with urllib.request.urlopen(f"{base_url}/_stcore/health", timeout=2) as r:
                if r.read().strip() == b"ok":
                    return
        except OSError:
            pass
        time.sleep(0.3)
    raise RuntimeError(f"dashboard server did not answer within {timeout_s} s")


def start_server(store_url: str, *, port: int | None = None, log_path: Path | None = None) -> tuple[subprocess.Popen, str]:
    """Start the dashboard on a free localhost port; returns ``(process, base_url)``."""
    port = port or free_port()
    env = dict(os.environ, TIDEMARK_STORE=store_url, PYTHONUNBUFFERED="1")
    log = open(log_path, "wb") if log_path else subprocess.DEVNULL  # noqa: SIM115 - closed with the process
    proc = subprocess.Popen(
        [
            sys.executable, "-m", "streamlit", "run", str(ROOT / "dashboard" / "app.py"),
            "--server.headless", "true", "--server.port", str(port), "--server.address", "127.0.0.1",
            "--browser.gatherUsageStats", "false", "--server.fileWatcherType", "none",
        ],
        cwd=ROOT, env=env, stdout=log, stderr=subprocess.STDOUT,
    )
    return proc, f"http://127.0.0.1:{port}"


def answering_server(store_url: str, *, log_path: Path) -> tuple[subprocess.Popen, str]:
    """:func:`start_server`, then wait until it answers; a server that does not fails the test with its log."""
    proc, base = start_server(store_url, log_path=log_path)
    try:
        wait_for_health(base, timeout_s=SERVER_START_TIMEOUT_S, proc=proc)
    except RuntimeError as exc:
        stop_server(proc)
        pytest.fail(f"{exc}; server log:\n{log_path.read_text(errors='replace')[-3000:]}")
    return proc, base


def stop_server(proc: subprocess.Popen) -> None:
    proc.terminate()
    try:
        proc.wait(timeout=15)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait(timeout=5)


def demo_files(n: int = 2) -> list[Path]:
    """The first ``n`` committed demo session files (sorted by name)."""
    files = sorted((ROOT / "demo_sessions").glob("*.session.csv"))
    return files[:n]


def make_demo_store(url: str, files: list[Path]) -> list[int]:
    """Load ``files`` into a new store at ``url`` as a demo store; returns the test ids."""
    from store.demo_loader import load_demo_sessions

    return list(load_demo_sessions(files, url=url))


@pytest.fixture(scope="session")
def browser_store_url(tmp_path_factory: pytest.TempPathFactory) -> str:
    files = demo_files(2)
    if not files:
        pytest.skip("no demo sessions in demo_sessions/ yet (run `tidemark demo`)")
    path = tmp_path_factory.mktemp("browser-store") / "tidemark.sqlite"
    url = f"sqlite:///{path}"
    try:
        make_demo_store(url, files)
    except ImportError as exc:
        pytest.skip(f"the store's demo loader is not available: {exc}")
    return url


@pytest.fixture(scope="session")
def app_server(browser_store_url: str, tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    if chromium_path() is None:
        skip_or_fail("system Chromium not found (set TIDEMARK_CHROMIUM)", require_env=REQUIRE_ENV)
    proc, base = answering_server(browser_store_url, log_path=tmp_path_factory.mktemp("server-log") / "streamlit.log")
    yield base
    stop_server(proc)


@pytest.fixture(scope="session")
def browser() -> Iterator[object]:
    path = chromium_path()
    if path is None:
        skip_or_fail("system Chromium not found (set TIDEMARK_CHROMIUM)", require_env=REQUIRE_ENV)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        skip_or_fail("Playwright for Python is not installed", require_env=REQUIRE_ENV)
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=path, headless=True, args=CHROMIUM_ARGS)
        yield b
        b.close()


@pytest.fixture()
def page(browser) -> Iterator[object]:  # noqa: ANN001 - Playwright Browser
    context = browser.new_context(viewport={"width": 1366, "height": 900}, accept_downloads=True)
    pg = context.new_page()
    pg.set_default_timeout(30_000)
    yield pg
    context.close()


@pytest.fixture(scope="session")
def screenshot() -> Callable[[object, str], Path]:
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)

    def take(pg, name: str) -> Path:  # noqa: ANN001 - Playwright Page
        """Whole page: Streamlit scrolls inside its main block, so the viewport is made as tall
        as that block for the shot (capped) and restored afterwards."""
        path = SCREENSHOTS / f"{name}.png"
        size = pg.viewport_size or {"width": 1366, "height": 900}
        height = pg.evaluate(
            "() => { const m = document.querySelector('[data-testid=\"stMain\"]') ||"
            " document.querySelector('section.main'); return m ? m.scrollHeight : document.body.scrollHeight; }"
        )
        pg.set_viewport_size({"width": size["width"], "height": int(min(max(height, size["height"]), 8000))})
        pg.wait_for_timeout(400)
        pg.screenshot(path=str(path), full_page=True)
        pg.set_viewport_size(size)
        return path

    return take


def wait_for_app(pg, *, timeout_ms: int = 60_000) -> None:  # noqa: ANN001 - Playwright Page
    """Wait until Streamlit has finished running the script (no 'Running...' status)."""
    pg.wait_for_selector("[data-testid='stApp']", timeout=timeout_ms)
    pg.wait_for_function(
        "() => !document.querySelector('[data-testid=\"stStatusWidget\"]')"
        " || !document.querySelector('[data-testid=\"stStatusWidget\"]').innerText.includes('Running')",
        timeout=timeout_ms,
    )
