"""Truth keys of sessions simulated with :class:`~analysis.simulation.extras.ModelExtras`.

Private: computed from the noise-free record on the simulator's grid (see
``docs/simulation.md``, "Extended truth").
"""

from __future__ import annotations

import numpy as np

from analysis import columns as C
from analysis.simulation.extras import ModelExtras

#: Oscillating ventilation counts as present when it lasts at least this fraction of the
#: incremental phase (Leite et al. 2003 / Corrà et al. 2006: >= 60 % of the exercise, from memory).
OSCILLATION_MIN_FRACTION = 0.6


def _ols_slope(x: np.ndarray, y: np.ndarray) -> float:
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    xc = x - x.mean()
    return float(np.dot(xc, y - y.mean()) / np.dot(xc, xc))


def extended_truth(
    grid_s: np.ndarray,
    plain: dict[str, np.ndarray],
    *,
    extras: ModelExtras,
    t_warmup_s: float,
    t_exercise_s: float,
    t_end_s: float,
    t_vt2_s: float | None,
    mvv_l_min: float | None,
) -> dict[str, float]:
    """Truth beyond the planted model parameters.

    Parameters
    ----------
    grid_s : numpy.ndarray
        Uniform time grid, s.
    plain : dict
        Noise-free channels on the grid with every extra applied except the oscillation.
    extras : ModelExtras
    t_warmup_s, t_exercise_s, t_end_s : float
        End of rest, start of the incremental phase and end of exercise, s.
    t_vt2_s : float or None
        Time of VT2 when the test has one.
    mvv_l_min : float or None
        Maximal voluntary ventilation, L/min.

    Returns
    -------
    dict
        ``truth_*`` keys (all numbers; 1.0/0.0 for yes/no).
    """
    t = np.asarray(grid_s, dtype=float)
    ve = plain[C.VE_L_MIN]
    vco2_l = plain[C.VCO2_ML_MIN] / 1000.0
    vo2 = plain[C.VO2_ML_MIN]
    rest = t < t_warmup_s
    ex = (t >= t_exercise_s) & (t <= t_end_s)
    out: dict[str, float] = {
        "truth_ve_vco2_slope_whole_exercise": _ols_slope(vco2_l[ex], ve[ex]),
        "truth_rer_rest": float(np.mean(plain[C.VCO2_ML_MIN][rest] / vo2[rest])),
        "truth_petco2_rest_mmhg": float(np.mean(plain[C.PETCO2_MMHG][rest])),
        "truth_ve_vco2_rest": float(np.mean(ve[rest] / vco2_l[rest])),
    }
    if t_vt2_s is not None:
        to_vt2 = ex & (t <= t_vt2_s)
        out["truth_ve_vco2_slope_to_vt2"] = _ols_slope(vco2_l[to_vt2], ve[to_vt2])
    last_30 = (t >= t_end_s - 30.0) & (t <= t_end_s)
    out["truth_vo2peak_30s_ml_min"] = float(np.mean(vo2[last_30]))
    ve_peak = float(np.interp(t_end_s, t, ve))
    out["truth_ve_peak_l_min"] = ve_peak
    petco2 = plain[C.PETCO2_MMHG]
    out["truth_petco2_end_mmhg"] = float(np.interp(t_end_s, t, petco2))
    out["truth_petco2_max_rise_late_mmhg"] = float(np.interp(t_end_s, t, petco2) - np.min(petco2[ex]))
    spo2 = plain[C.SPO2_PCT]
    out["truth_spo2_rest_pct"] = float(np.mean(spo2[rest]))
    out["truth_spo2_min_pct"] = float(np.min(spo2[ex | rest]))
    out["truth_spo2_fall_pct"] = out["truth_spo2_rest_pct"] - out["truth_spo2_min_pct"]
    if mvv_l_min is not None:
        out["truth_mvv_l_min"] = float(mvv_l_min)
        out["truth_breathing_reserve_l_min"] = float(mvv_l_min - ve_peak)
        out["truth_breathing_reserve_pct"] = float(100.0 * (mvv_l_min - ve_peak) / mvv_l_min)
    if extras.has_oscillation:
        frac = float(extras.oscillation_end_fraction)
        out["truth_oscillation_present"] = 1.0 if frac >= OSCILLATION_MIN_FRACTION else 0.0
        out["truth_oscillation_period_s"] = float(extras.oscillation_period_s or 0.0)
        out["truth_oscillation_amplitude_fraction"] = float(extras.oscillation_amplitude_fraction)
        out["truth_oscillation_exercise_fraction"] = frac
        out["truth_oscillation_end_t_s"] = round(t_exercise_s + frac * (t_end_s - t_exercise_s), 2)
    else:
        out["truth_oscillation_present"] = 0.0
    out["truth_slow_component_fraction"] = float(extras.slow_component_fraction)
    out["truth_co2_extra_tau_s"] = float(extras.co2_extra_tau_s)
    return out
