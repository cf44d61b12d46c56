"""Import speed: a 2,000-breath cart export and a 20,000-row file, and the session reader.

Baselines (same run, same bytes): ``pandas.read_csv`` of the file — the bare parse without
locating the table, mapping, unit detection or validation. Target: a typical test (2,000
breaths) imports in well under a second on a laptop, so the upload check feels immediate.
"""

from __future__ import annotations

import io

import numpy as np
import pandas as pd

from analysis.io import import_bytes, read_session, session_to_text
from benchmarks.table import BenchRow, best_of


def _export(n: int, *, seed: int = 7) -> bytes:
    """Invented ramp test as a semicolon/decimal-comma export with a title line and a footer."""
    rng = np.random.default_rng(seed)
    t = np.round(np.cumsum(rng.uniform(2.0, 4.0, n)) - 3.0, 2)
    frac = np.linspace(0, 1, n)
    vo2 = 0.3 + 2.5 * frac + rng.normal(0, 0.03, n)
    df = pd.DataFrame(
        {
            "Time": [f"{int(x // 60)}:{x % 60:05.2f}" for x in t],
            "V'O2 (L/min)": vo2.round(3),
            "V'CO2 (L/min)": (vo2 * (0.82 + 0.3 * frac)).round(3),
            "VE (L/min)": (vo2 * 30 + rng.normal(0, 0.5, n)).round(1),
            "HR": np.round(70 + 110 * frac),
            "Load (W)": np.round(250 * frac / 5) * 5,
        }
    )
    body = df.to_csv(index=False, sep=";", decimal=",", lineterminator="\n")
    return ("Saltmarsh Exercise Lab (invented)\n\n" + body + "\nMean;1;1;1;1;1\n").encode()


def measure() -> list[BenchRow]:
    rows: list[BenchRow] = []
    for n in (2000, 20000):
        data = _export(n)
        base = best_of(lambda: pd.read_csv(io.BytesIO(data), sep=";", decimal=",", skiprows=2, skipfooter=2, engine="python"), repeats=3)
        took = best_of(lambda: import_bytes(data, file_name="bench.csv"), repeats=3)
        rows.append(
            BenchRow(
                f"import_bytes, {n} breaths ({len(data) // 1024} kB)",
                took,
                "pandas.read_csv",
                base,
                "< 1 s for 2,000 breaths" if n == 2000 else "",
                "locate table, map, units, validate, flag",
            )
        )
    session = import_bytes(_export(2000), file_name="bench.csv").session
    text = session_to_text(session).encode()
    base = best_of(lambda: pd.read_csv(io.BytesIO(text), comment="#"), repeats=5)
    took = best_of(lambda: read_session(text, file_name="bench.session.csv"), repeats=5)
    rows.append(BenchRow("read_session, 2000 breaths", took, "pandas.read_csv", base, "", "strict reader with validation"))
    return rows
