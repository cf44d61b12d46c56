"""Results JSON is stored zlib-compressed (migration 0008) and read back unchanged, both ways."""

from __future__ import annotations

import json
import zlib

import pytest
from alembic import command
from sqlalchemy import text
from sqlalchemy.exc import DBAPIError

from store.compressed_text import CompressedText, compress_text, decompress_text
from store.config import make_engine, resolve_url
from store.migrate import alembic_config, current_revision, head_revision
from tests.store.helpers import open_test_store
from tests.store.standin import csv_bytes


class TestCompressedText:
    @pytest.mark.parametrize("value", ["", "{}", '{"note": "VO₂ 2 100 mL/min · ÆØÅ"}', "x" * 100_000])
    def test_round_trip_is_identical(self, value):
        assert decompress_text(compress_text(value)) == value
        # a plain RFC 1950 stream: any zlib reads it
        assert zlib.decompress(compress_text(value)).decode("utf-8") == value

    def test_repetitive_json_shrinks(self):
        doc = json.dumps({"breaths": [{"t_s": i * 2.5, "vo2_ml_min": 1500.0 + i} for i in range(500)]})
        assert len(compress_text(doc)) < len(doc) / 3

    def test_null_stays_null(self):
        kind = CompressedText()
        assert kind.process_bind_param(None, None) is None  # type: ignore[arg-type]
        assert kind.process_result_value(None, None) is None  # type: ignore[arg-type]


def _migrate(url: str, revision: str, *, down: bool = False) -> None:
    engine = make_engine(resolve_url(url))
    try:
        with engine.begin() as conn:
            cfg = alembic_config()
            cfg.attributes["connection"] = conn
            (command.downgrade if down else command.upgrade)(cfg, revision)
    finally:
        engine.dispose()


def _column(url: str, name: str) -> list[tuple[int, object]]:
    engine = make_engine(resolve_url(url))
    try:
        with engine.connect() as conn:
            rows = conn.execute(text(f"SELECT version, {name} FROM analysis_versions ORDER BY version")).all()
    finally:
        engine.dispose()
    return [(int(v), value) for v, value in rows]


def _update_refused(url: str) -> bool:
    engine = make_engine(resolve_url(url))
    try:
        with engine.begin() as conn:
            conn.execute(text("UPDATE analysis_versions SET reason = 'rewritten'"))
    except DBAPIError as exc:
        return "append-only" in str(exc)
    finally:
        engine.dispose()
    return False


def test_existing_results_are_converted_both_ways(store_url, clock):
    store = open_test_store(store_url, clock)
    rhea = {u.username: u for u in store.list_users()}["rhea"]
    test_id = store.import_test(csv_bytes(3050.0, subject="SEL-808"), file_name="z.csv", actor=rhea).test_id
    settings, v = store.get_settings(test_id)
    store.save_settings(test_id, {**settings, "smoothing": {"window_s": 20}}, actor=rhea, reason="smoother",
                        expected_version=v)
    results = {v: store.get_results(test_id, version=v) for v in (1, 2)}
    store.close()
    assert results[1] and results[2]

    # at the head: the column holds compressed bytes of the JSON text
    stored = _column(store_url, "results_zlib")
    assert [v for v, _ in stored] == [1, 2]
    for v, data in stored:
        assert json.loads(zlib.decompress(bytes(data)).decode("utf-8")) == results[v]  # type: ignore[arg-type]

    try:
        _migrate(store_url, "0007", down=True)
        plain = _column(store_url, "results_json")
        assert [(v, json.loads(str(t))) for v, t in plain] == [(1, results[1]), (2, results[2])]
        assert _update_refused(store_url)  # the triggers came back after the downgrade
    finally:
        _migrate(store_url, "head")

    engine = make_engine(resolve_url(store_url))
    assert current_revision(engine) == head_revision()
    engine.dispose()
    assert _update_refused(store_url)
    again = open_test_store(store_url, clock)
    try:
        assert {v: again.get_results(test_id, version=v) for v in (1, 2)} == results
    finally:
        again.close()
