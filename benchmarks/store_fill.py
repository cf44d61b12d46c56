"""A store holding many tests, quickly: the six demo files imported for real, then their rows
copied (new person codes and hashes, same session text and results) up to the wanted count.

Used by ``bench_store.py`` and ``bench_dashboard.py`` to time lists and page reruns at 1,000
stored tests without running 1,000 analyses.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]


def fill_store(store: Any, user: Any, n_tests: int) -> list[int]:
    """Import the demo files with ``user`` and copy their rows until ``n_tests`` live tests exist."""
    from sqlalchemy import insert, select

    from store.models import AnalysisVersion, PersonRow, TestRow

    files = sorted((ROOT / "demo_sessions").glob("*.session.csv"))
    ids = [store.import_test(p.read_bytes(), file_name=p.name, actor=user).test_id for p in files]
    with store._tx() as db:  # noqa: SLF001 - a benchmark fixture writes rows directly
        tests = [db.get(TestRow, i) for i in ids]
        templates = []
        for t in tests:
            version = db.execute(
                select(AnalysisVersion).where(AnalysisVersion.test_id == t.id, AnalysisVersion.version == 1)
            ).scalar_one()
            templates.append((t, version))
        now = tests[0].imported_at
        while len(ids) < n_tests:
            k = len(ids)
            batch_people, batch = [], []
            for j in range(min(200, n_tests - k)):
                batch_people.append({"code": f"BENCH-{k + j:05d}", "created_at": now})
            people = db.execute(insert(PersonRow).returning(PersonRow.id), batch_people).scalars().all()
            for j, person_id in enumerate(people):
                t, _ = templates[(k + j) % len(templates)]
                batch.append({
                    "person_id": person_id, "test_date": t.test_date, "protocol": t.protocol,
                    "original_file_name": t.original_file_name, "raw_sha256": f"{k + j:064x}",
                    "raw_size_bytes": t.raw_size_bytes, "raw_bytes": t.raw_bytes, "session_text": t.session_text,
                    "mapping_json": t.mapping_json, "import_options_json": t.import_options_json,
                    "flags_json": t.flags_json, "current_version": 1, "imported_at": now,
                })
            new_ids = db.execute(insert(TestRow).returning(TestRow.id), batch).scalars().all()
            versions = []
            for j, test_id in enumerate(new_ids):
                _, v = templates[(k + j) % len(templates)]
                versions.append({
                    "test_id": test_id, "version": 1, "settings_json": v.settings_json, "results_json": v.results_json,
                    "results_error": v.results_error, "vo2peak_ml_min": v.vo2peak_ml_min,
                    "vt1_vo2_ml_min": v.vt1_vo2_ml_min, "ve_vco2_slope": v.ve_vco2_slope, "created_at": now, "reason": "import",
                })
            db.execute(insert(AnalysisVersion), versions)
            ids += list(new_ids)
    return ids
