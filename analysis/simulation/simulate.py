"""``simulate_session``: a breath-by-breath exercise test with known ground truth."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter, require
from analysis.session import Session
from analysis.simulation import _extras_model as X
from analysis.simulation import _model as M
from analysis.simulation._breath_events import plant_events
from analysis.simulation._truth_extended import extended_truth
from analysis.simulation.cart_noise import CartNoise, add_cart_noise
from analysis.simulation.extras import BreathEvents, ModelExtras
from analysis.simulation.profiles import ProtocolSpec, SubjectProfile

#: The fictional lab named in every simulated session's metadata.
LAB_NAME = "Saltmarsh Exercise Lab"
#: Step of the internal time grid, s.
GRID_DT_S = 0.5
#: Recovery time constants of VCO2 and VE relative to VO2 (CO2 stores empty more slowly).
VCO2_TAU_RATIO = 1.35
VE_TAU_RATIO = 1.6
#: Noise at ``noise=1`` (standard deviations; from memory, Lamarra et al. 1987 style: VO2
#: breath noise of roughly 7 % of the signal).
VOLUME_SD = 0.07  # breath volume: VE, and 0.7 of it on VO2 and VCO2
VOLUME_TO_GAS = 0.7
GAS_SHARED_SD = 0.03  # end-expiratory lung-volume changes, shared by VO2 and VCO2
VO2_OWN_SD = 0.04
VCO2_OWN_SD = 0.025
BREATH_JITTER_SD = 0.08  # breath duration, relative
PETCO2_SD_MMHG = 0.8
PETO2_SD_MMHG = 0.8
HR_SD_BPM = 1.0
SPO2_SD_PCT = 0.4
#: Model limits: peak VE and peak tidal volume a profile may ask for (generous adult values,
#: common practice), and the largest tidal volume a noisy breath may show (a longer breath is
#: counted as faster beyond it).
MAX_MODEL_VE_L_MIN = 220.0
MAX_MODEL_VT_L = 4.5
MAX_BREATH_VT_L = 6.0
#: Artifact breaths are at least this many breaths apart and away from the record's ends.
ARTIFACT_SPACING = 15
ARTIFACT_EDGE = 5

PHASE_REST, PHASE_WARMUP, PHASE_EXERCISE, PHASE_RECOVERY = C.PHASES


@dataclass(frozen=True)
class _Timeline:
    """The noise-free exercise course on the internal grid and its key instants."""

    t_s: np.ndarray  # grid up to the end of exercise (inclusive)
    vo2_ml_min: np.ndarray  # lagged VO2 on the grid
    t_warmup_s: float
    t_exercise_s: float
    t_end_s: float
    t_total_s: float
    vo2_end_ml_min: float


def _loads(protocol: ProtocolSpec, t_s: np.ndarray, t_end_s: float = np.inf) -> dict[str, np.ndarray]:
    """Work rate (cycle) or speed and grade (treadmill) at times ``t_s``."""
    t = np.asarray(t_s, dtype=float)
    t_warm = protocol.rest_s
    t_ex = protocol.rest_s + protocol.warmup_s
    minutes = M.staged(np.maximum(t - t_ex, 0.0), protocol.stage_s) / 60.0
    rest = t < t_warm
    warm = (t >= t_warm) & (t < t_ex)
    rec = t > t_end_s
    if protocol.mode == "cycle":
        start_w = protocol.warmup_w if protocol.start_w is None else protocol.start_w
        work = start_w + protocol.ramp_w_per_min * minutes
        work = np.where(warm, protocol.warmup_w, work)
        work = np.where(rest, 0.0, work)
        work = np.where(rec, protocol.recovery_w, work)
        return {C.WORK_W: work}
    speed = protocol.start_speed_kmh + protocol.speed_step_kmh_per_min * minutes
    grade = protocol.start_grade_pct + protocol.grade_step_pct_per_min * minutes
    speed = np.where(warm, protocol.warmup_speed_kmh, speed)
    grade = np.where(warm, protocol.warmup_grade_pct, grade)
    speed = np.where(rest, 0.0, np.where(rec, protocol.recovery_speed_kmh, speed))
    grade = np.where(rest, 0.0, np.where(rec, protocol.recovery_grade_pct, grade))
    return {C.SPEED_KMH: speed, C.GRADE_PCT: grade}


def _demand(profile: SubjectProfile, protocol: ProtocolSpec, loads: dict[str, np.ndarray]) -> np.ndarray:
    return M.demand_ml_min(
        profile,
        protocol,
        work_w=loads.get(C.WORK_W),
        speed_kmh=loads.get(C.SPEED_KMH),
        grade_pct=loads.get(C.GRADE_PCT),
    )


def _first_crossing(t: np.ndarray, y: np.ndarray, level: float, start: int) -> float | None:
    """First time at or after index ``start`` where ``y`` reaches ``level`` (linear between
    samples), or ``None``."""
    hits = np.flatnonzero(y[start:] >= level)
    if hits.size == 0:
        return None
    i = start + int(hits[0])
    if i == 0 or y[i - 1] >= level:
        return float(t[i])
    frac = (level - y[i - 1]) / (y[i] - y[i - 1])
    return float(t[i - 1] + frac * (t[i] - t[i - 1]))


def _timeline(profile: SubjectProfile, protocol: ProtocolSpec, extras: ModelExtras | None = None) -> _Timeline:
    t_warm = protocol.rest_s
    t_ex = protocol.rest_s + protocol.warmup_s
    t = np.arange(0.0, t_ex + protocol.max_exercise_s + GRID_DT_S, GRID_DT_S)
    loads = _loads(protocol, t)
    demand = _demand(profile, protocol, loads)
    start = int(np.searchsorted(t, t_ex))
    warm_demand = float(demand[start - 1]) if protocol.warmup_s > 0 else profile.vo2_rest_ml_min
    require(
        warm_demand < profile.vo2_vt1_ml_min,
        "warmup load",
        f"a warm-up below this person's VT1 (VO2 {profile.vo2_vt1_ml_min:.0f} mL/min)",
        f"a warm-up needing {warm_demand:.0f} mL/min",
    )
    ve_peak = M.ve_peak_l_min(profile)
    require(
        ve_peak <= MAX_MODEL_VE_L_MIN,
        "ve_vco2_slope",
        f"a ventilation at VO2max of at most {MAX_MODEL_VE_L_MIN:g} L/min (lower the VE/VCO2 slope, "
        "rc_ve_factor or rer_peak)",
        f"{profile.ve_vco2_slope} (peak VE would be {ve_peak:.0f} L/min)",
    )
    require(
        ve_peak / profile.rf_max_bpm <= MAX_MODEL_VT_L,
        "rf_max_bpm",
        f"high enough that the peak tidal volume stays at or below {MAX_MODEL_VT_L:g} L",
        f"{profile.rf_max_bpm} (peak tidal volume would be {ve_peak / profile.rf_max_bpm:.1f} L)",
    )
    plateau = profile.plateau and protocol.stop == "max"
    lag_input = np.minimum(demand, profile.vo2max_ml_min) if plateau else demand
    vo2 = M.first_order_lag(lag_input, dt_s=GRID_DT_S, tau_s=profile.tau_on_s, x0=profile.vo2_rest_ml_min)
    if extras is not None and extras.slow_component_fraction > 0:
        vo2 = vo2 + X.slow_component_ml_min(
            lag_input,
            vo2_vt1_ml_min=profile.vo2_vt1_ml_min,
            fraction=extras.slow_component_fraction,
            tau_s=extras.slow_component_tau_s,
            dt_s=GRID_DT_S,
        )
        if plateau:
            vo2 = np.minimum(vo2, profile.vo2max_ml_min)

    if protocol.stop == "max" and plateau:
        t_cap = _first_crossing(t, demand, profile.vo2max_ml_min, start)
        t_end = None if t_cap is None else t_cap + profile.plateau_s
        if t_end is not None and t_end > t[-1]:
            t_end = None
    elif protocol.stop == "max":
        t_end = _first_crossing(t, vo2, profile.vo2max_ml_min, start)
    elif protocol.stop == "fraction":
        t_end = _first_crossing(t, vo2, protocol.stop_fraction * profile.vo2max_ml_min, start)
    else:
        rer = M.vco2_ml_min(profile, vo2) / vo2
        t_end = _first_crossing(t, rer, protocol.stop_rer, start)
    if t_end is None:
        raise InvalidParameter(
            "protocol",
            f"a protocol that reaches its stop rule ('{protocol.stop}') within max_exercise_s "
            f"= {protocol.max_exercise_s:g} s for this person (use a steeper ramp)",
            protocol.describe(),
        )
    end_loads = _loads(protocol, np.array([t_end]))
    for name, value in end_loads.items():
        limit = C.COLUMNS[name].flag_above
        if limit is None:  # no upper limit for this load
            continue
        require(
            float(value[0]) <= limit,
            "protocol",
            f"a protocol whose {C.COLUMNS[name].label.lower()} stays at or below {limit:g} "
            f"{C.COLUMNS[name].unit} before it stops (use a gentler ramp or another start)",
            f"{protocol.describe()} (reaches {float(value[0]):.0f} {C.COLUMNS[name].unit})",
        )
    keep = t < t_end
    vo2_end = float(np.interp(t_end, t, vo2))
    grid_t = np.append(t[keep], t_end)
    grid_vo2 = np.append(vo2[keep], vo2_end)
    return _Timeline(
        t_s=grid_t,
        vo2_ml_min=grid_vo2,
        t_warmup_s=t_warm,
        t_exercise_s=t_ex,
        t_end_s=float(t_end),
        t_total_s=float(t_end + protocol.recovery_s),
        vo2_end_ml_min=vo2_end,
    )


def _channels(profile: SubjectProfile, protocol: ProtocolSpec, line: _Timeline, t_s: np.ndarray) -> dict[str, np.ndarray]:
    """Noise-free channels at times ``t_s`` (exercise: static relations of the lagged VO2;
    recovery: exponential returns to the recovery-load steady state)."""
    t = np.asarray(t_s, dtype=float)
    p = profile
    ex = t <= line.t_end_s
    vo2 = np.interp(t, line.t_s, line.vo2_ml_min)
    vco2 = M.vco2_ml_min(p, vo2)
    ve = M.ve_l_min(p, vco2)
    hr = M.hr_bpm(p, vo2)
    if not ex.all():
        tr = t[~ex] - line.t_end_s
        rec_loads = _loads(protocol, np.array([line.t_end_s + 1.0]), line.t_end_s)
        vo2_target = float(_demand(p, protocol, rec_loads)[0])
        vco2_target = float(M.vco2_ml_min(p, np.array([vo2_target]))[0])
        ve_target = float(M.ve_l_min(p, np.array([vco2_target]))[0])
        hr_target = float(M.hr_bpm(p, np.array([vo2_target]))[0])
        end = np.array([line.vo2_end_ml_min])
        vco2_end = float(M.vco2_ml_min(p, end)[0])
        ve_end = float(M.ve_l_min(p, np.array([vco2_end]))[0])
        hr_end = float(M.hr_bpm(p, end)[0])
        vo2[~ex] = M.recovery_decay(line.vo2_end_ml_min, vo2_target, tr, p.tau_off_s)
        vco2[~ex] = M.recovery_decay(vco2_end, vco2_target, tr, VCO2_TAU_RATIO * p.tau_off_s)
        ve[~ex] = M.recovery_decay(ve_end, ve_target, tr, VE_TAU_RATIO * p.tau_off_s)
        hr[~ex] = M.recovery_decay(hr_end, hr_target, tr, p.hr_tau_off_s)
    petco2 = M.petco2_mmhg(p, vo2)
    peto2 = M.peto2_mmhg(petco2, vco2 / vo2, barometric_mmhg=protocol.barometric_mmhg)
    out = {
        C.VO2_ML_MIN: vo2,
        C.VCO2_ML_MIN: vco2,
        C.VE_L_MIN: ve,
        C.HR_BPM: hr,
        C.RF_BPM: M.rf_bpm(p, ve),
        C.PETO2_MMHG: peto2,
        C.PETCO2_MMHG: petco2,
        C.SPO2_PCT: M.spo2_pct(p, vo2),
    }
    out.update(_loads(protocol, t, line.t_end_s))
    return out


def _extended_grid(
    profile: SubjectProfile, protocol: ProtocolSpec, line: _Timeline, extras: ModelExtras
) -> tuple[np.ndarray, dict[str, np.ndarray], dict[str, np.ndarray]]:
    """The whole record on the internal grid with the extras applied: ``(grid, without the
    oscillation, final)``."""
    grid = np.arange(0.0, line.t_total_s + GRID_DT_S, GRID_DT_S)
    base = _channels(profile, protocol, line, grid)
    plain, final = X.apply_extras(
        base,
        grid,
        extras,
        dt_s=GRID_DT_S,
        t_load_s=line.t_warmup_s,
        t_exercise_s=line.t_exercise_s,
        t_end_s=line.t_end_s,
        barometric_mmhg=protocol.barometric_mmhg,
    )
    return grid, plain, final


_Extended = tuple[np.ndarray, dict[str, np.ndarray], dict[str, np.ndarray]]


def _channels_at(
    profile: SubjectProfile,
    protocol: ProtocolSpec,
    line: _Timeline,
    t_s: np.ndarray,
    extras: ModelExtras | None,
    extended: _Extended | None = None,
) -> dict[str, np.ndarray]:
    """Noise-free channels at times ``t_s``: the base model, or the extended grid sampled
    there (loads are evaluated exactly, so steps stay steps)."""
    if extras is None:
        return _channels(profile, protocol, line, t_s)
    t = np.asarray(t_s, dtype=float)
    grid, _, final = extended if extended is not None else _extended_grid(profile, protocol, line, extras)
    loads = _loads(protocol, t, line.t_end_s)
    return {k: (loads[k] if k in loads else np.interp(t, grid, v)) for k, v in final.items()}


def _breath_times(profile: SubjectProfile, protocol: ProtocolSpec, line: _Timeline, *, rng: np.random.Generator, noise: float) -> np.ndarray:
    """Breath end times: breath k ends where the accumulated breathing phase (integral of
    rf / 60) reaches the sum of k jittered breath lengths. Rounded to 0.01 s."""
    grid = np.arange(0.0, line.t_total_s + GRID_DT_S, GRID_DT_S)
    rf = _channels(profile, protocol, line, grid)[C.RF_BPM]
    phase = np.concatenate([[0.0], np.cumsum(0.5 * (rf[1:] + rf[:-1]) / 60.0 * np.diff(grid))])
    n_max = int(phase[-1] * 1.6) + 10
    lengths = 1.0 + np.clip(BREATH_JITTER_SD * noise * rng.standard_normal(n_max), -0.6, 1.5)
    targets = np.cumsum(lengths)
    targets = targets[targets <= phase[-1]]
    t = np.round(np.interp(targets, phase, grid), 2)
    # keep breaths strictly increasing after rounding (a breath lasts at least 0.3 s)
    keep = np.concatenate([[True], np.diff(t) >= 0.3])
    return t[keep]


def _phase_labels(line: _Timeline, t: np.ndarray) -> np.ndarray:
    labels = np.full(t.shape, PHASE_EXERCISE, dtype=object)
    labels[t < line.t_exercise_s] = PHASE_WARMUP
    labels[t < line.t_warmup_s] = PHASE_REST
    labels[t > line.t_end_s] = PHASE_RECOVERY
    return labels


def _markers(phases: np.ndarray) -> np.ndarray:
    """A marker text on the first breath of each phase after rest."""
    text = {PHASE_WARMUP: "warm-up start", PHASE_EXERCISE: "ramp start", PHASE_RECOVERY: "exercise stopped"}
    out = np.full(phases.shape, "", dtype=object)
    for i in range(1, len(phases)):
        if phases[i] != phases[i - 1]:
            out[i] = text.get(phases[i], "")
    return out


def _inject_artifacts(frame: pd.DataFrame, *, count: int, rng: np.random.Generator) -> list[float]:
    """Turn ``count`` breaths into coughs (VE x2-3, gases x1.8-2.6) or swallows (all x0.3-0.5).

    A cough's extra volume is split between a deeper and a faster breath (tidal volume and
    breathing frequency each x sqrt of the VE factor). A cough is replaced by a swallow where
    it would push a value past the flag limits of :mod:`analysis.columns`, so artifact breaths
    never make a file unreadable. Returns the times of the changed breaths; nothing in the
    table marks them.
    """
    n = len(frame)
    candidates = rng.permutation(np.arange(ARTIFACT_EDGE, max(n - ARTIFACT_EDGE, ARTIFACT_EDGE)))
    chosen: list[int] = []
    for i in candidates:
        if len(chosen) == count:
            break
        if all(abs(int(i) - j) >= ARTIFACT_SPACING for j in chosen):
            chosen.append(int(i))
    require(len(chosen) == count, "artifacts", f"at most what fits in {n} breaths", count)
    chosen.sort()
    ve = frame[C.VE_L_MIN].to_numpy(copy=True)
    vo2 = frame[C.VO2_ML_MIN].to_numpy(copy=True)
    vco2 = frame[C.VCO2_ML_MIN].to_numpy(copy=True)
    rf = frame[C.RF_BPM].to_numpy(copy=True)
    vt = ve / rf
    # the upper flag limit of each column (none: no limit)
    top = {n: math.inf if c.flag_above is None else c.flag_above for n, c in C.COLUMNS.items()}
    for i in chosen:
        cough = rng.random() < 0.6
        f_ve, f_gas = rng.uniform(2.0, 3.0), rng.uniform(1.8, 2.6)
        f_swallow, f_swallow_gas, f_co2 = rng.uniform(0.3, 0.5), rng.uniform(0.9, 1.1), rng.uniform(0.95, 1.05)
        fits = (
            ve[i] * f_ve < 0.95 * top[C.VE_L_MIN]
            and vo2[i] * f_gas < 0.95 * top[C.VO2_ML_MIN]
            and vco2[i] * f_gas * f_co2 < 0.95 * top[C.VCO2_ML_MIN]
            and rf[i] * np.sqrt(f_ve) < 0.95 * top[C.RF_BPM]
            and vt[i] * np.sqrt(f_ve) < 0.95 * top[C.VT_L]
        )
        if not (cough and fits):  # swallow or interrupted breath: a small one
            f_ve = f_swallow
            f_gas = f_swallow * f_swallow_gas
        ve[i] *= f_ve
        vo2[i] *= f_gas
        vco2[i] *= f_gas * f_co2
        if f_ve > 1.0:
            rf[i] *= np.sqrt(f_ve)
    frame[C.VE_L_MIN] = ve
    frame[C.VO2_ML_MIN] = vo2
    frame[C.VCO2_ML_MIN] = vco2
    frame[C.RF_BPM] = rf
    return [float(frame[C.T_S].iloc[i]) for i in chosen]


def _truth(profile: SubjectProfile, protocol: ProtocolSpec, line: _Timeline) -> dict[str, float | str]:
    p = profile
    truth: dict[str, float | str] = {}
    start = int(np.searchsorted(line.t_s, line.t_exercise_s))
    for key, vo2_at in (("vt1", p.vo2_vt1_ml_min), ("vt2", p.vo2_vt2_ml_min)):
        if vo2_at is None:
            continue
        t_at = _first_crossing(line.t_s, line.vo2_ml_min, vo2_at, start)
        if t_at is None:  # the test stopped before this threshold
            continue
        truth[f"truth_{key}_t_s"] = round(t_at, 2)
        truth[f"truth_{key}_vo2_ml_min"] = float(vo2_at)
    truth["truth_vo2max_ml_min"] = float(p.vo2max_ml_min)
    truth["truth_vo2peak_ml_min"] = line.vo2_end_ml_min
    vco2_end = float(M.vco2_ml_min(p, np.array([line.vo2_end_ml_min]))[0])
    truth["truth_rer_peak"] = vco2_end / line.vo2_end_ml_min
    truth["truth_exercise_end_t_s"] = round(line.t_end_s, 2)
    end_loads = _loads(protocol, np.array([line.t_end_s]))
    for name, values in end_loads.items():
        truth[f"truth_{name.replace('_', '_peak_', 1)}"] = float(values[0])
    truth["truth_ve_vco2_slope"] = float(p.ve_vco2_slope)
    truth["truth_vco2_slope_below_vt1"] = float(p.vco2_slope_below_vt1)
    truth["truth_vco2_slope_above_vt1"] = float(p.vco2_slope_above_vt1)
    if protocol.mode == "cycle":
        truth["truth_vo2_work_slope_ml_min_w"] = float(p.vo2_work_slope_ml_min_w)
    truth["truth_plateau"] = 1.0 if (p.plateau and protocol.stop == "max") else 0.0
    truth["truth_tau_on_s"] = float(p.tau_on_s)
    return truth


def _mvv_l_min(profile: SubjectProfile, meta: dict[str, object]) -> float | None:
    """MVV measured, else FEV1 x 40 (common practice; ATS/ACCP 2003), else None."""
    if profile.mvv_l_min is not None:
        return float(profile.mvv_l_min)
    fev1 = meta.get("fev1_l")
    return None if fev1 is None else 40.0 * float(fev1)  # type: ignore[arg-type]


def noise_free_course(
    profile: SubjectProfile,
    protocol: ProtocolSpec,
    t_s: np.ndarray | list[float],
    *,
    extras: ModelExtras | None = None,
) -> pd.DataFrame:
    """The model's noise-free values at chosen times (no breath noise, no artifacts).

    Useful to draw the truth behind a simulated session or to measure its noise.

    Parameters
    ----------
    profile : SubjectProfile
    protocol : ProtocolSpec
    t_s : array_like
        Times in s from the start of the record (0 to the end of recovery).
    extras : ModelExtras, optional
        The same extras as passed to :func:`simulate_session` (``None``: base model).

    Returns
    -------
    pandas.DataFrame
        Canonical columns ``t_s``, ``vo2_ml_min``, ``vco2_ml_min``, ``ve_l_min``, ``hr_bpm``,
        the load columns of the mode, ``rf_bpm``, ``vt_l``, ``peto2_mmhg``, ``petco2_mmhg``,
        ``spo2_pct`` and ``phase``.

    Examples
    --------
    >>> from analysis.simulation import TRAINED_CYCLIST, CYCLE_RAMP_30, noise_free_course
    >>> course = noise_free_course(TRAINED_CYCLIST, CYCLE_RAMP_30, [60.0])
    >>> float(course["vo2_ml_min"].iloc[0]) == TRAINED_CYCLIST.vo2_rest_ml_min
    True
    """
    t = np.asarray(t_s, dtype=float)
    line = _timeline(profile, protocol, extras)
    require(
        t.size == 0 or (t.min() >= 0 and t.max() <= line.t_total_s),
        "t_s",
        f"times between 0 and {line.t_total_s:.1f} s (the end of recovery)",
        f"{t.min():.1f} to {t.max():.1f} s",
    )
    ch = _channels_at(profile, protocol, line, t, extras)
    frame = pd.DataFrame({C.T_S: t, **{k: ch[k] for k in (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN, C.HR_BPM)}})
    for name in (C.WORK_W, C.SPEED_KMH, C.GRADE_PCT):
        if name in ch:
            frame[name] = ch[name]
    frame[C.RF_BPM] = ch[C.RF_BPM]
    frame[C.VT_L] = ch[C.VE_L_MIN] / ch[C.RF_BPM]
    for name in (C.PETO2_MMHG, C.PETCO2_MMHG, C.SPO2_PCT):
        frame[name] = ch[name]
    frame[C.PHASE] = _phase_labels(line, t)
    return frame


def simulate_session(
    profile: SubjectProfile,
    protocol: ProtocolSpec,
    *,
    seed: int,
    noise: float = 1.0,
    artifacts: int = 3,
    test_date: str = "2026-01-05",
    notes: str = "",
    extras: ModelExtras | None = None,
    events: BreathEvents | None = None,
    meta_extra: dict[str, object] | None = None,
    cart_noise: CartNoise | None = None,
) -> Session:
    """Simulate one breath-by-breath exercise test with known ground truth.

    Parameters
    ----------
    profile : SubjectProfile
        The (fictional) person and the parameters of the physiological model.
    protocol : ProtocolSpec
        Phases, loads and stop rule.
    seed : int
        Seed of the random generator: the same seed gives an identical session.
    noise : float, default 1.0
        Scale of breath-by-breath noise: 0 noise-free (model values exactly, breaths evenly
        spaced in breathing phase), 1 realistic (VO2 about 7 % per breath), 2 noisy.
    artifacts : int, default 3
        Number of cough/swallow breaths planted in the record (independent of ``noise``:
        pass ``artifacts=0`` for a clean model series). Their times are in the metadata key
        ``truth_artifact_t_s``, never in the breath table.
    test_date : str, default "2026-01-05"
        ISO date written to the metadata.
    notes : str, default ""
        Free text for the metadata (omitted when empty).
    extras : ModelExtras, optional
        Physiology beyond the base model (VO2 slow component, CO2 stores, over-breathing,
        oscillating ventilation, a ventilatory ceiling). When given, the metadata also holds
        the extended truth (``truth_ve_vco2_slope_whole_exercise``, SpO2, breathing reserve,
        oscillation, ...; ``docs/simulation.md``). ``None`` (default): the base model only.
    events : BreathEvents, optional
        Sighs, mask leaks, merged and lost breaths, impossible breaths, planted after the
        noise (their times in ``truth_breath_events``). ``None`` (default): none.
    meta_extra : dict, optional
        More metadata written after the person's data (e.g. ``fev1_l``, ``beta_blocker``);
        an ``fev1_l`` without ``mvv_l_min`` gives the truth MVV as FEV1 x 40.
    cart_noise : CartNoise, optional
        Breath noise of a real cart on top of the proportional noise (an additive gas floor,
        irregular breaths, a slow wander of the breathing pattern), scaled by ``noise``, drawn
        from its own random stream. ``None`` (default): none.

    Returns
    -------
    Session
        Breath table in canonical columns plus ``source_row`` (the line each breath will have
        when written with :func:`analysis.io.session_file.write_session`); metadata with the
        person's data, the protocol and the model truth (``truth_*`` keys).

    Raises
    ------
    InvalidParameter
        Bad seed, noise or artifact count; a warm-up above VT1; a protocol that never reaches
        its stop rule within ``protocol.max_exercise_s``.

    Notes
    -----
    The model and its equations are described in ``docs/simulation.md``: VO2 follows the load's
    O2 demand with a first-order lag; VCO2, VE, PETCO2, HR and SpO2 are static functions of the
    lagged VO2 during exercise (so VT1, VT2 and the VE/VCO2 slope are planted exactly), and
    return exponentially in recovery. Noise is multiplicative per breath and shares a
    breath-volume term between VE, VO2 and VCO2.

    References
    ----------
    Beaver WL, Wasserman K, Whipp BJ (1986). A new method for detecting anaerobic threshold by
    gas exchange. J Appl Physiol 60:2020-2027 (the two-line VCO2-VO2 relation planted here).
    Lamarra N, Whipp BJ, Ward SA, Wasserman K (1987). Effect of interbreath fluctuations on
    characterizing exercise gas exchange kinetics. J Appl Physiol 62:2003-2012 (noise size,
    from memory).
    American Thoracic Society / American College of Chest Physicians (2003). Statement on
    cardiopulmonary exercise testing. Am J Respir Crit Care Med 167:211-277 (ΔVO2/ΔWR ≈ 10
    mL/min/W, common practice).

    Examples
    --------
    >>> from analysis.simulation import simulate_session, DEMO_TESTS
    >>> demo = DEMO_TESTS[0]
    >>> s = simulate_session(demo.profile, demo.protocol, seed=1, noise=0, artifacts=0)
    >>> s.meta["truth_vo2max_ml_min"] == demo.profile.vo2max_ml_min
    True
    """
    require(isinstance(profile, SubjectProfile), "profile", "a SubjectProfile", type(profile).__name__)
    require(isinstance(protocol, ProtocolSpec), "protocol", "a ProtocolSpec", type(protocol).__name__)
    require(isinstance(seed, (int, np.integer)) and not isinstance(seed, bool) and seed >= 0, "seed", "a whole number >= 0", seed)
    require(isinstance(noise, (int, float)) and 0 <= noise <= 5, "noise", "a number between 0 and 5", noise)
    require(isinstance(artifacts, (int, np.integer)) and 0 <= artifacts <= 20, "artifacts", "a whole number between 0 and 20", artifacts)
    require(extras is None or isinstance(extras, ModelExtras), "extras", "a ModelExtras or None", type(extras).__name__)
    require(events is None or isinstance(events, BreathEvents), "events", "a BreathEvents or None", type(events).__name__)
    require(
        cart_noise is None or isinstance(cart_noise, CartNoise), "cart_noise", "a CartNoise or None", type(cart_noise).__name__
    )

    line = _timeline(profile, protocol, extras)
    rng_time = np.random.default_rng([int(seed), 1])
    rng_noise = np.random.default_rng([int(seed), 2])
    rng_art = np.random.default_rng([int(seed), 3])

    t = _breath_times(profile, protocol, line, rng=rng_time, noise=float(noise))
    n = len(t)
    extended = None if extras is None else _extended_grid(profile, protocol, line, extras)
    ch = _channels_at(profile, protocol, line, t, extras, extended)
    duration = np.diff(np.concatenate([[0.0], t]))
    rf_breath = 60.0 / duration

    z = rng_noise.standard_normal((8, n)) * float(noise)
    e_vol = VOLUME_SD * z[0]
    e_gas = GAS_SHARED_SD * z[1]
    ve = ch[C.VE_L_MIN] * np.clip(1.0 + e_vol, 0.2, None)
    vo2 = ch[C.VO2_ML_MIN] * np.clip(1.0 + VOLUME_TO_GAS * e_vol + e_gas + VO2_OWN_SD * z[2], 0.2, None)
    vco2 = ch[C.VCO2_ML_MIN] * np.clip(1.0 + VOLUME_TO_GAS * e_vol + e_gas + VCO2_OWN_SD * z[3], 0.2, None)
    petco2 = ch[C.PETCO2_MMHG] + PETCO2_SD_MMHG * z[4]
    if cart_noise is not None and cart_noise.any:
        noisy = add_cart_noise(
            {"ve": ve, "vo2": vo2, "vco2": vco2, "petco2": petco2},
            t,
            cart_noise,
            noise=float(noise),
            volume_sd=VOLUME_SD,
            volume_to_gas=VOLUME_TO_GAS,
            rng=np.random.default_rng([int(seed), 5]),
        )
        ve, vo2, vco2, petco2 = noisy["ve"], noisy["vo2"], noisy["vco2"], noisy["petco2"]
    rf_breath = np.maximum(rf_breath, ve / MAX_BREATH_VT_L)
    peto2 = ch[C.PETO2_MMHG] - PETCO2_SD_MMHG * z[4] + PETO2_SD_MMHG * z[5]
    hr = ch[C.HR_BPM] + HR_SD_BPM * z[6]
    spo2 = np.minimum(ch[C.SPO2_PCT] + SPO2_SD_PCT * z[7], 100.0)
    if noise > 0:  # devices report whole beats and whole percent
        hr = np.round(hr)
        spo2 = np.round(spo2)

    phases = _phase_labels(line, t)
    data: dict[str, object] = {
        C.T_S: t,
        C.VO2_ML_MIN: vo2,
        C.VCO2_ML_MIN: vco2,
        C.VE_L_MIN: ve,
        C.HR_BPM: hr,
    }
    for name in (C.WORK_W, C.SPEED_KMH, C.GRADE_PCT):
        if name in ch:
            data[name] = ch[name]
    data.update(
        {
            C.RF_BPM: rf_breath,
            C.PETO2_MMHG: peto2,
            C.PETCO2_MMHG: petco2,
            C.SPO2_PCT: spo2,
            C.PHASE: phases,
            C.MARKER: _markers(phases),
        }
    )
    frame = pd.DataFrame(data)
    artifact_t = _inject_artifacts(frame, count=int(artifacts), rng=rng_art) if artifacts else []
    event_notes: list[str] = []
    if events is not None and events.any:
        frame, event_notes = plant_events(
            frame, events, rng=np.random.default_rng([int(seed), 4]), protect_t_s=artifact_t
        )
        n = len(frame)
    frame.insert(list(frame.columns).index(C.RF_BPM) + 1, C.VT_L, frame[C.VE_L_MIN] / frame[C.RF_BPM])

    meta: dict[str, object] = {
        "subject_id": profile.subject_id,
        "display_name": profile.display_name,
        "lab": LAB_NAME,
        "sex": profile.sex,
        "age_y": float(profile.age_y),
        "height_cm": float(profile.height_cm),
        "body_mass_kg": float(profile.body_mass_kg),
        "hb_g_dl": float(profile.hb_g_dl),
    }
    if profile.mvv_l_min is not None:
        meta["mvv_l_min"] = float(profile.mvv_l_min)
    for key, value in (meta_extra or {}).items():
        require(not str(key).startswith("truth_") and key not in meta, "meta_extra", "new keys that are not truth_ keys", key)
        meta[str(key)] = value
    meta.update(
        {
            "test_date": test_date,
            "mode": protocol.mode,
            "protocol": protocol.describe(),
            "barometric_mmhg": float(protocol.barometric_mmhg),
        }
    )
    if notes:
        meta["notes"] = notes
    meta["simulated"] = f"Tidemark simulator, seed {int(seed)}, noise {float(noise):g}, artifacts {int(artifacts)}"
    meta.update(_truth(profile, protocol, line))
    meta["truth_artifact_t_s"] = ",".join(f"{x:.2f}" for x in artifact_t)
    if extras is not None and extended is not None:
        grid, plain, _ = extended
        meta.update(
            extended_truth(
                grid,
                plain,
                extras=extras,
                t_warmup_s=line.t_warmup_s,
                t_exercise_s=line.t_exercise_s,
                t_end_s=line.t_end_s,
                t_vt2_s=meta.get("truth_vt2_t_s"),  # type: ignore[arg-type]
                mvv_l_min=_mvv_l_min(profile, meta),
            )
        )
    if events is not None:
        meta["truth_breath_events"] = ",".join(event_notes)

    # the line each breath will occupy in a written session file: meta lines, header, rows
    first_row = len(meta) + 2
    frame["source_row"] = np.arange(first_row, first_row + n, dtype=np.int64)
    return Session(meta=meta, breaths=frame, source_name=f"{profile.subject_id} simulated (seed {int(seed)})")
