"""Breath-level events of a real recording: sighs, mask leaks, merged and lost breaths, and
impossible breaths (see :class:`~analysis.simulation.extras.BreathEvents`).

Private. Every changed value stays inside the flag limits of :mod:`analysis.columns` (a
breath that would pass them is left alone), so an event never makes a file unreadable.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.simulation.extras import BreathEvents

#: Events keep this many breaths from the record's ends and from a phase change.
EDGE_BREATHS = 6
#: Share of the flag limit a planted value may reach.
_LIMIT_SHARE = 0.95


def _limit(name: str) -> float:
    value = C.COLUMNS[name].flag_above
    assert value is not None
    return _LIMIT_SHARE * value


def _eligible(frame: pd.DataFrame) -> np.ndarray:
    """Rows away from the ends and from phase changes or markers."""
    n = len(frame)
    ok = np.zeros(n, dtype=bool)
    ok[EDGE_BREATHS : max(n - EDGE_BREATHS, EDGE_BREATHS)] = True
    if C.PHASE in frame:
        phase = np.asarray(frame[C.PHASE].to_numpy(), dtype=object)
        change = np.flatnonzero(phase[1:] != phase[:-1]) + 1
        for i in change:
            ok[max(i - 3, 0) : i + 3] = False
    return ok


def _pick(rng: np.random.Generator, ok: np.ndarray, count: int, span: int = 1) -> list[int]:
    """Up to ``count`` start rows whose ``span`` rows are all eligible, 10 breaths apart; the
    chosen rows are then marked not eligible."""
    bad = np.concatenate([[0], np.cumsum(~ok)])
    starts = np.flatnonzero(bad[span:] == bad[:-span]) if len(ok) >= span else np.array([], dtype=int)
    chosen: list[int] = []
    for i in rng.permutation(starts) if starts.size else []:
        if len(chosen) == count:
            break
        if ok[int(i) : int(i) + span].all():
            chosen.append(int(i))
            ok[max(int(i) - 10, 0) : int(i) + span + 10] = False
    return sorted(chosen)


def plant_events(
    frame: pd.DataFrame, events: BreathEvents, *, rng: np.random.Generator, protect_t_s: list[float] | None = None
) -> tuple[pd.DataFrame, list[str]]:
    """Plant ``events`` in a breath table (before ``vt_l`` and ``source_row`` are added).

    Parameters
    ----------
    frame : pandas.DataFrame
        Breaths in canonical columns with ``rf_bpm`` (60 / breath duration).
    events : BreathEvents
    rng : numpy.random.Generator
    protect_t_s : list of float, optional
        Times of breaths no event may touch (the planted artifacts), s.

    Returns
    -------
    (pandas.DataFrame, list of str)
        The new table (rows may be removed) and one ``kind@t_s`` text per event, in time order.
    """
    out = frame.copy().reset_index(drop=True)
    t = out[C.T_S].to_numpy(dtype=float)
    ve = out[C.VE_L_MIN].to_numpy(dtype=float, copy=True)
    vo2 = out[C.VO2_ML_MIN].to_numpy(dtype=float, copy=True)
    vco2 = out[C.VCO2_ML_MIN].to_numpy(dtype=float, copy=True)
    rf = out[C.RF_BPM].to_numpy(dtype=float, copy=True)
    ok = _eligible(out)
    for when in protect_t_s or []:
        i = int(np.searchsorted(t, when))
        ok[max(i - 2, 0) : i + 3] = False
    notes: list[tuple[float, str]] = []
    duration_min = float(t[-1] - t[0]) / 60.0 if len(t) > 1 else 0.0

    n_sighs = int(rng.poisson(events.sighs_per_10_min * duration_min / 10.0)) if events.sighs_per_10_min else 0
    for i in _pick(rng, ok, n_sighs, span=2):
        vt_now = ve[i] / rf[i]
        room = min(_limit(C.VE_L_MIN) / ve[i], _limit(C.VT_L) / vt_now, _limit(C.VO2_ML_MIN) / vo2[i])
        f = min(float(rng.uniform(2.0, 3.0)), room)
        if f < 1.5:
            continue
        g_co2 = min(1.0 + 0.6 * (f - 1.0), _limit(C.VCO2_ML_MIN) / vco2[i])  # stored CO2 washed out
        ve[i] *= f
        vo2[i] *= 1.0 + 0.35 * (f - 1.0)
        vco2[i] *= g_co2
        after = float(rng.uniform(0.6, 0.8))  # the breath after a sigh is shallow
        ve[i + 1] *= after
        vo2[i + 1] *= after
        vco2[i + 1] *= after * 0.9
        notes.append((t[i], "sigh"))

    for i in _pick(rng, ok, events.leak_runs, span=20):
        length = int(rng.integers(4, 21))
        f = rng.uniform(0.55, 0.85) * (1.0 + 0.05 * rng.standard_normal(length))
        sl = slice(i, i + length)
        ve[sl] *= f
        vo2[sl] *= f
        vco2[sl] *= f
        notes.append((t[i], f"leak to {t[i + length - 1]:.2f}"))

    for i in _pick(rng, ok, events.impossible_breaths):
        big_ve = min(3.5, _limit(C.VE_L_MIN) / ve[i], _limit(C.VT_L) / (ve[i] / rf[i]))
        if rng.random() < 0.5 and big_ve >= 2.5:
            ve[i] *= big_ve
            vo2[i] *= 1.1
            vco2[i] *= 1.1
            notes.append((t[i], "impossible (VE spike)"))
        else:
            rer = float(rng.uniform(1.8, 2.6))
            vco2[i] = min(rer * vo2[i], _limit(C.VCO2_ML_MIN))
            notes.append((t[i], "impossible (RER)"))

    drop: list[int] = []
    for i in _pick(rng, ok, events.merged_breaths, span=2):
        d0 = t[i] - t[i - 1]
        d1 = t[i + 1] - t[i]
        w0, w1 = d0 / (d0 + d1), d1 / (d0 + d1)
        if (w0 * ve[i] + w1 * ve[i + 1]) * (d0 + d1) / 60.0 > _limit(C.VT_L):  # the two volumes add
            continue
        for values in (ve, vo2, vco2):
            values[i + 1] = w0 * values[i] + w1 * values[i + 1]
        rf[i + 1] = 60.0 / (d0 + d1)
        drop.append(i)
        notes.append((t[i + 1], "merged"))
    for i in _pick(rng, ok, events.dropped_runs, span=3):
        length = int(rng.integers(1, 4))
        drop.extend(range(i, i + length))
        notes.append((t[i], f"lost {length}"))
    out[C.VE_L_MIN] = ve
    out[C.VO2_ML_MIN] = vo2
    out[C.VCO2_ML_MIN] = vco2
    out[C.RF_BPM] = rf
    if drop:
        out = out.drop(index=sorted(set(drop))).reset_index(drop=True)
    notes.sort()
    return out, [f"{text}@{time:.2f}" for time, text in notes]
