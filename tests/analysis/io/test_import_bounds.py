"""Bounds on hostile uploads: zip bombs, XML entity tricks, huge tables, huge cells, long quotes.

The bomb tests run the importer in a child process under a 1 GiB address-space limit
(``resource.setrlimit``) and a time limit: before the bounds, a 1 MB workbook holding one
1 GiB shared string needed about 10 GiB and two minutes; now it must be refused at once.
"""

from __future__ import annotations

import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from analysis.errors import QUOTE_MAX_CHARS, ImportRejected, InvalidParameter, quoted, shorten
from analysis.io import import_bytes, read_headers
from analysis.io._limits import MAX_CELL_CHARS, MAX_COLUMNS, MAX_ROWS
from tests.analysis.io import hostile
from tests.support import ROOT

#: Address-space limit of the child process (the whole interpreter with numpy and pandas fits
#: in about 350 MB of it).
LIMIT_BYTES = 1 << 30
#: Time limit of the child process, generous for a shared, slow machine; a refusal takes
#: well under two seconds when the machine is idle.
TIME_LIMIT_S = 60

_CHILD = textwrap.dedent(
    """
    import resource, sys, time
    resource.setrlimit(resource.RLIMIT_AS, ({limit}, {limit}))
    from analysis.errors import ImportRejected
    from analysis.io import import_bytes
    data = open(sys.argv[1], "rb").read()
    start = time.process_time()
    try:
        import_bytes(data, file_name=sys.argv[2])
    except ImportRejected as exc:
        print("REJECTED", round(time.process_time() - start, 2))
        print(str(exc))
    else:
        print("ACCEPTED")
    """
)


def _import_in_child(path: Path, name: str) -> tuple[str, float, str]:
    env = {"PYTHONPATH": str(ROOT), "OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1", "PATH": "/usr/bin:/bin"}
    proc = subprocess.run(
        [sys.executable, "-c", _CHILD.format(limit=LIMIT_BYTES), str(path), name],
        capture_output=True, text=True, timeout=TIME_LIMIT_S, env=env, cwd=ROOT,
    )
    assert proc.returncode == 0, proc.stderr[-2000:]
    lines = proc.stdout.splitlines()
    verdict, cpu = (lines[0].split() + ["0"])[:2]
    return verdict, float(cpu), "\n".join(lines[1:])


@pytest.fixture(scope="module")
def gib_bomb(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("bomb") / "bomb.xlsx"
    path.write_bytes(hostile.workbook(hostile.one_string_sheet(), filler_bytes=1 << 30))
    return path


def test_one_gib_shared_string_is_refused_under_a_memory_limit(gib_bomb: Path):
    assert gib_bomb.stat().st_size < 2_000_000  # about 1 MB on disk
    verdict, cpu_s, message = _import_in_child(gib_bomb, "bomb.xlsx")
    assert verdict == "REJECTED"
    assert cpu_s < 5.0  # CPU seconds in the child, not wall time on a shared machine
    assert "sharedStrings.xml" in message and "1024.0 MB" in message
    assert len(message) < 400


def test_small_high_ratio_bomb_is_refused_by_its_packing_ratio(tmp_path: Path):
    data = hostile.workbook(hostile.one_string_sheet(), filler_bytes=24 << 20)  # below the size cap
    assert len(data) < 100_000
    with pytest.raises(ImportRejected, match=r"ratio [\d,]+ to 1"):
        import_bytes(data, file_name="small-bomb.xlsx")
    path = tmp_path / "small.xlsx"
    path.write_bytes(data)
    assert _import_in_child(path, "small.xlsx")[0] == "REJECTED"


def test_xml_entities_are_refused_and_defusedxml_is_in_use():
    import openpyxl

    assert openpyxl.DEFUSEDXML is True  # openpyxl parses through defusedxml when it is installed
    data = hostile.workbook(hostile.entity_sheet())
    with pytest.raises(ImportRejected, match="cannot be read|not a readable"):
        import_bytes(data, file_name="laughs.xlsx")


def test_declared_giant_sheet_is_not_padded_and_its_rows_are_capped(tmp_path: Path):
    data = hostile.workbook(hostile.far_row_sheet())
    path = tmp_path / "far.xlsx"
    path.write_bytes(data)
    verdict, _, message = _import_in_child(path, "far.xlsx")
    assert verdict == "REJECTED"
    assert f"more than {MAX_ROWS:,} rows" in message and f"line {MAX_ROWS + 1}" in message


def test_fifty_megabyte_csv_beyond_a_day_is_refused_early_under_a_memory_limit(tmp_path: Path):
    # 2.1 million rows (just under the 50 MB upload limit) with times past 24 h: before the
    # bounds a file like it took 52 s and 2 GB
    rows = [f"{25 + i // 3600}:{(i // 60) % 60:02d}:{i % 60:02d},{1000 + i % 50},{900 + i % 40},{30 + i % 10}"
            for i in range(2_100_000)]
    path = tmp_path / "day-long.csv"
    path.write_text("Time,VO2,VCO2,VE\n" + "\n".join(rows) + "\n")
    assert path.stat().st_size > 40_000_000
    verdict, cpu_s, message = _import_in_child(path, "day-long.csv")
    assert verdict == "REJECTED"
    assert cpu_s < 10.0
    assert f"line {MAX_ROWS + 1}" in message and "more than 100,000 rows" in message


def test_row_with_too_many_cells_is_refused_at_that_line():
    header = "Time,VO2,VCO2,VE\n"
    body = "".join(f"{i},1000,900,30\n" for i in range(50))
    wide = ",".join(["1"] * (MAX_COLUMNS + 5)) + "\n"
    with pytest.raises(ImportRejected) as err:
        import_bytes((header + body + wide + body).encode(), file_name="wide.csv")
    assert err.value.problems[0].row == 52
    assert f"{MAX_COLUMNS + 5:,} cells" in str(err.value)


def test_cell_longer_than_a_spreadsheet_cell_is_refused_at_that_line():
    header = "Time,VO2,VCO2,VE,Note\n"
    rows = [f"{i},1000,900,30,ok\n" for i in range(40)]
    rows[9] = "9,1000,900,30," + "x" * (MAX_CELL_CHARS + 1) + "\n"
    with pytest.raises(ImportRejected) as err:
        import_bytes((header + "".join(rows)).encode(), file_name="long-cell.csv")
    assert err.value.problems[0].row == 11
    assert "cell 5 holds 32,768 characters" in str(err.value)


# ----------------------------------------------------------------- quotations in messages
def test_quoted_values_are_cut_at_eighty_characters():
    assert shorten("a" * 81) == "a" * QUOTE_MAX_CHARS + "…"
    assert shorten("short") == "short"
    assert quoted("b" * 500) == repr("b" * QUOTE_MAX_CHARS + "…")
    assert len(quoted(list(range(10_000)))) == QUOTE_MAX_CHARS + 1


def test_a_thirty_thousand_character_cell_gives_a_short_message():
    big = "9" * 20 + "x" * 30_000  # below the cell-length bound, so it is quoted
    text = f"Time,VO2,VCO2,VE\n0,1000,900,30\n3,{big},900,30\n6,1000,900,30\n"
    with pytest.raises(ImportRejected) as err:
        import_bytes(text.encode(), file_name="big-cell.csv")
    message = str(err.value)
    assert len(message) < 300
    assert "…" in message and "line 3" in message


def test_huge_headers_and_sheet_names_are_shortened_in_messages():
    headers = ",".join(f"H{i}-" + "y" * 5000 for i in range(200))
    text = headers + "\n" + "\n".join(",".join(["1"] * 200) for _ in range(5)) + "\n"
    with pytest.raises(ImportRejected) as err:
        import_bytes(text.encode(), file_name="n" * 5000 + ".csv")
    message = str(err.value)
    assert len(message) < 4000
    assert "and 180 more" in message


def test_invalid_parameter_quotes_at_most_eighty_characters():
    with pytest.raises(InvalidParameter) as err:
        import_bytes(b"Time,VO2\n1,2\n", file_name="x.csv", gas_unit="z" * 100_000)
    assert len(str(err.value)) < 250


def test_huge_cell_in_a_workbook_header_gives_a_short_message():
    import openpyxl
    import io

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["Time", "Q" * 30_000, "VCO2", "VE"])
    for i in range(20):
        ws.append([i * 3, 1000, 900, 30])
    buf = io.BytesIO()
    wb.save(buf)
    with pytest.raises(ImportRejected) as err:
        import_bytes(buf.getvalue(), file_name="book.xlsx")
    assert len(str(err.value)) < 1000
    assert read_headers(buf.getvalue(), file_name="book.xlsx")[1].startswith("QQQ")
