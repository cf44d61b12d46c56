"""The report as PDF: the same HTML printed by the system Chromium (Playwright drives it).

No browser is ever downloaded: Playwright is pointed at the system Chromium
(``TIDEMARK_CHROMIUM``, default ``/usr/bin/chromium``, else ``chromium`` on the PATH). Where there
is none, :func:`chromium_path` returns ``None`` and :class:`PdfUnavailable` explains what to
install; the HTML report works without it.
"""

from __future__ import annotations

import os
import shutil
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

from analysis.errors import TidemarkError

CHROMIUM_ENV = "TIDEMARK_CHROMIUM"
DEFAULT_CHROMIUM = "/usr/bin/chromium"
#: Paper sizes offered (Chromium's names).
PAPER: tuple[str, ...] = ("A4", "Letter")
#: Seconds a PDF may take before the attempt is given up.
TIMEOUT_S = 60.0
_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
         "--disable-sync", "--no-first-run"]


class PdfUnavailable(TidemarkError):
    """The PDF cannot be made on this server (no Chromium, or Playwright missing)."""


def chromium_path() -> str | None:
    """The system Chromium to print with, or ``None`` when this server has none."""
    path = os.environ.get(CHROMIUM_ENV, DEFAULT_CHROMIUM)
    if Path(path).is_file() and os.access(path, os.X_OK):
        return path
    return shutil.which("chromium") or shutil.which("chromium-browser")


def unavailable_reason() -> str | None:
    """Why no PDF can be made here (a sentence for the page), or ``None`` when it can."""
    if chromium_path() is None:
        return ("The PDF is printed by the Chromium browser installed on the server, and this server has none. "
                "Download the HTML report and print it from your browser, or ask your administrator to install "
                "Chromium (Debian/Ubuntu: apt-get install chromium) or to set TIDEMARK_CHROMIUM.")
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return "The PDF needs the Playwright package on the server (pip install playwright); the HTML report works."
    return None


def _print(html: str, paper: str, executable: str) -> bytes:
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=executable, args=_ARGS, headless=True)
        try:
            page = browser.new_page()
            # The report has no outside source; any request would be a fault, so none is let through.
            page.route("**/*", lambda route: route.abort() if not route.request.url.startswith("data:") else route.continue_())
            page.set_content(html, wait_until="load")
            return page.pdf(format=paper, print_background=True, prefer_css_page_size=False,
                            margin={"top": "10mm", "bottom": "10mm", "left": "11mm", "right": "11mm"})
        finally:
            browser.close()


def html_to_pdf(html: str, *, paper: str = "A4") -> bytes:
    """Print the report HTML to PDF bytes with the system Chromium.

    Runs in a worker thread (Playwright's synchronous API must not run inside an event loop).

    Raises
    ------
    PdfUnavailable
        No Chromium or no Playwright on this server, or the browser failed.
    """
    if paper not in PAPER:
        raise PdfUnavailable(f"Paper '{paper}' is not offered; choose one of {', '.join(PAPER)}.")
    reason = unavailable_reason()
    if reason:
        raise PdfUnavailable(reason)
    executable = chromium_path()
    assert executable is not None
    with ThreadPoolExecutor(max_workers=1) as pool:
        try:
            return pool.submit(_print, html, paper, executable).result(timeout=TIMEOUT_S)
        except PdfUnavailable:
            raise
        except Exception as exc:
            raise PdfUnavailable(f"The PDF could not be printed ({type(exc).__name__}: {exc}); the HTML report works.") from exc
