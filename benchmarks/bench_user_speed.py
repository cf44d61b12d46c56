"""The rows of the "speed a user feels" issue, before and after, measured in the same run.

Each row runs the same measuring code against two trees — the one before the speed work
(:data:`benchmarks.trees.BEFORE_COMMIT`, exported with ``git archive``) and this one — each in a
fresh interpreter, so the ratio after/before is measured on the same machine in the same
minutes. Whole commands are timed as processes (CPU from the kernel's accounting, peak resident
memory of the process); library calls as the best CPU time of a few calls inside one process.

``TIDEMARK_BENCH_BATCH_FILES`` sets the folder size of the batch row (default 20,000; each
file is a hard link to one of 20 simulated sessions, so the folder costs no disk space).
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

from benchmarks.table import BenchRow
from benchmarks.trees import ROOT, before_tree, median_cost, run_in_tree

PY = sys.executable
IMPORTS_ONLY = "import numpy, pandas, scipy.special, scipy.ndimage, scipy.optimize"
DEMO = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"
HELP = "import sys; from tidemark.cli import main; sys.argv = ['tidemark', '--help']; main()"
ANALYZE = f"import sys, io; from tidemark.cli import main; sys.stdout = io.StringIO(); main(['analyze', {str(DEMO)!r}])"
LAUNCHER = (
    "import inspect; from tidemark import cli; "
    "cli.build_parser(*(['serve'] if inspect.signature(cli.build_parser).parameters else [])).parse_args(['serve'])"
)

# the two helper modules pasted into one script: their ``from __future__`` lines would not be first
_HELPERS = "\n".join(
    (ROOT / "benchmarks" / name).read_text(encoding="utf-8").replace("from __future__ import annotations\n", "")
    for name in ("sessions.py", "store_fill.py")
).replace("ROOT = Path(__file__).resolve().parents[1]", f"ROOT = Path({str(ROOT)!r})")

_CPU = """
import time, io, json
def best_cpu(fn, repeats):
    best = float("inf")
    for _ in range(repeats):
        c0 = time.process_time(); fn(); best = min(best, time.process_time() - c0)
    return best
"""

ANALYSIS_CODE = _HELPERS + _CPU + """
import pandas as pd
from analysis.io import read_session
from analysis.io.session_file import session_to_text
from analysis.pipeline import analyze_session
out = {}
for n in (2000, 20000, 100000):
    session = session_of(n)
    text = session_to_text(session).encode()
    if n < 30000:  # a session file holds 24 h: the 100,000-breath session (80 h) is analysed as built
        session = read_session(text, file_name="bench.session.csv")
    reps = 7 if n == 2000 else 3
    csv_s = best_cpu(lambda: pd.read_csv(io.BytesIO(text), comment="#"), reps)
    reader_s = best_cpu(lambda: read_session(text, file_name="bench.session.csv"), reps) if n < 30000 else float("nan")
    analysis_s = best_cpu(lambda: analyze_session(session), reps)  # 3 at 20,000 and 100,000 breaths: one call varies by a third
    points = len(analyze_session(session).averaged)
    out[n] = {"csv": csv_s, "reader": reader_s, "analysis": analysis_s, "points": points}
print(json.dumps(out))
"""

STORE_CODE = _HELPERS + _CPU + """
import os, sqlite3, tempfile
from pathlib import Path
from store import LOCAL_OPERATOR, open_store
out = {}
with tempfile.TemporaryDirectory() as tmp:
    store = open_store(str(Path(tmp) / "big.sqlite"))
    user = store.create_user("bench@example.org", role="admin", actor=LOCAL_OPERATOR, auth_source="oidc")
    fill_store(store, user, 1000)
    store.list_tests()
    out["list_tests"] = min(best_cpu(store.list_tests, 1) for _ in range(15))
    wall = []
    for _ in range(15):
        t0 = time.perf_counter(); store.list_tests(); wall.append(time.perf_counter() - t0)
    out["list_tests_wall"] = min(wall)
    store.close()
    path = Path(tmp) / "demo.sqlite"
    s = open_store(str(path)); u = s.create_user("b@example.org", role="admin", actor=LOCAL_OPERATOR, auth_source="oidc"); s.close()
    con = sqlite3.connect(path); con.execute("VACUUM"); con.close(); empty = os.path.getsize(path)
    s = open_store(str(path)); u = s.list_users()[0]
    files = sorted((ROOT / "demo_sessions").glob("*.session.csv"))
    for f in files:
        s.import_test(f.read_bytes(), file_name=f.name, actor=u)
    s.close()
    con = sqlite3.connect(path); con.execute("VACUUM"); con.close()
    out["kib_per_test"] = (os.path.getsize(path) - empty) / len(files) / 1024
    out["file_kib"] = sum(f.stat().st_size for f in files) / len(files) / 1024
print(json.dumps(out))
"""


def _versus_before(name: str, after: float, before: float | None, target: str, extra: str = "") -> BenchRow:
    """A row of the tree after the change, with the same figure of the tree before it when that was measured."""
    return BenchRow(name, after, "before" if before is not None else "", before, target, extra)


def _process_rows(trees: dict[str, Path]) -> list[BenchRow]:
    cost = {label: {name: median_cost([PY, "-c", code], tree=tree) for name, code in
                    (("help", HELP), ("analyze", ANALYZE), ("launcher", LAUNCHER), ("imports", IMPORTS_ONLY))}
            for label, tree in trees.items()}
    after = cost["after"]
    before = cost.get("before")
    rows = []
    for key, name, target in (
        ("help", "tidemark --help (process)", "<= 0.3 s wall, <= 60 MiB"),
        ("analyze", f"tidemark analyze FILE ({DEMO.name[:8]}, process)", "<= 1.3x imports + analysis"),
        ("launcher", "tidemark serve launcher (parse, process)", "memory down"),
    ):
        a, b = after[key], (before or {}).get(key)
        extra = f"CPU {a.cpu_s * 1000:.0f} ms, peak {a.peak_mib:.0f} MiB"
        if b is not None:
            extra += f"; before: CPU {b.cpu_s * 1000:.0f} ms, peak {b.peak_mib:.0f} MiB"
        if key == "analyze":
            extra += f"; CPU / `python -c \"{IMPORTS_ONLY}\"` = {a.cpu_s / after['imports'].cpu_s:.2f}x"
        rows.append(_versus_before(name, a.wall_s, b.wall_s if b else None, target, extra))
    return rows


def _analysis_rows(results: dict[str, dict]) -> list[BenchRow]:
    rows = []
    after, before = results["after"], results.get("before")
    for n in ("2000", "20000", "100000"):
        a, b = after[n], (before or {}).get(n)
        per_point = a["analysis"] / max(a["points"], 1) * 1e6
        extra = (f"CPU {a['analysis'] * 1000:.1f} ms = {a['analysis'] / a['csv']:.1f}x pd.read_csv ({a['csv'] * 1000:.1f} ms); "
                 f"{a['points']} averaged points, {per_point:.0f} us/point, {a['analysis'] / int(n) * 1e6:.1f} us/breath")
        if b:
            extra += f"; before {b['analysis'] * 1000:.1f} ms = {b['analysis'] / b['csv']:.1f}x read_csv, {b['analysis'] / max(b['points'], 1) * 1e6:.0f} us/point"
        rows.append(_versus_before(f"analyze_session, {int(n):,} breaths (CPU)", a["analysis"],
                             b["analysis"] if b else None, "<= 4x read_csv (goal 3x) at 2,000; flat per point", extra))
    for n in ("2000", "20000"):
        a, b = after[n], (before or {}).get(n)
        extra = f"{a['reader'] / a['csv']:.1f}x pd.read_csv ({a['csv'] * 1000:.1f} ms)"
        if b:
            extra += f"; before {b['reader'] / b['csv']:.1f}x"
        rows.append(_versus_before(f"read_session strict reader, {int(n):,} breaths (CPU)", a["reader"],
                             b["reader"] if b else None, "<= 3x read_csv", extra))
    return rows


def _store_rows(results: dict[str, dict]) -> list[BenchRow]:
    a, b = results["after"], results.get("before")
    rows = [
        _versus_before("list_tests, 1,000 tests (CPU)", a["list_tests"], b["list_tests"] if b else None,
                 "<= 20 ms", f"wall {a['list_tests_wall'] * 1000:.1f} ms" + (f"; before wall {b['list_tests_wall'] * 1000:.1f} ms" if b else "")),
    ]
    extra = f"{a['kib_per_test']:.1f} KiB per demo test for a {a['file_kib']:.0f} KiB file (SQLite, after VACUUM)"
    if b:
        extra += f"; before {b['kib_per_test']:.1f} KiB"
    # stored as "seconds" = KiB / 1000 so the table's ms column reads KiB
    rows.append(_versus_before("storage per demo test (KiB in the ms column)", a["kib_per_test"] / 1000,
                         b["kib_per_test"] / 1000 if b else None, "<= 60 KiB", extra))
    return rows


def _batch_folder(n_files: int, tmp: Path) -> Path:
    """``n_files`` session files: 20 simulated sessions, hard-linked under numbered names."""
    from analysis.io.session_file import write_session
    from analysis.simulation import DEMO_TESTS, simulate_session

    folder = tmp / "batch"
    folder.mkdir()
    sources = []
    for k in range(min(20, n_files)):
        demo = DEMO_TESTS[k % len(DEMO_TESTS)]
        sources.append(write_session(simulate_session(demo.profile, demo.protocol, seed=100 + k), tmp / f"src{k}.session.csv"))
    for i in range(n_files):
        os.link(sources[i % len(sources)], folder / f"t{i:06d}.session.csv")
    return folder


def _batch_run(tree: Path, folder: Path, out: Path) -> dict[str, float]:
    """Run the batch command; seconds until the first row is on disk, total wall, rows written."""
    import subprocess

    code = f"import sys; from tidemark.cli import main; sys.exit(main(['analyze', {str(folder)!r}, '--out', {str(out)!r}, '--workers', '2', '--no-progress']))"
    env = dict(os.environ, PYTHONPATH=str(tree))
    t0 = time.perf_counter()
    proc = subprocess.Popen([PY, "-c", code], cwd=tree, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    first = None
    while proc.poll() is None:
        if first is None and out.exists() and out.read_bytes().count(b"\n") >= 2:
            first = time.perf_counter() - t0
        time.sleep(0.2)
    total = time.perf_counter() - t0
    return {"first_row_s": first if first is not None else total, "wall_s": total,
            "rows": out.read_bytes().count(b"\n") - 1 if out.exists() else 0}


def _batch_rows(trees: dict[str, Path]) -> list[BenchRow]:
    import resource

    n_files = int(os.environ.get("TIDEMARK_BENCH_BATCH_FILES", "20000"))
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        folder = _batch_folder(n_files, Path(tmp))
        res = {}
        for label, tree in trees.items():
            before_children = resource.getrusage(resource.RUSAGE_CHILDREN)
            res[label] = _batch_run(tree, folder, Path(tmp) / f"{label}.csv")
            after_children = resource.getrusage(resource.RUSAGE_CHILDREN)
            res[label]["cpu_s"] = (after_children.ru_utime + after_children.ru_stime) - (before_children.ru_utime + before_children.ru_stime)
    a, b = res["after"], res.get("before")
    extra = (f"{a['rows']} rows, {a['rows'] / a['wall_s']:.0f} tests/s, first row on disk after {a['first_row_s']:.1f} s, "
             f"CPU {a['cpu_s']:.0f} s")
    if b:
        extra += f"; before: first row after {b['first_row_s']:.1f} s (CSV written at the end), {b['rows'] / b['wall_s']:.0f} tests/s"
    rows.append(_versus_before(f"batch, {n_files:,} files, 2 workers (wall)", a["wall_s"],
                         b["wall_s"] if b else None, "rows streamed; progress every few s", extra))
    rows.append(_versus_before(f"batch, {n_files:,} files: first row on disk", a["first_row_s"],
                         b["first_row_s"] if b else None, "a few s", "an interrupted run keeps every row written"))
    return rows


def measure() -> list[BenchRow]:
    trees: dict[str, Path] = {"after": ROOT}
    before = before_tree()
    if before is not None:
        trees["before"] = before
    rows = _process_rows(trees)
    rows += _analysis_rows({label: run_in_tree(ANALYSIS_CODE, tree=tree) for label, tree in trees.items()})
    rows += _store_rows({label: run_in_tree(STORE_CODE, tree=tree) for label, tree in trees.items()})
    rows += _batch_rows(trees)
    if before is None:
        rows.append(BenchRow("(no 'before' tree: git archive failed; after figures only)", 0.0))
    return rows


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
