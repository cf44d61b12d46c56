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


#: Paper sizes (mm, width x height; ISO 216 A4 and ANSI Letter) and the printed margins (mm).
PAPER_MM: dict[str, tuple[float, float]] = {"A4": (210.0, 297.0), "Letter": (215.9, 279.4)}
MARGIN_MM: dict[str, float] = {"top": 10.0, "bottom": 10.0, "left": 11.0, "right": 11.0}
#: CSS pixels per millimetre (CSS 2.1: 96 px to the inch).
PX_PER_MM = 96.0 / 25.4
#: Smallest zoom the fit may give a page block; a block that needs less breaks onto another page
#: (its text would be too small to read).
MIN_ZOOM = 0.85
#: Share of the printable height a block may fill (rounding of the print layout).
FIT_SAFETY = 0.985
#: Shrinks each page block of the report (``.page``: the report page, the appendix page) that is
#: taller than the printable height, by CSS zoom, down to ``MIN_ZOOM``; returns the zooms used.
FIT_JS = """([heightPx, minZoom]) => [...document.querySelectorAll('.page')].map(el => {
  const h = el.getBoundingClientRect().height;
  const z = Math.max(minZoom, Math.min(1, heightPx / h));
  if (z < 1) { el.style.zoom = String(z); }
  return z;
})"""


def printable_px(paper: str) -> tuple[float, float]:
    """Width and height (CSS px) inside the printed margins of ``paper``."""
    width_mm, height_mm = PAPER_MM[paper]
    return ((width_mm - MARGIN_MM["left"] - MARGIN_MM["right"]) * PX_PER_MM,
            (height_mm - MARGIN_MM["top"] - MARGIN_MM["bottom"]) * PX_PER_MM)


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
            width_px, height_px = printable_px(paper)
            page.set_viewport_size({"width": round(width_px), "height": round(height_px)})
            page.emulate_media(media="print")
            page.set_content(html, wait_until="load")
            page.evaluate(FIT_JS, [height_px * FIT_SAFETY, MIN_ZOOM])
            m = {k: f"{v:g}mm" for k, v in MARGIN_MM.items()}
            return page.pdf(format=paper, print_background=True, prefer_css_page_size=False,
                            margin={"top": m["top"], "bottom": m["bottom"], "left": m["left"], "right": m["right"]})
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
