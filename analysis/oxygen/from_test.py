"""The oxygen step of an analysis: the per-state comparison at rest, VT1, VT2 and peak of a test."""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import TidemarkError
from analysis.numeric import column_mean
from analysis.oxygen.comparison import MODEL_LABELS, OxygenComparison, oxygen_comparison
from analysis.oxygen.content import SPO2_CONCERN_PCT
from analysis.oxygen.states import StateConditions, StatePoint

#: Half-width (s) of the window of averaged rows whose SpO2 is averaged at VT1, VT2 and peak.
SPO2_HALF_WINDOW_S = 15.0

#: Reader-facing method sentence of the SpO2 per state (shown under ``methods``).
SPO2_METHOD = (
    "arterial saturation from SpO2: the settings' value where set, else the mean of the session's "
    "SpO2 column over the rest phase or within ±15 s of VT1, VT2 and peak; "
    "states without either use PaO2 on the curve"
)


def oxygen_method(comparison: OxygenComparison) -> str:
    """The reader-facing method sentence of the comparison, naming its curve model."""
    curve = MODEL_LABELS.get(str(comparison.model), "published curve model")
    return (
        "Fick a-vO2 difference (from VO2 and cardiac output) compared with what the haemoglobin "
        f"dissociation curve allows ({curve})"
    )


def spo2_by_state(
    avg: pd.DataFrame, phases_avg: np.ndarray, times_s: dict[str, float]
) -> tuple[dict[str, float], tuple[str, ...]]:
    """Mean SpO2 (%) of the session's ``spo2_pct`` column around each oxygen state.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (``t_s``, ``spo2_pct``).
    phases_avg : numpy.ndarray
        Phase label of every averaged row.
    times_s : dict of str to float
        State name -> time (s) of the state (VT1, VT2, peak).

    Returns
    -------
    (dict of str to float, tuple of str)
        ``"rest"``: mean over the rest phase; every state in ``times_s``: mean of the averaged
        rows within ±15 s of its time (a 30-s window, as for peak values; common practice).
        States without finite SpO2 values are left out; an empty dict without the column.
        The notes name each state whose mean lies outside 50-100 % (then left out).
    """
    if C.SPO2_PCT not in avg.columns:
        return {}, ()
    spo2 = avg[C.SPO2_PCT].to_numpy(dtype=float)
    t = avg[C.T_S].to_numpy(dtype=float)
    masks = {"rest": phases_avg == "rest"}
    masks.update({name: np.abs(t - t_s) <= SPO2_HALF_WINDOW_S for name, t_s in times_s.items()})
    out: dict[str, float] = {}
    notes: list[str] = []
    for name, mask in masks.items():
        values = spo2[mask & np.isfinite(spo2)]
        if values.size == 0:
            continue
        mean = float(values.mean())
        if 50.0 <= mean <= 100.0:
            out[name] = mean
        else:
            notes.append(f"Oxygen: SpO2 around {name} averages {mean:.0f} %, outside 50-100 %: not used.")
    return out, tuple(notes)


def oxygen_from_test(
    avg: pd.DataFrame,
    *,
    phases_avg: np.ndarray,
    hb_g_dl: float | None,
    barometric_mmhg: float | None = None,
    options: dict[str, Any],
    peak: Any,
    vt1: Any | None,
    vt2: Any | None,
) -> tuple[OxygenComparison | None, tuple[str, ...], dict[str, str]]:
    """Per-state oxygen comparison (:func:`oxygen_comparison`) for the states of one test.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (index 0..n-1).
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    hb_g_dl : float or None, keyword-only
        Haemoglobin; without it no comparison is made (``None``).
    barometric_mmhg : float or None, keyword-only
        The test's barometric pressure (metadata), used unless the options set ``pb_mmhg``.
    options : dict, keyword-only
        ``AnalysisSettings.oxygen`` (model, PaO2, SpO2, conditions, measured Q per state, ...).
    peak, vt1, vt2 : records with ``t_s``, ``vo2_ml_min``, ``hr_bpm``, ``pct_vo2_peak``, keyword-only
        The peak and threshold values of the test.

    Returns
    -------
    (OxygenComparison or None, tuple of str, dict of str to str)
        The comparison, notes in plain words, and the method sentences of this step.
    """
    if hb_g_dl is None:
        return None, (), {}
    opts = dict(options)
    measured_q = opts.pop("q_l_min", {}) or {}
    state_spo2 = opts.pop("spo2_pct_by_state", {}) or {}
    conditions = opts.pop("conditions", None)
    if conditions is not None:
        opts["conditions"] = {k: StateConditions(**v) for k, v in conditions.items()}
    if opts.get("arterial_conditions") is not None:
        art = opts["arterial_conditions"]
        per_state = all(isinstance(v, dict) for v in art.values())  # {"peak": {...}} or one {...} for all
        opts["arterial_conditions"] = (
            {k: StateConditions(**v) for k, v in art.items()} if per_state else StateConditions(**art)
        )
    if opts.get("pb_mmhg") is None and barometric_mmhg is not None:
        opts["pb_mmhg"] = float(barometric_mmhg)  # the test's own barometric pressure
    opts = {k: v for k, v in opts.items() if v is not None}
    notes: tuple[str, ...] = ()
    if opts.get("spo2_pct") is not None:
        column_spo2: dict[str, float] = {}  # a set SpO2 overrides the column
    else:
        times = {name: p.t_s for name, p in (("vt1", vt1), ("vt2", vt2), ("peak", peak)) if p is not None}
        column_spo2, notes = spo2_by_state(avg, phases_avg, times)
    states: list[tuple[str, float, float | None, float | None, float | None]] = []
    at_rest = phases_avg == "rest"
    vo2_rest = column_mean(avg, C.VO2_ML_MIN, at_rest)
    if vo2_rest is not None:
        vco2_rest = column_mean(avg, C.VCO2_ML_MIN, at_rest)
        rer_rest = None if vco2_rest is None else vco2_rest / vo2_rest
        rest_pct = 100.0 * vo2_rest / peak.vo2_ml_min
        states.append(("rest", vo2_rest, column_mean(avg, C.HR_BPM, at_rest), rest_pct, rer_rest))
    for name, p in (("vt1", vt1), ("vt2", vt2), ("peak", peak)):
        if p is not None:
            states.append((name, p.vo2_ml_min, p.hr_bpm, p.pct_vo2_peak, p.rer))
    try:
        points = [
            StatePoint(
                name, vo2, hr_bpm=hr, pct_vo2_peak=pct, q_l_min=measured_q.get(name),
                spo2_pct=state_spo2.get(name, column_spo2.get(name)),
                rer=rer if rer is not None and 0.5 <= rer <= 2.0 else None,
            )
            for name, vo2, hr, pct, rer in states
        ]
        comparison = oxygen_comparison(points, hb_g_dl=hb_g_dl, **opts)
    except (TidemarkError, TypeError) as exc:
        return None, (*notes, f"Oxygen comparison not made: {exc}"), {}
    low_spo2 = tuple(
        dict.fromkeys(
            f"Oxygen: SpO2 {100.0 * s.sao2:g} % is below {SPO2_CONCERN_PCT:g} %: arterial desaturation or a poor "
            "oximeter signal; check probe position and, where available, arterial blood."
            for s in comparison.states
            if s.sao2_source == "spo2" and 100.0 * s.sao2 < SPO2_CONCERN_PCT
        )
    )
    methods = {"oxygen": oxygen_method(comparison)}
    if any(s.sao2_source == "spo2" for s in comparison.states):
        methods["oxygen_spo2"] = SPO2_METHOD
    return comparison, (*notes, *low_spo2), methods
