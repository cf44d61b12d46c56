"""The result record and its one codec: round trips, strict JSON, errors, schema and generated docs."""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import pytest

from analysis.errors import InvalidParameter
from analysis.io import read_session
from analysis.pipeline import analyze_session
from analysis.records import derived, described, from_json, record_fields, to_json
from analysis.results import TOP_LEVEL_KEYS, TestResults, results_from_json
from analysis.results.schema import json_schema, stale_files

ROOT = Path(__file__).resolve().parents[3]
DEMOS = sorted((ROOT / "demo_sessions").glob("*.session.csv"))


@pytest.fixture(scope="module", params=[p.name for p in DEMOS])
def demo_results(request) -> TestResults:
    path = ROOT / "demo_sessions" / request.param
    return analyze_session(read_session(path.read_bytes(), file_name=path.name))


def test_round_trip_on_every_demo(demo_results):
    data = to_json(demo_results)
    text = json.dumps(data, allow_nan=False)  # strict JSON: no NaN or infinity
    back = results_from_json(json.loads(text))
    assert to_json(back) == data
    # the parts compare equal as records (the averaged frame is not part of the JSON)
    for name in ("subject", "vt1", "vt2", "peak", "maximality", "indices", "predicted", "classes", "zones",
                 "phases", "excluded_breaths", "warnings", "methods", "settings", "averaging", "breaths"):
        assert getattr(back, name) == getattr(demo_results, name), name
    assert back.averaged.empty and not demo_results.averaged.empty


def test_top_level_keys_are_the_documented_ones(demo_results):
    data = to_json(demo_results)
    assert list(data) == list(TOP_LEVEL_KEYS)
    for key in ("vo2_peak_ml_min", "rer_peak", "ve_vco2_slope", "vt1", "vt2", "peak", "indices", "methods"):
        assert key in data
    assert data["vo2_peak_ml_min"] == demo_results.peak.vo2_ml_min == data["peak"]["vo2_ml_min"]
    if demo_results.vt1 is not None:
        assert data["vt1"]["time_s"] == demo_results.vt1.t_s
        assert {"vo2_ml_min", "time_s", "hr_bpm", "work_w", "method", "source", "confidence"} <= set(data["vt1"])


def test_every_written_key_is_in_the_schema(demo_results):
    schema = json_schema()
    defs = schema["$defs"]

    def check(node, value, where):
        if "$ref" in node:
            node = defs[node["$ref"].rsplit("/", 1)[1]]
        if "anyOf" in node:
            if value is None:
                return
            node = next(n for n in node["anyOf"] if n.get("type") != "null")
            return check(node, value, where)
        if isinstance(value, dict) and "properties" in node:
            assert set(value) == set(node["properties"]), where
            for k, v in value.items():
                check(node["properties"][k], v, f"{where}.{k}")
        elif isinstance(value, dict) and "additionalProperties" in node:
            for k, v in value.items():
                check(node["additionalProperties"], v, f"{where}.{k}")
        elif isinstance(value, list) and "items" in node:
            for i, v in enumerate(value):
                check(node["items"], v, f"{where}[{i}]")

    check(schema, to_json(demo_results), "")


def test_committed_schema_and_docs_are_not_stale():
    # Regenerate with: python -m analysis.results.schema
    assert stale_files(ROOT) == []


# A toy part shows what adding a part takes: a frozen dataclass with described fields.
@dataclasses.dataclass(frozen=True)
class _Part:
    level_ml_min: float = described(unit="mL/min", description="a level")
    label: str | None = described(default=None, description="a label")
    span_s: tuple[float, float] | None = described(default=None, unit="s", description="a span", key="span")

    @derived(unit="L/min", description="level in L/min")
    def level_l_min(self) -> float:
        return self.level_ml_min / 1000.0


@dataclasses.dataclass(frozen=True)
class _Whole:
    SCHEMA_VERSION = 7

    part: _Part = described(description="the part")
    parts: tuple[_Part, ...] = described(default=(), description="more parts")
    by_name: dict[str, _Part] = described(default_factory=dict, description="parts by name")


def test_a_new_part_round_trips_with_nan_as_null():
    whole = _Whole(_Part(math.nan, "x", (1.0, 2.5)), (_Part(1500.0),), {"a": _Part(2.0)})
    data = to_json(whole)
    assert data == {
        "schema_version": 7,
        "part": {"level_ml_min": None, "label": "x", "span": [1.0, 2.5], "level_l_min": None},
        "parts": [{"level_ml_min": 1500.0, "label": None, "span": None, "level_l_min": 1.5}],
        "by_name": {"a": {"level_ml_min": 2.0, "label": None, "span": None, "level_l_min": 0.002}},
    }
    back = from_json(_Whole, json.loads(json.dumps(data, allow_nan=False)))
    assert math.isnan(back.part.level_ml_min)
    assert back.parts == whole.parts and back.by_name == whole.by_name and back.part.span_s == (1.0, 2.5)
    assert [i.key for i in record_fields(_Part)] == ["level_ml_min", "label", "span", "level_l_min"]


def test_reading_names_the_bad_key():
    data = to_json(_Whole(_Part(1.0)))
    with pytest.raises(InvalidParameter, match="schema_version"):
        from_json(_Whole, {**data, "schema_version": 6})
    bad = json.loads(json.dumps(data))
    bad["part"]["level_ml_min"] = "fast"
    with pytest.raises(InvalidParameter, match=r"part\.level_ml_min"):
        from_json(_Whole, bad)
    del bad["part"]["level_ml_min"]
    with pytest.raises(InvalidParameter, match=r"part\.level_ml_min"):
        from_json(_Whole, bad)


def test_a_value_without_json_form_is_refused():
    with pytest.raises(InvalidParameter, match="JSON form"):
        to_json({"x": object()})
