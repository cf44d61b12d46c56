"""Property test: any mix of the lab-variety features imports with no metadata typed, with the
simulated breath count, times and gas values within the printed rounding."""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from analysis import columns as C
from analysis.io import import_bytes
from analysis.session import Session
from analysis.simulation import simulate_case
from analysis.simulation.foreign_lab import LabLayout, lab_export_bytes

TIME_TOL_S = {"s": 0.0051, "mss": 0.051, "hms": 0.51}
GAS_TOL = {C.VO2_ML_MIN: 0.51, C.VCO2_ML_MIN: 0.51, C.VE_L_MIN: 0.051}


@lru_cache(maxsize=None)
def _session(kind: str) -> Session:
    return simulate_case(kind, 0, noise=2.0)


def _part(kind: str, where: float, n: int) -> Session:
    """``n`` consecutive breaths of a simulated test starting at fraction ``where`` of it (a
    short file keeps the test quick; late parts hold the fast breathing of peak exercise)."""
    s = _session(kind)
    start = int(where * max(0, len(s.breaths) - n))
    b = s.breaths.iloc[start : start + n].reset_index(drop=True)
    return Session(meta=dict(s.meta), breaths=b)


@st.composite
def layouts(draw: st.DrawFn) -> LabLayout:
    sep = draw(st.sampled_from([",", ";", "\t", "|"]))
    quote = draw(st.booleans())
    # a decimal comma in a comma-separated file only inside quotes (otherwise no reader can tell)
    decimal = draw(st.sampled_from([".", ","])) if (sep != "," or quote) else "."
    every = st.sampled_from([0, 0, 1, 2, 3, 5, 7])
    return LabLayout(
        "drawn",
        sep=sep,
        decimal=decimal,
        quote=quote,
        bom=draw(st.booleans()),
        line_end=draw(st.sampled_from(["\r\n", "\n"])),
        trailing_seps=draw(st.integers(0, 3)),
        unit_row=draw(st.booleans()),
        blank_every=draw(every),
        comment_every=draw(every),
        event_every=draw(every),
        note_every=draw(every),
        dropout_every=draw(every),
        gas_unit=draw(st.sampled_from(["ml_min", "l_min"])),
        ve_btps_label=draw(st.booleans()),
        time=draw(st.sampled_from(["s", "mss", "hms"])),
        per_kg=draw(st.booleans()),
        order_seed=draw(st.one_of(st.none(), st.integers(0, 1000))),
        extra_columns=draw(st.booleans()),
        preamble=draw(st.booleans()),
        units_given=draw(st.booleans()),
    )


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    layout=layouts(),
    kind=st.sampled_from(["rehab", "athlete", "treadmill_steps", "lung_limited"]),
    where=st.floats(0.0, 1.0),
    n=st.integers(20, 80),
)
def test_any_mix_of_lab_features_imports_with_the_simulated_breaths(layout, kind, where, n):
    s = _part(kind, where, n)
    out = import_bytes(lab_export_bytes(s, layout=layout), file_name="drawn.csv")
    b = out.session.breaths
    assert len(b) == len(s.breaths)
    assert np.max(np.abs(b[C.T_S].to_numpy() - s.breaths[C.T_S].to_numpy())) <= TIME_TOL_S[layout.time]
    for name, tol in GAS_TOL.items():
        assert np.max(np.abs(b[name].to_numpy() - s.breaths[name].to_numpy())) <= tol, name
    if layout.event_every or layout.note_every:
        assert (b[C.MARKER].fillna("") != "").sum() >= 1
    if layout.dropout_every == 1:  # every HR cell '--': the column holds nothing and is left out
        assert C.HR_BPM not in b.columns
        assert any("holds no values and was left out" in note for note in out.notes)
    elif layout.dropout_every:
        hr_flags = out.session.flags[out.session.flags["column"] == C.HR_BPM]
        assert len(hr_flags) >= len(s.breaths) // layout.dropout_every
