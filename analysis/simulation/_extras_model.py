"""Noise-free relations of :class:`~analysis.simulation.extras.ModelExtras` (see
``docs/simulation.md``, "Hard kinds").

Private: arrays in, arrays out, on the simulator's uniform time grid.
"""

from __future__ import annotations

import numpy as np

from analysis import columns as C
from analysis.simulation import _model as M
from analysis.simulation.extras import ModelExtras

#: Oscillating ventilation: how much of the VE swing the exhaled gases carry and how late
#: (assumed; in periodic breathing the gas exchange at the mouth follows the ventilation
#: with a smaller swing and a delay of a few seconds — from memory, no single source).
OSC_VCO2_GAIN, OSC_VCO2_DELAY_S = 0.6, 6.0
OSC_VO2_GAIN, OSC_VO2_DELAY_S = 0.4, 9.0
#: PETCO2 falls in the hyperpnoea of each cycle: relative swing per unit of the VE swing.
OSC_PETCO2_GAIN, OSC_PETCO2_DELAY_S = 0.25, 4.0
#: Largest PETCO2 rise from CO2 retention under a ventilatory ceiling, mmHg (model limit).
MAX_RETENTION_RISE_MMHG = 12.0


def slow_component_ml_min(
    demand_ml_min: np.ndarray, *, vo2_vt1_ml_min: float, fraction: float, tau_s: float, dt_s: float
) -> np.ndarray:
    """Extra VO2 above VT1: ``fraction`` x (demand above the VT1 level), lagged by ``tau_s``."""
    excess = fraction * np.maximum(np.asarray(demand_ml_min, dtype=float) - vo2_vt1_ml_min, 0.0)
    return M.first_order_lag(excess, dt_s=dt_s, tau_s=tau_s, x0=0.0)


def overbreathing_envelope(t_s: np.ndarray, *, t_load_s: float, tau_s: float) -> np.ndarray:
    """1 before the first load starts, then exp(-(t - t_load) / tau)."""
    t = np.asarray(t_s, dtype=float)
    return np.where(t < t_load_s, 1.0, np.exp(-np.maximum(t - t_load_s, 0.0) / tau_s))


def ve_with_ceiling(ve_demand_l_min: np.ndarray, *, ceiling_l_min: float, knee_fraction: float) -> np.ndarray:
    """VE under a ceiling: equal to the demand up to the knee k = knee_fraction x ceiling, then
    k + (ceiling - k) (1 - exp(-(demand - k) / (ceiling - k))): continuous with slope 1 at the
    knee and approaching the ceiling, never reaching it."""
    d = np.asarray(ve_demand_l_min, dtype=float)
    knee = knee_fraction * ceiling_l_min
    room = ceiling_l_min - knee
    bent = knee + room * (1.0 - np.exp(-np.maximum(d - knee, 0.0) / room))
    return np.where(d <= knee, d, bent)


def oscillation(t_s: np.ndarray, *, period_s: float, phase_rad: float, t_stop_s: float) -> np.ndarray:
    """Unit oscillation sin(2 pi t / T + phase), full until ``t_stop_s``, then fading to 0
    over one period with a half-cosine taper."""
    t = np.asarray(t_s, dtype=float)
    wave = np.sin(2.0 * np.pi * t / period_s + phase_rad)
    u = np.clip((t - t_stop_s) / period_s, 0.0, 1.0)
    return wave * 0.5 * (1.0 + np.cos(np.pi * u))


def irregular_oscillation(
    t_s: np.ndarray,
    *,
    period_s: float,
    phase_rad: float,
    t_stop_s: float,
    period_jitter: float,
    amplitude_jitter: float,
    seed: int,
) -> np.ndarray:
    """Like :func:`oscillation` on the grid ``t_s`` (evenly spaced), with the frequency and the
    amplitude wandering slowly (first-order autoregressive, correlation time one period, SDs
    ``period_jitter`` and ``amplitude_jitter`` relative to the mean; the amplitude factor stays
    in 0.3-1.7)."""
    from analysis.simulation.cart_noise import wander

    t = np.asarray(t_s, dtype=float)
    if not (period_jitter or amplitude_jitter) or t.size < 2:
        return oscillation(t, period_s=period_s, phase_rad=phase_rad, t_stop_s=t_stop_s)
    rng = np.random.default_rng([int(seed), 11])
    f = (1.0 + wander(t, sd=period_jitter, tau_s=period_s, rng=rng)) / period_s
    phase = 2.0 * np.pi * np.concatenate([[0.0], np.cumsum(0.5 * (f[1:] + f[:-1]) * np.diff(t))]) + phase_rad
    amp = np.clip(1.0 + wander(t, sd=amplitude_jitter, tau_s=period_s, rng=rng), 0.3, 1.7)
    u = np.clip((t - t_stop_s) / period_s, 0.0, 1.0)
    return np.sin(phase) * amp * 0.5 * (1.0 + np.cos(np.pi * u))


def late_rise(t_s: np.ndarray, *, t_start_s: float, t_end_s: float, fade_s: float = 60.0) -> np.ndarray:
    """0 before ``t_start_s``, ((t - start) / (end - start))^2 up to ``t_end_s``, then fading
    exponentially with ``fade_s``."""
    t = np.asarray(t_s, dtype=float)
    span = max(t_end_s - t_start_s, 1.0)
    rise = np.clip((t - t_start_s) / span, 0.0, 1.0) ** 2
    return np.where(t > t_end_s, np.exp(-(t - t_end_s) / fade_s), rise)


def apply_extras(
    ch: dict[str, np.ndarray],
    t_s: np.ndarray,
    extras: ModelExtras,
    *,
    dt_s: float,
    t_load_s: float,
    t_exercise_s: float,
    t_end_s: float,
    barometric_mmhg: float,
) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
    """Apply the CO2 store, over-breathing, VE ceiling and oscillation to grid channels.

    Returns ``(without_oscillation, final)``: the first is the truth behind the VE/VCO2 slopes
    and breathing reserve, the second what the breaths sample.
    """
    out = {k: np.array(v, dtype=float, copy=True) for k, v in ch.items()}
    if extras.co2_extra_tau_s > 0:
        for name in (C.VCO2_ML_MIN, C.VE_L_MIN):
            out[name] = M.first_order_lag(out[name], dt_s=dt_s, tau_s=extras.co2_extra_tau_s, x0=float(out[name][0]))
    if extras.overbreathing_ve_fraction or extras.overbreathing_co2_fraction or extras.overbreathing_petco2_drop_mmhg:
        h = overbreathing_envelope(t_s, t_load_s=t_load_s, tau_s=extras.overbreathing_tau_s)
        out[C.VE_L_MIN] = out[C.VE_L_MIN] * (1.0 + extras.overbreathing_ve_fraction * h)
        out[C.VCO2_ML_MIN] = out[C.VCO2_ML_MIN] * (1.0 + extras.overbreathing_co2_fraction * h)
        out[C.PETCO2_MMHG] = out[C.PETCO2_MMHG] - extras.overbreathing_petco2_drop_mmhg * h
    if extras.late_ve_rise_fraction:
        start = t_exercise_s + extras.late_ve_rise_start_fraction * (t_end_s - t_exercise_s)
        s = extras.late_ve_rise_fraction * late_rise(t_s, t_start_s=start, t_end_s=t_end_s)
        out[C.VE_L_MIN] = out[C.VE_L_MIN] * (1.0 + s)
        out[C.PETCO2_MMHG] = out[C.PETCO2_MMHG] * (1.0 - 0.5 * s)
    if extras.ve_ceiling_l_min is not None:
        demand = out[C.VE_L_MIN]
        ve = ve_with_ceiling(demand, ceiling_l_min=extras.ve_ceiling_l_min, knee_fraction=extras.ve_knee_fraction)
        # CO2 not breathed off: PaCO2 ~ VCO2 / VA (alveolar ventilation equation, textbook,
        # from memory), so PETCO2 rises in proportion to the ventilation missing.
        rise = np.minimum(out[C.PETCO2_MMHG] * (demand / ve - 1.0), MAX_RETENTION_RISE_MMHG)
        out[C.VE_L_MIN] = ve
        out[C.PETCO2_MMHG] = out[C.PETCO2_MMHG] + rise
    out[C.PETO2_MMHG] = M.peto2_mmhg(out[C.PETCO2_MMHG], out[C.VCO2_ML_MIN] / out[C.VO2_ML_MIN], barometric_mmhg=barometric_mmhg)
    plain = {k: v.copy() for k, v in out.items()}
    if extras.oscillation_period_s is not None and extras.has_oscillation:
        period_s = float(extras.oscillation_period_s)
        amp = extras.oscillation_amplitude_fraction
        t_stop = t_exercise_s + extras.oscillation_end_fraction * (t_end_s - t_exercise_s)

        grid_wave = irregular_oscillation(
            np.asarray(t_s, dtype=float),
            period_s=period_s,
            phase_rad=extras.oscillation_phase_rad,
            t_stop_s=t_stop,
            period_jitter=extras.oscillation_period_jitter,
            amplitude_jitter=extras.oscillation_amplitude_jitter,
            seed=extras.oscillation_seed,
        )

        def wave(delay_s: float) -> np.ndarray:
            t = np.asarray(t_s, dtype=float)
            if not (extras.oscillation_period_jitter or extras.oscillation_amplitude_jitter):
                return oscillation(t - delay_s, period_s=period_s, phase_rad=extras.oscillation_phase_rad, t_stop_s=t_stop)
            return np.interp(t - delay_s, t, grid_wave, left=float(grid_wave[0]))

        out[C.VE_L_MIN] = out[C.VE_L_MIN] * (1.0 + amp * wave(0.0))
        out[C.VCO2_ML_MIN] = out[C.VCO2_ML_MIN] * (1.0 + OSC_VCO2_GAIN * amp * wave(OSC_VCO2_DELAY_S))
        out[C.VO2_ML_MIN] = out[C.VO2_ML_MIN] * (1.0 + OSC_VO2_GAIN * amp * wave(OSC_VO2_DELAY_S))
        out[C.PETCO2_MMHG] = out[C.PETCO2_MMHG] * (1.0 - OSC_PETCO2_GAIN * amp * wave(OSC_PETCO2_DELAY_S))
        out[C.PETO2_MMHG] = M.peto2_mmhg(
            out[C.PETCO2_MMHG], out[C.VCO2_ML_MIN] / out[C.VO2_ML_MIN], barometric_mmhg=barometric_mmhg
        )
    return plain, out
