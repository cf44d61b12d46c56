"""Speed of the store (SQLite file in a temporary folder).

Baselines in the same run: ``import_bytes`` + ``analyze_session`` for an import,
``read_session`` + ``analyze_session`` for a settings save (so the ratio is the store's own overhead on top of the
library's work), ``read_session`` of the stored text for ``load_session``. Targets are for a
laptop: lists and link checks stay far below a page render (~100 ms).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from benchmarks.table import BenchRow, best_of

ROOT = Path(__file__).resolve().parents[1]


def measure() -> list[BenchRow]:
    from analysis.io import import_bytes, read_session, session_to_text
    from analysis.pipeline import analyze_session
    from store import LOCAL_OPERATOR, open_store
    from store.passwords import hash_password

    files = sorted((ROOT / "demo_sessions").glob("*.session.csv"))
    rows: list[BenchRow] = []
    with tempfile.TemporaryDirectory() as tmp:
        store = open_store(str(Path(tmp) / "bench.sqlite"))
        try:
            user = store.create_user("bench@saltmarsh.example", role="admin", actor=LOCAL_OPERATOR, auth_source="oidc")
            first = files[0]
            data = first.read_bytes()
            session = read_session(first)
            library_s = best_of(lambda: analyze_session(import_bytes(data, file_name=first.name).session), repeats=3)
            analysis_s = best_of(lambda: analyze_session(session), repeats=3)
            text = session_to_text(import_bytes(data, file_name=first.name).session).encode()
            reader_s = best_of(lambda: read_session(text, file_name=first.name), repeats=3)
            counter = iter(range(10**6))

            def import_once() -> None:  # distinct bytes each time, so nothing is a duplicate
                store.import_test(data + b"\n" * next(counter), file_name=first.name, actor=user)

            import_s = best_of(import_once, repeats=3)
            dup_s = best_of(lambda: store.import_test(data, file_name=first.name, actor=user), repeats=5)
            for path in files[1:]:
                store.import_test(path.read_bytes(), file_name=path.name, actor=user)
            n_tests = len(store.list_tests())
            list_s = best_of(store.list_tests, repeats=20)
            results_s = best_of(lambda: store.get_results(1), repeats=20)
            store.load_session(1)  # first read parses; later ones come from the store's session cache
            load_s = best_of(lambda: store.load_session(1), repeats=5)
            token, _ = store.create_share(actor=user, test_id=1, expires_in_days=30)
            resolve_s = best_of(lambda: store.resolve_share(token, log_view=False), repeats=20)
            bad_s = best_of(lambda: store.resolve_share("x" * 43), repeats=20)
            settings, version = store.get_settings(1)
            settings["peak_window_s"] = 20.0
            save_s = best_of(lambda: _save(store, settings, user), repeats=1)
            long_rows = _long_save_rows(store, user, Path(tmp))
        finally:
            store.close()
    hash_s = best_of(lambda: hash_password("bench password 123"), repeats=2)
    rows += [
        BenchRow("import_test (demo file, real analysis)", import_s, "import_bytes + analyze_session", library_s,
                 "< 1.5x library", f"{len(data) // 1024} KiB file"),
        BenchRow("import_test, duplicate bytes", dup_s, "", None, "< 20 ms", "hash lookup only"),
        BenchRow(f"list_tests ({n_tests} tests)", list_s, "", None, "< 20 ms"),
        BenchRow("get_results", results_s, "", None, "< 20 ms"),
        BenchRow("load_session (again)", load_s, "read_session of the stored text", reader_s, "< 1.2x reader",
                 "parsed session cached per test and text hash"),
        BenchRow("save_settings (new version + analysis)", save_s, "read_session + analyze_session",
                 reader_s + analysis_s, "< 1.5x library"),
        BenchRow("resolve_share, valid token", resolve_s, "", None, "< 20 ms", "hash + indexed lookup"),
        BenchRow("resolve_share, malformed token", bad_s, "", None, "< 20 ms", "same path, no row"),
        *long_rows,
        BenchRow("scrypt hash, N=2^17 r=8 p=1", hash_s, "", None, "0.1-1 s", "OWASP minimum; per sign-in"),
    ]
    return rows


def _long_save_rows(store, user, tmp: Path) -> list[BenchRow]:  # noqa: ANN001
    """``save_settings`` on a simulated test of >= 2,000 breaths (a threshold move, as on the
    Review page); baseline: ``analyze_session`` of the stored session with the moved VT1."""
    from analysis.io import session_to_text
    from analysis.pipeline import analyze_session
    from analysis.settings import AnalysisSettings
    from benchmarks.bench_dashboard import long_session

    session = long_session()
    path = tmp / "long.session.csv"
    path.write_text(session_to_text(session), encoding="utf-8")
    test_id = store.import_test(path.read_bytes(), file_name=path.name, actor=user).test_id
    vt1 = store.get_results(test_id).get("vt1") or {}
    start = float(vt1.get("time_s") or session.breaths["t_s"].median())
    settings, _ = store.get_settings(test_id)
    settings["vt1_override"] = {"t_s": start, "vo2_ml_min": None, "reason": "benchmark"}
    moved = AnalysisSettings.from_dict(settings)
    stored = store.load_session(test_id)
    analysis_s = best_of(lambda: analyze_session(stored, moved), repeats=3)
    moves = iter(range(1, 10**6))

    def move() -> None:
        settings, version = store.get_settings(test_id)
        settings["vt1_override"] = {"t_s": start + 5.0 * next(moves), "vo2_ml_min": None, "reason": "benchmark"}
        store.save_settings(test_id, settings, actor=user, reason="benchmark", expected_version=version)

    save_s = best_of(move, repeats=3)
    return [BenchRow(f"save_settings, VT1 moved ({len(session.breaths)} breaths)", save_s, "analyze_session, same settings",
                     analysis_s, "< 1.5x library", "session parsed once (cache)")]


def _save(store, settings, user) -> None:  # noqa: ANN001
    _, version = store.get_settings(1)
    settings = dict(settings, peak_window_s=settings["peak_window_s"] + 1.0)
    store.save_settings(1, settings, actor=user, reason="benchmark", expected_version=version)


if __name__ == "__main__":
    from benchmarks.table import format_table

    print(format_table(measure()))
