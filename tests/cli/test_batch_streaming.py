"""``tidemark analyze DIR --out``: rows streamed as they finish, interrupted runs keep their
rows, ``--resume`` skips files already in the output, parallel rows equal serial rows."""

from __future__ import annotations

import csv
import shutil
from pathlib import Path

import pytest

from analysis.io.session_file import write_session
from analysis.simulation import CYCLE_SUBMAX, SUBMAX_SCREEN, simulate_session
from tidemark.cli import EXIT_BAD_INPUT, EXIT_OK, main
from tidemark.commands import analyze as A


@pytest.fixture(scope="module")
def five_files(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("five")
    one = d / "a0.session.csv"
    write_session(simulate_session(SUBMAX_SCREEN, CYCLE_SUBMAX, seed=5531), one)
    for k in range(1, 4):
        shutil.copyfile(one, d / f"a{k}.session.csv")
    (d / "a4.session.csv").write_text("not,a,session\n1,2,3\n", encoding="utf-8")  # an error row
    return d


def _rows(path: Path) -> list[dict[str, str]]:
    with path.open(encoding="utf-8", newline="") as f:
        return list(csv.DictReader(f))


def test_each_row_is_on_disk_before_the_next_file_is_analysed(five_files, tmp_path, monkeypatch):
    out = tmp_path / "r.csv"
    seen: list[int] = []
    original = A.analyze_path

    def spy(path, settings):  # noqa: ANN001, ANN202
        seen.append(len(_rows(out)) if out.exists() else -1)
        return original(path, settings)

    monkeypatch.setattr(A, "analyze_path", spy)
    assert main(["analyze", str(five_files), "--out", str(out), "--workers", "1", "--no-progress"]) == EXIT_OK
    assert seen == [0, 1, 2, 3, 4]  # the header first, then one more finished row per file
    rows = _rows(out)
    assert [r["file"] for r in rows] == [f"a{k}.session.csv" for k in range(5)]
    assert [r["status"] for r in rows] == ["ok"] * 4 + ["error"]


def test_an_interrupted_run_keeps_its_rows_and_resume_finishes_it(five_files, tmp_path, monkeypatch, capsys):
    out = tmp_path / "r.csv"
    original = A.analyze_path
    calls = iter(range(100))

    def stop_at_third(path, settings):  # noqa: ANN001, ANN202
        if next(calls) == 2:
            raise KeyboardInterrupt
        return original(path, settings)

    monkeypatch.setattr(A, "analyze_path", stop_at_third)
    assert main(["analyze", str(five_files), "--out", str(out), "--workers", "1", "--no-progress"]) == 1
    assert "--resume" in capsys.readouterr().err
    assert [r["file"] for r in _rows(out)] == ["a0.session.csv", "a1.session.csv"]
    with out.open("a", encoding="utf-8") as f:
        f.write("a2.session.csv,ok,")  # a line cut off mid-write is dropped, that file analysed again
    monkeypatch.setattr(A, "analyze_path", original)
    assert main(["analyze", str(five_files), "--out", str(out), "--workers", "1", "--no-progress", "--resume"]) == EXIT_OK
    assert "3 tests analysed, 1 failed, 2 already in the file" in capsys.readouterr().err
    rows = _rows(out)
    assert [r["file"] for r in rows] == [f"a{k}.session.csv" for k in range(5)]
    assert rows[0]["vo2_peak_ml_min"] == rows[3]["vo2_peak_ml_min"] != ""


def test_resume_refuses_a_file_that_is_not_a_summary(five_files, tmp_path, capsys):
    out = tmp_path / "other.csv"
    out.write_text("name,value\nx,1\n", encoding="utf-8")
    assert main(["analyze", str(five_files), "--out", str(out), "--resume", "--no-progress"]) == EXIT_BAD_INPUT
    assert "--resume" in capsys.readouterr().err
    assert out.read_text(encoding="utf-8") == "name,value\nx,1\n"  # left as it was


def test_parallel_rows_equal_serial_rows_in_the_same_order(five_files):
    files = sorted(five_files.iterdir())
    serial = list(A.iter_batch(files, workers=1))
    parallel = list(A.iter_batch(files, workers=2))
    assert parallel == serial and len(serial) == 5


def test_without_resume_the_output_is_written_afresh(five_files, tmp_path):
    out = tmp_path / "r.csv"
    out.write_text("old content\n", encoding="utf-8")
    assert main(["analyze", str(five_files), "--out", str(out), "--workers", "2", "--no-progress"]) == EXIT_OK
    assert len(_rows(out)) == 5 and "old content" not in out.read_text(encoding="utf-8")
