"""Session files neutralise text that a spreadsheet would run as a formula, as the exports do."""

from __future__ import annotations

import pandas as pd

from analysis.exports import safe_csv_cell
from analysis.io.session_file import read_session, session_to_text
from analysis.session import Session


def _session(marker: str, meta_value: str) -> Session:
    breaths = pd.DataFrame({
        "t_s": [0.0, 3.0, 6.0], "vo2_ml_min": [900.0, 950.0, 1000.0], "vco2_ml_min": [800.0, 850.0, 900.0],
        "ve_l_min": [25.0, 26.0, 27.0], "marker": [marker, None, "@SUM(A1:A9)"], "source_row": [1, 2, 3],
    })
    return Session(meta={"subject_id": "=HYPERLINK(\"http://x.example\",\"open\")", "protocol": meta_value},
                   breaths=breaths, source_name="s.csv")


def test_formula_leading_text_cells_are_neutralised_on_writing():
    text = session_to_text(_session("=HYPERLINK(\"http://x.example\")", "ramp, =cmd|' /C calc'!A0, +0.5 W/s"))
    lines = text.splitlines()
    body = lines[lines.index(next(x for x in lines if x.startswith("t_s"))) + 1:]
    import csv
    import io

    markers = [row[-1] for row in csv.reader(io.StringIO("\n".join(body)))]
    assert markers[0] == safe_csv_cell("=HYPERLINK(\"http://x.example\")")
    assert markers[2] == safe_csv_cell("@SUM(A1:A9)") == "'@SUM(A1:A9)"
    protocol = next(x for x in lines if x.startswith("# protocol:"))
    assert ", '=cmd" in protocol and ", +0.5 W/s" in protocol  # a number after a comma is kept
    # no line has a cell that starts like a formula, once split as a spreadsheet would
    for row in csv.reader(io.StringIO(text)):
        for cell in row:
            assert not cell.startswith(("=", "@")), cell
    # the neutralised file reads back with the text kept behind the apostrophe
    again = read_session(text.encode(), file_name="s.csv")
    assert again.breaths["marker"].tolist()[2] == "'@SUM(A1:A9)"
