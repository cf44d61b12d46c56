"""Simulator ground truth survives writing and importing, across seeds and noise levels."""

from __future__ import annotations

import numpy as np
import pytest

from analysis.io import import_bytes, read_session, session_to_text
from analysis.simulation import DEMO_TESTS, simulate_session

GENERIC = {
    "t_s": "Time",
    "vo2_ml_min": "V'O2 (L/min)",
    "vco2_ml_min": "V'CO2 (L/min)",
    "ve_l_min": "VE (L/min)",
    "hr_bpm": "HR (bpm)",
    "work_w": "Load (W)",
    "rf_bpm": "BF",
    "vt_l": "VT (L)",
    "peto2_mmhg": "PetO2",
    "petco2_mmhg": "PetCO2",
    "spo2_pct": "SpO2",
    "phase": "Phase",
    "marker": "Event",
    "speed_kmh": "Speed",
    "grade_pct": "Grade",
}


def _mmss(t: float) -> str:
    m, s = divmod(t, 60.0)
    return f"{int(m)}:{s:06.3f}".replace(".", ",")


@pytest.mark.parametrize(("demo", "seed", "noise"), [(0, 1, 0.0), (1, 2, 1.0), (2, 3, 2.0)])
def test_simulated_session_round_trips(demo, seed, noise):
    case = DEMO_TESTS[demo]
    sim = simulate_session(case.profile, case.protocol, seed=seed, noise=noise)
    text = session_to_text(sim)
    back = read_session(text.encode(), file_name="sim.session.csv")
    assert back.meta.keys() == sim.meta.keys()
    for key, value in sim.meta.items():
        # metadata numbers are written rounded to 6 decimals (session format)
        assert back.meta[key] == (pytest.approx(value, abs=1e-6) if isinstance(value, float) else value), key
    for col in [c for c in sim.breaths.columns if c in GENERIC and c not in ("phase", "marker")]:
        np.testing.assert_allclose(back.breaths[col], sim.breaths[col], rtol=1e-5, err_msg=col)

    # The same breaths as a cart-style export: generic headers, L/min, m:ss, semicolons, decimal commas.
    b = sim.breaths
    cols = [c for c in GENERIC if c in b.columns]
    lines = ["Saltmarsh Exercise Lab (invented) - exported test", ";".join(GENERIC[c] for c in cols)]
    for _, row in b.iterrows():
        cells = []
        for c in cols:
            v = row[c]
            if c == "t_s":
                cells.append(_mmss(v))
            elif c in ("phase", "marker"):
                cells.append("" if v is None or v != v else str(v))
            elif c in ("vo2_ml_min", "vco2_ml_min"):
                cells.append(f"{v / 1000:.5f}".replace(".", ","))
            else:
                cells.append("" if v != v else f"{v:.4f}".replace(".", ","))
        lines.append(";".join(cells))
    out = import_bytes(("\n".join(lines) + "\n").encode("utf-8"), file_name="sim_export.csv")
    got = out.session.breaths
    assert out.gas_unit_detected == "l_min" and out.time_format_detected == "mm:ss" and out.decimal == ","
    assert len(got) == len(b)
    np.testing.assert_allclose(got["t_s"], b["t_s"], atol=6e-4)
    np.testing.assert_allclose(got["vo2_ml_min"], b["vo2_ml_min"], atol=6e-3)
    np.testing.assert_allclose(got["vco2_ml_min"], b["vco2_ml_min"], atol=6e-3)
    np.testing.assert_allclose(got["ve_l_min"], b["ve_l_min"], atol=6e-5)
    if "phase" in b.columns:
        assert got["phase"].tolist() == b["phase"].tolist()
    assert got["source_row"].tolist() == list(range(3, 3 + len(b)))
