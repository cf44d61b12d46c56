"""Dashboard speed: server start to first Review chart, and a rerun after moving VT1.

Rows (each against a baseline measured in the same run):

1. ``review rerun, VT1 moved`` — server-side time of the Review page's rerun after a reviewer
   types a new VT1 time on a >= 2,000-breath test (AppTest: the form run that queues the save,
   then the rerun that analyses the new settings and renders). The store's own save (it re-reads
   the session and recomputes results for the audit trail) runs in a background thread and is
   not part of this time. Baseline: one uncached ``analyze_session`` of the same session.
2. ``review rerun, nothing changed`` — the same page rerun with unchanged settings (cache hits).
   Baseline: an AppTest run of an empty page (Streamlit's own per-run cost). Also measured on a
   demo test of a store holding 1,000 tests (``benchmarks/store_fill.py``): every rerun lists
   the tests for the test chooser.
3. ``first Review chart`` — Playwright with the system Chromium (skipped when there is none):
   a fresh browser session opens ``/review`` and waits until the overview grid has drawn its
   first trace. Baseline: the same wait on ``benchmarks/plain_grid_page.py``, a minimal
   Streamlit page drawing the same panels with the same series and points (plotly's
   ``make_subplots``, no store, analysis, hover text or thresholds), measured alternately in the
   same run. Two figures per page: the first load on a just-started server (the page's modules
   are imported by that load) and the median of the loads after it. Done on a demo file
   (542 breaths) and on the 2,000-breath simulated test; the notes give each figure's payload
   (plotly JSON sent to the browser).
4. ``whole Review page drawn`` — the same loads, until the last section of the page (versions and
   sign-off) is on the screen: a browser session's first Review run draws the overview, the
   notes and the caution, and the sections under the overview follow in the run the browser
   starts once the overview is drawn (:func:`dashboard.views.review.sections_wait_for_first_draw`).
   Baseline: the minimal page's first chart, as in row 3.

Targets from the issue: a rerun after moving a threshold < 0.3 s server-side; the first
Review chart <= 1.3x the minimal page with the same charts.
"""

from __future__ import annotations

import dataclasses
import os
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from benchmarks.table import BenchRow, best_of  # noqa: E402

TARGET_BREATHS = 2000


def long_session() -> Any:
    """A simulated cycle test with at least 2,000 breaths (fictional trained cyclist)."""
    from analysis.simulation import CYCLE_RAMP_30, TRAINED_CYCLIST, simulate_session

    for ramp in (15.0, 12.0, 10.0, 8.0):
        protocol = dataclasses.replace(
            CYCLE_RAMP_30, rest_s=1200.0, warmup_s=1200.0, recovery_s=1200.0, ramp_w_per_min=ramp, max_exercise_s=3600.0
        )
        session = simulate_session(TRAINED_CYCLIST, protocol, seed=11)
        if len(session.breaths) >= TARGET_BREATHS:
            return session
    raise RuntimeError(f"could not simulate a {TARGET_BREATHS}-breath test")


def _review_script() -> None:
    from dashboard.views.review import render

    render()


def _empty_script() -> None:
    import streamlit as st

    st.write("")


def _rerun_rows(tmp: Path) -> list[BenchRow]:
    from streamlit.testing.v1 import AppTest

    from analysis.io.session_file import session_to_text
    from analysis.pipeline import analyze_session
    from dashboard.data import wait_for_saves
    from dashboard.views.review import PAGE_DRAWN
    from store import open_store
    from store.demo_loader import load_demo_sessions

    session = long_session()
    n = len(session.breaths)
    path = tmp / "long.session.csv"
    path.write_text(session_to_text(session), encoding="utf-8")
    url = f"sqlite:///{tmp / 'bench.sqlite'}"
    (test_id,) = load_demo_sessions([path], url=url)
    os.environ["TIDEMARK_STORE"] = url
    store = open_store(url)
    user = store.demo_user()
    stored = store.load_session(test_id)

    at = AppTest.from_function(_review_script, default_timeout=120)
    at.session_state["tm_user"] = user
    at.session_state[PAGE_DRAWN] = True  # every run draws the whole page (no browser reports the overview drawn)
    at.session_state["tm_test_id"] = test_id
    at.run()
    if at.exception:
        raise RuntimeError(f"review page failed: {at.exception}")
    vt1_t = float(store.get_results(test_id)["vt1"]["time_s"])
    moves: list[float] = []
    for i in range(5):
        at.text_input(key=f"thr_t_{test_id}").input(f"{vt1_t + 20.0 * (i + 1):g}")
        button = at.button[[b.label for b in at.button].index("Set VT1")]
        t0 = time.perf_counter()
        button.click().run()
        moves.append(time.perf_counter() - t0)
        if at.exception:
            raise RuntimeError(f"review page failed: {at.exception}")
        wait_for_saves()  # background store save finished before the next move (not timed)
    t0 = time.perf_counter()
    at.run()
    still = [time.perf_counter() - t0]
    for _ in range(4):
        t0 = time.perf_counter()
        at.run()
        still.append(time.perf_counter() - t0)

    base_analysis = best_of(lambda: analyze_session(stored), repeats=3)
    empty = AppTest.from_function(_empty_script, default_timeout=60)
    empty.run()
    base_empty = best_of(lambda: empty.run(), repeats=5)
    store.close()
    return [
        BenchRow(
            f"review rerun, VT1 moved ({n} breaths)", min(moves), "analyze_session uncached", base_analysis,
            target="< 0.3 s",
            extra=f"median {sorted(moves)[len(moves) // 2] * 1000:.0f} ms; re-analysis + render; store save in background",
        ),
        BenchRow(
            f"review rerun, nothing changed ({n} breaths)", min(still), "AppTest empty page", base_empty,
            target="< 0.3 s", extra="cache hits",
        ),
    ]


def _rerun_at_1000_rows(tmp: Path, *, n_tests: int = 1000) -> list[BenchRow]:
    """A Review rerun with nothing changed, on a demo test of a store holding ``n_tests`` tests
    (every rerun lists the tests for the test chooser and reads the current version)."""
    from streamlit.testing.v1 import AppTest

    from benchmarks.store_fill import fill_store
    from dashboard.views.review import PAGE_DRAWN
    from store import LOCAL_OPERATOR, open_store

    url = f"sqlite:///{tmp / 'thousand.sqlite'}"
    store = open_store(url)
    user = store.create_user("bench@example.org", role="admin", actor=LOCAL_OPERATOR, auth_source="oidc")
    ids = fill_store(store, user, n_tests)
    os.environ["TIDEMARK_STORE"] = url
    at = AppTest.from_function(_review_script, default_timeout=120)
    at.session_state["tm_user"] = user
    at.session_state[PAGE_DRAWN] = True  # every run draws the whole page (no browser reports the overview drawn)
    at.session_state["tm_test_id"] = ids[0]
    at.run()
    at.run()
    if at.exception:
        raise RuntimeError(f"review page failed: {at.exception}")
    runs = []
    for _ in range(7):
        t0 = time.perf_counter()
        at.run()
        runs.append(time.perf_counter() - t0)
    empty = AppTest.from_function(_empty_script, default_timeout=60)
    empty.run()
    base_empty = best_of(lambda: empty.run(), repeats=5)
    store.close()
    return [BenchRow(f"review rerun, nothing changed, {len(ids):,} stored tests", min(runs), "AppTest empty page", base_empty,
                     target="< 0.3 s", extra=f"median {sorted(runs)[len(runs) // 2] * 1000:.0f} ms of 7; demo test (542 breaths)")]


def review_figure(store: Any, test_id: int) -> Any:
    """The overview grid the Review page draws first for ``test_id`` (default settings, whole test)."""
    from analysis.pipeline import analyze_session
    from dashboard.charts.overview_grid import overview_figure

    session = store.load_session(test_id)
    results = analyze_session(session)
    return overview_figure(
        results.averaged, thresholds={"vt1": results.vt1, "vt2": results.vt2}, fit=results.thresholds.vslope,
        breaths=session.breaths, excluded_rows=[e.source_row for e in results.excluded_breaths],
    )


def plain_grid_data(fig: Any) -> dict[str, Any]:
    """The series of ``fig`` (an overview grid) for :mod:`benchmarks.plain_grid_page`: each data
    trace (3 points or more) with its panel's row and column, its type, mode and points."""
    import numpy as np

    from dashboard.charts.overview_grid import axis_ids, grid_columns, grid_height_px

    keys = list(fig.layout.meta["panels"])
    cols = grid_columns(len(keys))
    where = {axis_ids(i)[0]: divmod(i, cols) for i in range(len(keys))}
    traces = []
    for tr in fig.data:
        x, y = tr.x, tr.y
        if x is None or y is None or len(x) < 3 or tr.xaxis not in where:
            continue
        row, col = where[tr.xaxis]

        def plain(values: Any) -> list[float | None]:
            return [None if not np.isfinite(v) else float(v) for v in np.asarray(values, dtype=float)]

        traces.append({"row": row + 1, "col": col + 1, "type": tr.type, "mode": tr.mode or "lines",
                       "x": plain(x), "y": plain(y)})
    return {"rows": -(-len(keys) // cols), "cols": cols, "height": grid_height_px(len(keys)), "traces": traces}


def _plain_server(data_path: Path, port: int, *, figure: bool = False) -> tuple[Any, str]:
    """:mod:`benchmarks.plain_grid_page` serving ``data_path`` (a plain-grid spec, or with
    ``figure`` a plotly JSON figure drawn as it is)."""
    import subprocess

    env = dict(os.environ, **{"TIDEMARK_BENCH_FIGURE" if figure else "TIDEMARK_BENCH_PLAIN_GRID": str(data_path)})
    proc = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", str(ROOT / "benchmarks" / "plain_grid_page.py"),
         "--server.headless", "true", "--server.port", str(port), "--server.address", "127.0.0.1",
         "--browser.gatherUsageStats", "false", "--server.fileWatcherType", "none"],
        cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
    )
    return proc, f"http://127.0.0.1:{port}"


#: The heading of the Review page's last section: on the screen = the whole page is drawn.
LAST_SECTION = "Versions, audit trail and sign-off"


def _first_chart_times(browser: Any, url: str, *, loads: int, last_heading: str | None = None) -> list[tuple[float, float]]:
    """Seconds from ``goto`` until the page's first plotly trace is drawn, and until
    ``last_heading`` is on the page (the same as the first when ``None``), one fresh browser
    session (context) per load."""
    times = []
    for _ in range(loads):
        context = browser.new_context(viewport={"width": 1366, "height": 900})
        page = context.new_page()
        t0 = time.perf_counter()
        page.goto(url)
        page.locator(".js-plotly-plot .scatterlayer .trace").first.wait_for(timeout=180_000)
        first = time.perf_counter() - t0
        if last_heading is not None:
            page.get_by_role("heading", name=last_heading).wait_for(timeout=180_000)
        times.append((first, time.perf_counter() - t0))
        context.close()
    return times


def _browser_rows(tmp: Path, *, loads: int = 5, long_test: bool = True) -> list[BenchRow]:
    import json
    import statistics

    import plotly.io as pio

    from benchmarks.plain_grid_page import plain_figure
    from tests.browser.conftest import CHROMIUM_ARGS, chromium_path, free_port, start_server, stop_server, wait_for_health

    chromium = chromium_path()
    if chromium is None:
        return []
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        return []
    from analysis.io.session_file import session_to_text
    from store import open_store
    from store.demo_loader import load_demo_sessions

    cases = [("demo file", ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv")]
    if long_test:
        long_path = tmp / "long2000.session.csv"
        long_path.write_text(session_to_text(long_session()), encoding="utf-8")
        cases.append((f"{TARGET_BREATHS}-breath test", long_path))
    rows: list[BenchRow] = []
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
        for label, file in cases:
            url = f"sqlite:///{tmp / f'browser-{file.stem}.sqlite'}"
            (test_id,) = load_demo_sessions([file], url=url)
            store = open_store(url)
            fig = review_figure(store, test_id)
            n_breaths = len(store.load_session(test_id).breaths)
            store.close()
            plain = plain_grid_data(fig)
            data_path = tmp / f"plain-{file.stem}.json"
            data_path.write_text(json.dumps(plain), encoding="utf-8")
            plain_fig = plain_figure(plain)
            ours_kib = len(pio.to_json(fig, validate=False)) / 1024
            plain_kib = len(pio.to_json(plain_fig)) / 1024

            figure_path = tmp / f"figure-{file.stem}.json"
            figure_path.write_text(pio.to_json(fig, validate=False), encoding="utf-8")
            # every server up, loads alternated (plain, grid alone, Review, plain, ...) so all see the same load
            servers = {"review": start_server(url, port=free_port()), "plain": _plain_server(data_path, free_port()),
                       "grid": _plain_server(figure_path, free_port(), figure=True)}
            targets = {"plain": servers["plain"][1], "grid": servers["grid"][1], "review": f"{servers['review'][1]}/review"}
            times: dict[str, list[float]] = {name: [] for name in targets}
            whole: list[float] = []
            try:
                for proc, base in servers.values():
                    wait_for_health(base, timeout_s=120, proc=proc)
                for _ in range(loads):
                    for name, target in targets.items():
                        ((first, last),) = _first_chart_times(browser, target, loads=1,
                                                              last_heading=LAST_SECTION if name == "review" else None)
                        times[name].append(first)
                        if name == "review":
                            whole.append(last)
            finally:
                for proc, _ in servers.values():
                    stop_server(proc)
            ours, base_t = times["review"], times["plain"]
            note = (f"{n_breaths} breaths; payload {ours_kib:.0f} KiB, {len(fig.data)} traces "
                    f"(plain page {plain_kib:.0f} KiB, {len(plain['traces'])} traces); Playwright, system Chromium")
            rows.append(BenchRow(f"first Review chart, {label}, just-started server", ours[0],
                                 "minimal page, same charts", base_t[0], target="<= 1.3x", extra=note))
            rows.append(BenchRow(f"first Review chart, {label}, fresh browser session (median of {loads - 1})",
                                 statistics.median(ours[1:]), "minimal page, same charts", statistics.median(base_t[1:]),
                                 target="<= 1.3x", extra="each load in a new browser context"))
            rows.append(BenchRow(f"whole Review page drawn, {label}, fresh browser session (median of {loads - 1})",
                                 statistics.median(whole[1:]), "minimal page, same charts", statistics.median(base_t[1:]),
                                 extra=f"until the {LAST_SECTION!r} heading is on the page; just-started server "
                                       f"{whole[0]:.1f} s"))
            rows.append(BenchRow(f"  the Review grid alone on a minimal page, {label} (median of {loads - 1})",
                                 statistics.median(times["grid"][1:]), "minimal page, same charts", statistics.median(base_t[1:]),
                                 extra="diagnostic: the grid's own decoration (shapes, hover text, linked axes) vs the rest of the page"))
        browser.close()
    return rows


def measure() -> list[BenchRow]:
    old = os.environ.get("TIDEMARK_STORE")
    try:
        with tempfile.TemporaryDirectory() as d:
            tmp = Path(d)
            return _rerun_rows(tmp) + _rerun_at_1000_rows(tmp) + _browser_rows(tmp)
    finally:
        if old is None:
            os.environ.pop("TIDEMARK_STORE", None)
        else:
            os.environ["TIDEMARK_STORE"] = old


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
