"""Isolated breaths beyond physical limits are artefacts: kept, flagged, excluded by the analysis.

A cough or a mask re-seat produces a breath such as VO2 11.8 L/min inside an otherwise normal
test; before, that one breath refused the whole file. Many such breaths, or a run of them,
still refuse the file with the hint to check the unit.
"""

from __future__ import annotations

import json

import pytest

from analysis.errors import ImportRejected
from analysis.io import import_bytes
from analysis.io._validate import REASON_ARTEFACT
from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.settings import AnalysisSettings
from tests.support import ROOT
from tidemark.cli import EXIT_OK, main

DEMO = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"


def _with_values(changes: dict[int, str], column: str = "vo2_ml_min") -> tuple[bytes, list[int]]:
    """The demo file with ``column`` set to the given text on the given body rows; their file lines."""
    lines = DEMO.read_text().splitlines()
    header = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    k = lines[header].split(",").index(column)
    file_lines = []
    for body_row, value in changes.items():
        cells = lines[header + body_row].split(",")
        cells[k] = value
        lines[header + body_row] = ",".join(cells)
        file_lines.append(header + body_row + 1)
    return ("\n".join(lines) + "\n").encode(), file_lines


def test_one_impossible_breath_is_excluded_with_its_reason_and_results_hold():
    clean = import_bytes(DEMO.read_bytes(), file_name="clean.csv")
    data, (line,) = _with_values({200: "11800"})
    out = import_bytes(data, file_name="one-cough.csv")
    flags = out.session.flags
    assert flags[flags.reason == REASON_ARTEFACT][["source_row", "column"]].values.tolist() == [[line, "vo2_ml_min"]]
    res = to_json(analyze_session(out.session, AnalysisSettings()))
    ref = to_json(analyze_session(clean.session, AnalysisSettings()))
    excluded = [e for e in res["excluded_breaths"] if e["source_row"] == line]
    assert len(excluded) == 1 and excluded[0]["value"] == 11800.0
    assert "beyond physical limits (0 to 10000 mL/min)" in excluded[0]["reason"]
    assert res["vo2_peak_ml_min"] == pytest.approx(ref["vo2_peak_ml_min"], rel=1e-9)


def test_artefact_in_the_first_breaths_is_excluded_too():
    data, (line,) = _with_values({1: "-50"}, column="ve_l_min")
    out = import_bytes(data, file_name="first.csv")
    res = to_json(analyze_session(out.session, AnalysisSettings()))
    assert [e["column"] for e in res["excluded_breaths"] if e["source_row"] == line] == ["ve_l_min"]


def test_many_impossible_breaths_are_systematic_and_refused_with_the_unit_hint():
    data, _ = _with_values({r: "11800" for r in range(30, 530, 50)})  # 10 breaths, above 1 %
    with pytest.raises(ImportRejected) as err:
        import_bytes(data, file_name="many.csv")
    text = str(err.value)
    assert "too many such breaths to be artefacts" in text and "check the column's unit" in text


def test_a_run_of_impossible_breaths_is_refused():
    data, _ = _with_values({100: "11800", 101: "11900", 102: "12000"})
    with pytest.raises(ImportRejected, match="impossible"):
        import_bytes(data, file_name="run.csv")


def test_cli_analyses_a_session_file_with_one_artefact(tmp_path, capsys):
    data, (line,) = _with_values({200: "11800"})
    path = tmp_path / "cough.session.csv"
    path.write_bytes(data)
    assert main(["analyze", str(path), "--json"]) == EXIT_OK
    result = json.loads(capsys.readouterr().out)
    assert any(e["source_row"] == line for e in result["excluded_breaths"])


def test_phase_labels_are_mapped_by_their_words_and_unknown_ones_left_out_with_a_note():
    from analysis.io._validate import REASON_PHASE, map_phase_label

    assert [map_phase_label(x) for x in ("Stage 3", "Recovery 2", "Rest phase", "unloaded", "Zone X")] == [
        "exercise", "recovery", "rest", "warmup", None]
    rows = {r: "Stage 2" for r in range(100, 110)} | {r: "Zone X" for r in range(110, 120)}
    data, lines = _with_values(rows, column="phase")
    out = import_bytes(data, file_name="phases.csv")
    phase = out.session.breaths.set_index("source_row")["phase"]
    assert set(phase.loc[lines[:10]]) == {"exercise"}
    assert phase.loc[lines[10:]].isna().all()
    assert out.session.flags[out.session.flags.reason == REASON_PHASE]["source_row"].tolist() == lines[10:]
    assert any("'Zone X'" in n and "left without a phase" in n for n in out.notes)
    analyze_session(out.session, AnalysisSettings())  # no longer refused
