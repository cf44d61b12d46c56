"""Demo sessions: deterministic files that round-trip through the session-file format, and
the ``tidemark demo`` command."""

from __future__ import annotations

import io
import sys
import types
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from analysis import columns as C
from analysis.io.session_file import coerce_meta, parse_meta_line
from analysis.simulation import DEMO_TESTS, LAB_NAME, generate_demo, simulate_session
from tests.support import ROOT
from tidemark import cli

COMMITTED = ROOT / "demo_sessions"


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("demo")
    generate_demo(out)
    return out


def _demo_session(demo):
    return simulate_session(demo.profile, demo.protocol, seed=demo.seed, noise=1.0, artifacts=3,
                            test_date=demo.test_date, notes=demo.notes, meta_extra=dict(demo.meta_extra) or None)


def _parse(path: Path) -> tuple[dict, pd.DataFrame, int]:
    """Minimal independent parse: ``# key: value`` lines, then CSV. Returns meta, table and the
    1-based line of the header."""
    lines = path.read_text(encoding="utf-8").splitlines()
    raw = {}
    n = 0
    while n < len(lines) and parse_meta_line(lines[n]) is not None:
        key, value = parse_meta_line(lines[n])
        raw[key] = value
        n += 1
    table = pd.read_csv(io.StringIO("\n".join(lines[n:])), keep_default_na=True)
    return coerce_meta(raw), table, n + 1


def test_demo_cast_covers_the_required_tests():
    kinds = {d.stem.split("_")[-1] for d in DEMO_TESTS}
    assert {"cycle-ramp", "treadmill-ramp", "rehab-baseline", "rehab-week12", "submax"} <= kinds
    assert any(d.profile.plateau for d in DEMO_TESTS)
    assert any(d.profile.vt2_fraction is None and d.profile.ve_vco2_slope >= 40 for d in DEMO_TESTS)
    assert len({d.stem for d in DEMO_TESTS}) == len(DEMO_TESTS)
    for d in DEMO_TESTS:
        assert d.stem.startswith(f"{d.profile.subject_id}_{d.test_date}_")


def test_generated_files_are_deterministic_and_match_the_committed_ones(demo_dir, tmp_path):
    again = generate_demo(tmp_path)
    assert [p.name for p in again] == [f"{d.stem}.session.csv" for d in DEMO_TESTS]
    for path in again:
        assert path.read_bytes() == (demo_dir / path.name).read_bytes()
        committed = COMMITTED / path.name
        assert committed.exists(), f"run 'tidemark demo' and commit {committed.name}"
        assert committed.read_bytes() == path.read_bytes(), f"{committed.name} is stale: run 'tidemark demo'"


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=[d.stem for d in DEMO_TESTS])
def test_demo_file_round_trips(demo, demo_dir):
    session = _demo_session(demo)
    meta, table, header_line = _parse(demo_dir / f"{demo.stem}.session.csv")
    assert meta["lab"] == LAB_NAME
    assert meta["subject_id"] == demo.profile.subject_id
    assert meta["test_date"] == demo.test_date
    for key in ("age_y", "height_cm", "body_mass_kg", "hb_g_dl", "barometric_mmhg"):
        assert isinstance(meta[key], float)
    for key, value in session.meta.items():
        if isinstance(value, float):
            assert meta[key] == pytest.approx(value, rel=1e-6), key
        else:
            assert meta[key] == value, key
    # every written numeric value keeps 6 significant digits
    for name in C.NUMERIC:
        if name in session.breaths:
            assert table[name].to_numpy() == pytest.approx(session.breaths[name].to_numpy(), rel=5e-6), name
    assert table[C.PHASE].tolist() == session.breaths[C.PHASE].tolist()
    assert table[C.MARKER].fillna("").tolist() == session.breaths[C.MARKER].tolist()
    # source_row is the breath's line in the written file
    assert int(session.breaths["source_row"].iloc[0]) == header_line + 1
    text_lines = (demo_dir / f"{demo.stem}.session.csv").read_text(encoding="utf-8").splitlines()
    for i in (0, len(session.breaths) // 2, len(session.breaths) - 1):
        row = int(session.breaths["source_row"].iloc[i])
        assert float(text_lines[row - 1].split(",")[0]) == pytest.approx(session.breaths[C.T_S].iloc[i])
    # the artifact times name breaths of the file exactly
    times = [float(x) for x in meta["truth_artifact_t_s"].split(",")]
    assert set(times) <= set(np.round(table[C.T_S].to_numpy(), 2).tolist())


@pytest.mark.parametrize("demo", DEMO_TESTS, ids=[d.stem for d in DEMO_TESTS])
def test_demo_file_reads_back_with_the_project_reader(demo, demo_dir):
    try:
        from analysis.io import read_session
    except ImportError:
        pytest.skip("analysis.io.read_session is not available yet")
    path = demo_dir / f"{demo.stem}.session.csv"
    session = read_session(path)
    expected = _demo_session(demo)
    assert session.meta["truth_vo2max_ml_min"] == demo.profile.vo2max_ml_min
    assert session.meta["subject_id"] == demo.profile.subject_id
    assert len(session.breaths) == len(expected.breaths)
    assert session.breaths[C.VO2_ML_MIN].to_numpy() == pytest.approx(expected.breaths[C.VO2_ML_MIN].to_numpy(), rel=5e-6)
    assert session.breaths["source_row"].tolist() == expected.breaths["source_row"].tolist()


def test_cli_demo_writes_and_lists_files(tmp_path, capsys):
    assert cli.main(["demo", "--out", str(tmp_path / "d")]) == 0
    out = capsys.readouterr().out
    files = sorted((tmp_path / "d").glob("*.session.csv"))
    assert len(files) == len(DEMO_TESTS)
    for f in files:
        assert str(f) in out


def test_cli_demo_load_calls_the_store(tmp_path, capsys, monkeypatch):
    calls = []
    fake = types.ModuleType("store.demo_loader")
    fake.load_demo_sessions = lambda paths, url=None: calls.append((list(paths), url)) or len(paths)
    monkeypatch.setitem(sys.modules, "store.demo_loader", fake)
    assert cli.main(["demo", "--out", str(tmp_path), "--load", "--store", "sqlite:///x.sqlite"]) == 0
    assert len(calls) == 1
    paths, url = calls[0]
    assert url == "sqlite:///x.sqlite"
    assert [Path(p).name for p in paths] == [f"{d.stem}.session.csv" for d in DEMO_TESTS]


def test_cli_demo_load_without_store_is_a_clear_error(tmp_path, capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "store.demo_loader", None)  # import fails
    assert cli.main(["demo", "--out", str(tmp_path), "--load"]) == cli.EXIT_BAD_INPUT
    err = capsys.readouterr().err
    assert "store is not available" in err
    assert len(list(tmp_path.glob("*.session.csv"))) == len(DEMO_TESTS)  # files still written


def test_cli_demo_out_is_a_file(tmp_path, capsys):
    target = tmp_path / "not-a-folder"
    target.write_text("x")
    assert cli.main(["demo", "--out", str(target)]) == cli.EXIT_BAD_INPUT
    assert "not a folder" in capsys.readouterr().err


@pytest.mark.slow
def test_cli_demo_load_into_a_real_store(tmp_path, capsys):
    try:
        import store.demo_loader  # noqa: F401
    except ImportError:
        pytest.skip("store.demo_loader is not available yet")
    url = str(tmp_path / "demo.sqlite")
    assert cli.main(["demo", "--out", str(tmp_path / "d"), "--load", "--store", url]) == 0
    out = capsys.readouterr().out
    assert f"Loaded {len(DEMO_TESTS)} sessions into {url}" in out
