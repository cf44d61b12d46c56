"""Noise-free model relations of the simulator (see ``docs/simulation.md``).

Private: arrays in, arrays out. Exercise-phase channels are static functions of the lagged
VO2, so the planted VT1, VT2 and VE/VCO2 slope hold exactly in a noise-free series.
"""

from __future__ import annotations

import numpy as np
from scipy.signal import lfilter

from analysis.simulation.profiles import ProtocolSpec, SubjectProfile

#: ACSM metabolic equations (from memory, see /work/shared/references.md): net cost of
#: horizontal and vertical movement, mL O2/kg/min per (m/min) of speed.
_WALK_H, _WALK_V = 0.1, 1.8
_RUN_H, _RUN_V = 0.2, 0.9
#: Speeds below this are walked, at or above it run: the walk-run transition near 2 m/s
#: (common practice, from memory).
RUN_FROM_KMH = 7.2
#: FIO2 of room air (common practice).
FIO2 = 0.2093
#: Water-vapour pressure at 37 °C, mmHg (common practice).
PH2O_MMHG = 47.0


def staged(elapsed_s: np.ndarray, stage_s: float) -> np.ndarray:
    """Elapsed time rounded down to whole stages (continuous when ``stage_s`` is 0).

    The first stage starts at the start value, so step ``k`` adds ``k * stage_s / 60`` minutes
    of increment.
    """
    if stage_s <= 0:
        return elapsed_s
    return np.floor(elapsed_s / stage_s + 1e-9) * stage_s


def treadmill_net_cost_ml_kg_min(speed_kmh: np.ndarray, grade_pct: np.ndarray) -> np.ndarray:
    """Net O2 cost of walking/running (ACSM equations without the 3.5 resting term).

    Walking below :data:`RUN_FROM_KMH`: 0.1*S + 1.8*S*G; running: 0.2*S + 0.9*S*G, with S in
    m/min and G the grade as a fraction (ACSM, from memory). Standing (0 km/h) costs nothing.
    """
    s_m_min = np.asarray(speed_kmh, dtype=float) * 1000.0 / 60.0
    g = np.asarray(grade_pct, dtype=float) / 100.0
    run = np.asarray(speed_kmh) >= RUN_FROM_KMH
    h = np.where(run, _RUN_H, _WALK_H)
    v = np.where(run, _RUN_V, _WALK_V)
    return h * s_m_min + v * s_m_min * g


def demand_ml_min(
    profile: SubjectProfile,
    protocol: ProtocolSpec,
    *,
    work_w: np.ndarray | None = None,
    speed_kmh: np.ndarray | None = None,
    grade_pct: np.ndarray | None = None,
) -> np.ndarray:
    """Steady-state O2 demand of a load: rest + ΔVO2/ΔWR x W (cycle) or rest + ACSM net cost
    x body mass (treadmill)."""
    if protocol.mode == "cycle":
        assert work_w is not None
        return profile.vo2_rest_ml_min + profile.vo2_work_slope_ml_min_w * np.asarray(work_w, dtype=float)
    assert speed_kmh is not None and grade_pct is not None
    return profile.vo2_rest_ml_min + treadmill_net_cost_ml_kg_min(speed_kmh, grade_pct) * profile.body_mass_kg


def first_order_lag(u: np.ndarray, *, dt_s: float, tau_s: float, x0: float) -> np.ndarray:
    """Response of dx/dt = (u - x)/tau to ``u`` sampled every ``dt_s``, starting at ``x0``.

    Exact for an input that is linear between samples (first-order-hold discretisation), so a
    ramp input gives a response that trails it by exactly ``tau_s`` once the transient is over.
    """
    a = np.exp(-dt_s / tau_s)
    b0 = 1.0 - (tau_s / dt_s) * (1.0 - a)
    b1 = (1.0 - a) - b0
    u = np.asarray(u, dtype=float)
    # state before the first sample: steady at x0 with the previous input equal to x0
    zi = np.array([a * x0 + b1 * x0])
    y, _ = lfilter([b0, b1], [1.0, -a], u, zi=zi)
    return y


def vco2_ml_min(profile: SubjectProfile, vo2_ml_min: np.ndarray) -> np.ndarray:
    """VCO2 of the two-line V-slope model: slope ``vco2_slope_below_vt1`` through the resting
    point up to VT1, ``vco2_slope_above_vt1`` above it."""
    vo2 = np.asarray(vo2_ml_min, dtype=float)
    below = profile.vco2_rest_ml_min + profile.vco2_slope_below_vt1 * (vo2 - profile.vo2_rest_ml_min)
    above = profile.vco2_vt1_ml_min + profile.vco2_slope_above_vt1 * (vo2 - profile.vo2_vt1_ml_min)
    return np.where(vo2 <= profile.vo2_vt1_ml_min, below, above)


def vco2_vt2_ml_min(profile: SubjectProfile) -> float | None:
    """VCO2 at VT2 (None when the profile has no RCP)."""
    vo2_vt2 = profile.vo2_vt2_ml_min
    return None if vo2_vt2 is None else float(vco2_ml_min(profile, np.array([vo2_vt2]))[0])


def ve_l_min(profile: SubjectProfile, vco2: np.ndarray) -> np.ndarray:
    """VE = intercept + slope x VCO2 (L/min) up to VT2; the slope is ``rc_ve_factor`` times
    steeper above VT2 (respiratory compensation)."""
    vco2_l = np.asarray(vco2, dtype=float) / 1000.0
    line = profile.ve_intercept_l_min + profile.ve_vco2_slope * vco2_l
    vco2_vt2 = vco2_vt2_ml_min(profile)
    if vco2_vt2 is None:
        return line
    extra = (profile.rc_ve_factor - 1.0) * profile.ve_vco2_slope * np.maximum(vco2_l - vco2_vt2 / 1000.0, 0.0)
    return line + extra


def petco2_mmhg(profile: SubjectProfile, vo2_ml_min: np.ndarray) -> np.ndarray:
    """PETCO2: rises linearly from rest to VT1 by ``petco2_rise_mmhg``, stays level to VT2 and
    falls linearly by ``petco2_fall_mmhg`` from VT2 to VO2max (level after VT1 without RCP)."""
    vo2 = np.asarray(vo2_ml_min, dtype=float)
    p = profile
    rise = np.clip((vo2 - p.vo2_rest_ml_min) / (p.vo2_vt1_ml_min - p.vo2_rest_ml_min), 0.0, 1.0)
    out = p.petco2_rest_mmhg + p.petco2_rise_mmhg * rise
    if p.vo2_vt2_ml_min is not None:
        fall = np.clip((vo2 - p.vo2_vt2_ml_min) / (p.vo2max_ml_min - p.vo2_vt2_ml_min), 0.0, None)
        out = out - p.petco2_fall_mmhg * fall
    return out


def peto2_mmhg(petco2: np.ndarray, rer: np.ndarray, *, barometric_mmhg: float) -> np.ndarray:
    """Alveolar gas equation with PETCO2 for PACO2 (textbook form, from memory):
    PAO2 = FIO2 (PB - 47) - PACO2 (FIO2 + (1 - FIO2) / R)."""
    pio2 = FIO2 * (barometric_mmhg - PH2O_MMHG)
    return pio2 - np.asarray(petco2) * (FIO2 + (1.0 - FIO2) / np.asarray(rer))


def hr_bpm(profile: SubjectProfile, vo2_ml_min: np.ndarray) -> np.ndarray:
    """HR linear in (lagged) VO2 from ``hr_rest_bpm`` at rest to ``hr_max_bpm`` at VO2max."""
    p = profile
    frac = (np.asarray(vo2_ml_min, dtype=float) - p.vo2_rest_ml_min) / (p.vo2max_ml_min - p.vo2_rest_ml_min)
    return p.hr_rest_bpm + (p.hr_max_bpm - p.hr_rest_bpm) * frac


def spo2_pct(profile: SubjectProfile, vo2_ml_min: np.ndarray) -> np.ndarray:
    """SpO2 falls by ``spo2_drop_pct`` x (fraction of the VO2 reserve)^2."""
    p = profile
    frac = np.clip(
        (np.asarray(vo2_ml_min, dtype=float) - p.vo2_rest_ml_min) / (p.vo2max_ml_min - p.vo2_rest_ml_min), 0.0, 1.0
    )
    return p.spo2_rest_pct - p.spo2_drop_pct * frac**2


def ve_peak_l_min(profile: SubjectProfile) -> float:
    """VE the model reaches at VO2max, L/min."""
    return float(ve_l_min(profile, vco2_ml_min(profile, np.array([profile.vo2max_ml_min])))[0])


def ve_rest_l_min(profile: SubjectProfile) -> float:
    """VE at rest, L/min."""
    return float(ve_l_min(profile, np.array([profile.vco2_rest_ml_min]))[0])


def rf_bpm(profile: SubjectProfile, ve: np.ndarray) -> np.ndarray:
    """Breathing frequency from VE: rf_rest + (rf_max - rf_rest) x q^1.5, q the fraction of the
    VE range from rest to peak, so tidal volume (VE / rf) rises first and rf later."""
    ve_rest = ve_rest_l_min(profile)
    q = np.clip((np.asarray(ve, dtype=float) - ve_rest) / (ve_peak_l_min(profile) - ve_rest), 0.0, 1.0)
    return profile.rf_rest_bpm + (profile.rf_max_bpm - profile.rf_rest_bpm) * q**1.5


def recovery_decay(end_value: float, target: float, t_since_end_s: np.ndarray, tau_s: float) -> np.ndarray:
    """Exponential return from ``end_value`` to ``target`` with time constant ``tau_s``."""
    return target + (end_value - target) * np.exp(-np.asarray(t_since_end_s, dtype=float) / tau_s)
