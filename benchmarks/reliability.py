"""Reliability figures of the store and the importer: tried and lost, printed as one table.

Usage: ``python benchmarks/reliability.py [--quick] [--postgres URL]``. Not part of
``run_all.py`` (it measures losses, not speed). The table goes into ``docs/store.md``.

* **kills during import** - a child process imports a file into a SQLite store and is killed
  with SIGKILL after a random delay; then the store must open, pass SQLite's integrity check,
  hold every test whole (version 1 and its import audit row) and its audit chain must verify.
* **concurrent editors** - two editors save settings of one test from the same version at
  once, round after round: exactly one save per round may succeed (the other gets
  ``EditConflict``) and every successful save must be in the history.
* **writers x seconds** - several threads write (share links, audit rows) for some seconds:
  lost = a write that raised a database error (a lock timeout) or is missing afterwards.
* **fuzz inputs** - random bytes and mutated demo files through ``import_bytes``: lost = any
  exception other than ``ImportRejected`` (a crash), or an accepted file the store then fails.
"""

from __future__ import annotations

import argparse
import os
import random
import signal
import subprocess
import sys
import tempfile
import textwrap
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

DEMO = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"
PASSWORD = "reliability-pass-2026"

_IMPORT_CHILD = textwrap.dedent(
    """
    import sys
    from store import open_store
    store = open_store(sys.argv[1])
    user = [u for u in store.list_users() if u.username == "rhea"][0]
    data = open(sys.argv[2], "rb").read()
    print("ready", flush=True)
    for i in range(int(sys.argv[3]), int(sys.argv[3]) + 50):
        store.import_test(data + (b"# run: %d\\n" % i), file_name="k.csv", actor=user)
    """
)


def _fresh_store(path: Path):  # noqa: ANN202
    from store import LOCAL_OPERATOR, open_store
    from store.passwords import ScryptParams

    store = open_store(str(path))
    store.password_params = ScryptParams(n=2**10, r=8, p=1)
    admin = store.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password=PASSWORD)
    store.create_user("rhea", role="reviewer", actor=admin, password=PASSWORD)
    store.create_user("remy", role="reviewer", actor=admin, password=PASSWORD)
    return store


def _store_whole(path: Path) -> bool:
    import sqlite3

    from sqlalchemy import func, select

    from store import open_store
    from store.models import AnalysisVersion, AuditEvent, TestRow

    con = sqlite3.connect(path)
    ok = con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    con.close()
    with open_store(str(path)) as store, store._read() as db:  # noqa: SLF001 - a check of the store itself
        tests = db.execute(select(TestRow.id)).scalars().all()
        for test_id in tests:
            v1 = db.execute(select(func.count()).where(AnalysisVersion.test_id == test_id,
                                                      AnalysisVersion.version == 1)).scalar_one()
            audit = db.execute(select(func.count()).where(AuditEvent.test_id == test_id,
                                                          AuditEvent.action == "import")).scalar_one()
            ok = ok and v1 == 1 and audit == 1
    with open_store(str(path)) as store:
        ok = ok and store.verify_audit_chain().ok
    return ok


def kills_during_import(n: int, folder: Path) -> tuple[int, int]:
    path = folder / "kills.sqlite"
    _fresh_store(path).close()
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    lost = 0
    rng = random.Random(11)
    for k in range(n):
        child = subprocess.Popen([sys.executable, "-c", _IMPORT_CHILD, str(path), str(DEMO), str(1000 * k)], env=env,
                                 stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        assert child.stdout is not None
        child.stdout.readline()  # the store is open: imports (about 0.5-2 s each) follow one another
        time.sleep(rng.uniform(0.0, 8.0))
        child.send_signal(signal.SIGKILL)
        child.wait()
        lost += 0 if _store_whole(path) else 1
    from store import open_store

    with open_store(str(path)) as store:
        KILL_FACTS["imports_done"] = len(store.list_tests())
    return n, lost


#: Filled by :func:`kills_during_import`: how many imports completed between the kills.
KILL_FACTS: dict[str, int] = {}


def concurrent_editors(rounds: int, url: str) -> tuple[int, int]:
    from store import EditConflict, open_store

    store = open_store(url)
    users = {u.username: u for u in store.list_users()}
    res = store.import_test(DEMO.read_bytes(), file_name="edit.csv", actor=users["rhea"])
    lost = 0
    for r in range(rounds):
        settings, v = store.get_settings(res.test_id)
        gate = threading.Barrier(2)
        outcome: dict[str, object] = {}

        def edit(name: str, size: int) -> None:
            new = {**settings, "averaging": {**settings["averaging"], "size": size}} if "averaging" in settings \
                else {**settings, "peak_window_s": size}
            gate.wait()
            try:
                outcome[name] = store.save_settings(res.test_id, new, actor=users[name], reason=f"round {r}",
                                                    expected_version=v)
            except EditConflict:
                outcome[name] = "conflict"
            except Exception as exc:  # noqa: BLE001 - counted as lost
                outcome[name] = exc

        threads = [threading.Thread(target=edit, args=("rhea", 20 + 2 * r)), threading.Thread(target=edit, args=("remy", 21 + 2 * r))]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        wins = [o for o in outcomes_of(outcome) if isinstance(o, int)]
        errors = [o for o in outcomes_of(outcome) if isinstance(o, Exception)]
        versions = {x["version"] for x in store.list_versions(res.test_id)}
        if len(wins) != 1 or errors or wins[0] not in versions:
            lost += 1
    store.close()
    return rounds, lost


def outcomes_of(outcome: dict[str, object]) -> list[object]:
    return list(outcome.values())


def writers(n_writers: int, seconds: float, url: str) -> tuple[int, int]:
    from store import open_store

    store = open_store(url)
    users = {u.username: u for u in store.list_users()}
    res = store.import_test(DEMO.read_bytes() + b"# writers: 1\n", file_name="w.csv", actor=users["rhea"])
    done = [0] * n_writers
    failed = [0] * n_writers
    stop = time.monotonic() + seconds

    def write(i: int) -> None:
        while time.monotonic() < stop:
            try:
                store.create_share(actor=users["rhea"], test_id=res.test_id, expires_in_days=7, note=f"w{i}")
                done[i] += 1
            except Exception:  # noqa: BLE001 - counted as lost
                failed[i] += 1

    threads = [threading.Thread(target=write, args=(i,)) for i in range(n_writers)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    shares = len([s for s in store.list_shares() if getattr(s, "test_id", res.test_id) == res.test_id])
    chain_ok = store.verify_audit_chain().ok
    store.close()
    tried = sum(done) + sum(failed)
    lost = sum(failed) + max(0, sum(done) - shares) + (0 if chain_ok else 1)
    return tried, lost


def fuzz(n: int) -> tuple[int, int]:
    from analysis.errors import ImportRejected
    from analysis.io import import_bytes

    rng = random.Random(7)
    demo = DEMO.read_bytes()
    lost = 0
    for i in range(n):
        if i % 2:
            data = bytes(rng.getrandbits(8) for _ in range(rng.randint(1, 3000)))
        else:
            buf = bytearray(demo[: rng.randint(200, len(demo))])
            for _ in range(rng.randint(1, 20)):
                k = rng.randrange(len(buf))
                buf[k] = rng.choice(b"0123456789.,;:-+eE\n\t\"#xyz\x00\xff")
            data = bytes(buf)
        try:
            import_bytes(data, file_name=f"fuzz{i}.csv")
        except ImportRejected:
            pass
        except Exception:  # noqa: BLE001 - a crash
            lost += 1
    return n, lost


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer rounds (a smoke run)")
    parser.add_argument("--postgres", default=None,
                        help="also run editors and writers on this PostgreSQL URL ('auto': a temporary server "
                             "started as the test suite does)")
    args = parser.parse_args()
    server = None
    if args.postgres == "auto":
        from tests.store.pg_server import start_server

        server = start_server()
        server.admin_execute("CREATE DATABASE tidemark_reliability")
        args.postgres = server.url("tidemark_reliability")
        from store import LOCAL_OPERATOR, open_store

        with open_store(args.postgres) as pg:
            admin = pg.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password=PASSWORD)
            pg.create_user("rhea", role="reviewer", actor=admin, password=PASSWORD)
            pg.create_user("remy", role="reviewer", actor=admin, password=PASSWORD)
    q = args.quick
    rows: list[tuple[str, str, int, int]] = []
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        rows.append(("kills (SIGKILL) during import", "SQLite", *kills_during_import(3 if q else 20, folder)))
        sqlite_url = str(folder / "edit.sqlite")
        _fresh_store(Path(sqlite_url)).close()
        rows.append(("concurrent editors (rounds)", "SQLite", *concurrent_editors(3 if q else 10, sqlite_url)))
        rows.append((f"writers x seconds ({4} x {3 if q else 30} s)", "SQLite", *writers(4, 3 if q else 30, sqlite_url)))
        if args.postgres:
            rows.append(("concurrent editors (rounds)", "PostgreSQL", *concurrent_editors(3 if q else 10, args.postgres)))
            rows.append((f"writers x seconds ({4} x {3 if q else 30} s)", "PostgreSQL",
                         *writers(4, 3 if q else 30, args.postgres)))
    rows.append(("fuzz inputs (random + mutated)", "importer", *fuzz(200 if q else 4000)))
    if server is not None:
        server.stop()
    rows[0] = (f"{rows[0][0]} ({KILL_FACTS.get('imports_done', 0)} imports completed between the kills)", *rows[0][1:])
    print("| what | back end | tried | lost |")
    print("|---|---|---:|---:|")
    for what, backend, tried, lost in rows:
        print(f"| {what} | {backend} | {tried:,} | {lost} |")


if __name__ == "__main__":
    main()
