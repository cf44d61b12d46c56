"""Kinds of simulated tests: for each kind, a seeded draw of a (fictional) person, a protocol,
the extras and the breath events.

Every kind is a pure function of a :class:`numpy.random.Generator`; :func:`case_inputs` seeds
that generator from the kind's name and the seed, so ``(kind, seed)`` always gives the same
inputs. The ranges per kind are listed in ``docs/simulation.md`` ("Kinds of tests").
"""

from __future__ import annotations

import zlib
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from analysis.errors import require
from analysis.simulation import _model as M
from analysis.simulation.cart_noise import CartNoise
from analysis.simulation.extras import BreathEvents, ModelExtras
from analysis.simulation.profiles import ProtocolSpec, SubjectProfile

#: Kinds of the original, easier suite.
ORIGINAL_KINDS: tuple[str, ...] = ("athlete", "recreational", "rehab")
#: Kinds of the hard suite (issue items: breath noise, slow component, CO2 kinetics, step
#: protocols, over-breathing, heart failure, lung disease, short and submaximal tests).
HARD_KINDS: tuple[str, ...] = (
    "noisy_breaths",
    "slow_component",
    "slow_co2",
    "treadmill_steps",
    "cycle_steps",
    "overbreathing",
    "hf_oscillation",
    "hf_transient_oscillation",
    "hf_plain",
    "lung_limited",
    "short_ramp",
    "submax",
)
ALL_KINDS: tuple[str, ...] = ORIGINAL_KINDS + HARD_KINDS


@dataclass(frozen=True)
class CaseInputs:
    """What :func:`analysis.simulation.simulate_session` needs for one case."""

    profile: SubjectProfile
    protocol: ProtocolSpec
    extras: ModelExtras
    events: BreathEvents | None
    meta_extra: dict[str, object] = field(default_factory=dict)
    artifacts: int = 3
    cart_noise: CartNoise | None = None


# --- building blocks -------------------------------------------------------------------------


def _u(rng: np.random.Generator, low: float, high: float, digits: int = 3) -> float:
    return round(float(rng.uniform(low, high)), digits)


def _person(rng: np.random.Generator, *, age: tuple[float, float], ml_kg_min: tuple[float, float]) -> dict[str, object]:
    """Body data and VO2max of a fictional adult."""
    sex = "male" if rng.random() < 0.5 else "female"
    height = _u(rng, 168, 190, 0) if sex == "male" else _u(rng, 156, 176, 0)
    bmi = _u(rng, 20, 28, 1)
    mass = round(bmi * (height / 100) ** 2, 1)
    vo2max = round(_u(rng, *ml_kg_min, 1) * mass, 0)
    return {
        "sex": sex,
        "age_y": _u(rng, *age, 0),
        "height_cm": height,
        "body_mass_kg": mass,
        "hb_g_dl": _u(rng, 13.5, 16.0, 1) if sex == "male" else _u(rng, 12.0, 14.5, 1),
        "vo2_rest_ml_min": round(3.5 * mass * _u(rng, 0.95, 1.15), 0),
        "vo2max_ml_min": vo2max,
    }


def _rer_peak(drawn: float, *, vo2max: float, vo2_rest: float, vt1_fraction: float, rer_rest: float, s1: float) -> float:
    """``drawn`` moved just enough that the VCO2-VO2 slope above VT1 lies in 1.2-2.3 (the
    simulator accepts 1.1-2.5)."""
    v1 = vt1_fraction * vo2max
    vco2_vt1 = rer_rest * vo2_rest + s1 * (v1 - vo2_rest)
    slope = (drawn * vo2max - vco2_vt1) / (vo2max - v1)
    slope = min(max(slope, 1.2, s1 + 0.2), 2.3)
    return round((slope * (vo2max - v1) + vco2_vt1) / vo2max, 4)


def _profile(rng: np.random.Generator, code: str, person: dict[str, object], **model: object) -> SubjectProfile:
    """A profile from the person and model parameters; rer_peak made valid, rf_max high enough
    for the peak tidal volume limit."""
    vo2max = float(person["vo2max_ml_min"])  # type: ignore[arg-type]
    vo2_rest = float(person["vo2_rest_ml_min"])  # type: ignore[arg-type]
    rer_rest = float(model.pop("rer_rest", _u(rng, 0.78, 0.86)))  # type: ignore[arg-type]
    s1 = float(model.pop("vco2_slope_below_vt1", _u(rng, 0.9, 1.0)))  # type: ignore[arg-type]
    rer_peak = _rer_peak(
        float(model.pop("rer_peak")),  # type: ignore[arg-type]
        vo2max=vo2max,
        vo2_rest=vo2_rest,
        vt1_fraction=float(model["vt1_fraction"]),  # type: ignore[arg-type]
        rer_rest=rer_rest,
        s1=s1,
    )
    if model.get("plateau"):
        model["plateau_s"] = max(float(model.get("plateau_s", 75.0)), 2 * float(model.get("tau_on_s", 35.0)) + 5)  # type: ignore[arg-type]
    draft = SubjectProfile(
        subject_id=code,
        display_name=f"Simulated {code}",
        rer_rest=rer_rest,
        vco2_slope_below_vt1=s1,
        rer_peak=rer_peak,
        **person,  # type: ignore[arg-type]
        **model,  # type: ignore[arg-type]
    )
    ve_peak = M.ve_peak_l_min(draft)
    if ve_peak > 205.0:  # the simulator's peak VE limit: a flatter VE/VCO2 slope for the biggest
        draft = replace(draft, ve_vco2_slope=round(draft.ve_vco2_slope * 200.0 / ve_peak, 1))
    rf_max = max(draft.rf_max_bpm, round(M.ve_peak_l_min(draft) / 4.0 + 1.0, 0))
    return draft if rf_max == draft.rf_max_bpm else replace(draft, rf_max_bpm=rf_max)


def _cycle_ramp(
    profile: SubjectProfile,
    *,
    minutes: float,
    warmup_w: float,
    start_w: float | None = None,
    stage_s: float = 0.0,
    rest_s: float = 180.0,
    warmup_s: float = 180.0,
    stop: str = "max",
    stop_rer: float = 1.05,
) -> ProtocolSpec:
    """A cycle protocol whose incremental phase lasts about ``minutes`` for this person."""
    k = profile.vo2_work_slope_ml_min_w
    w0 = warmup_w if start_w is None else start_w
    span_w = (profile.vo2max_ml_min - profile.vo2_rest_ml_min) / k - w0
    # VO2 reaches VO2max tau_on after the demand does; a plateau profile goes on plateau_s
    # after the demand reaches it
    tail_min = (profile.plateau_s if profile.plateau else profile.tau_on_s) / 60.0
    rate = span_w / max(minutes - tail_min, 1.0)
    rate = float(np.clip(round(rate, 1), 4.0, 100.0))
    return ProtocolSpec(
        mode="cycle",
        rest_s=rest_s,
        warmup_s=warmup_s,
        warmup_w=warmup_w,
        start_w=start_w,
        ramp_w_per_min=rate,
        recovery_w=min(warmup_w, 50.0),
        stage_s=stage_s,
        stop=stop,
        stop_rer=stop_rer,
    )


def _light_events(rng: np.random.Generator) -> BreathEvents:
    """The breath events every hard kind carries (a real recording has some)."""
    return BreathEvents(
        sighs_per_10_min=_u(rng, 0.5, 2.0, 2),
        leak_runs=int(rng.integers(0, 2)),
        merged_breaths=int(rng.integers(0, 3)),
        dropped_runs=int(rng.integers(0, 2)),
        impossible_breaths=int(rng.integers(0, 2)),
    )


def _normal_mvv(profile: SubjectProfile, rng: np.random.Generator) -> float:
    """An MVV that leaves a normal breathing reserve (peak VE 45-70 % of MVV)."""
    return round(M.ve_peak_l_min(profile) / _u(rng, 0.45, 0.70), 0)


def _with_mvv(profile: SubjectProfile, mvv_l_min: float) -> SubjectProfile:
    return replace(profile, mvv_l_min=float(np.clip(mvv_l_min, 20, 300)))


# --- the kinds ---------------------------------------------------------------------------------


def _athlete(rng: np.random.Generator, code: str) -> CaseInputs:
    person = _person(rng, age=(19, 40), ml_kg_min=(55, 70))
    p = _profile(
        rng, code, person,
        vt1_fraction=_u(rng, 0.60, 0.72), vt2_fraction=_u(rng, 0.83, 0.91),
        hr_rest_bpm=_u(rng, 42, 60, 0), hr_max_bpm=_u(rng, 182, 200, 0), ve_vco2_slope=_u(rng, 23, 29, 1),
        petco2_rest_mmhg=_u(rng, 37, 42, 1), plateau=bool(rng.random() < 0.5), plateau_s=_u(rng, 70, 100, 0),
        tau_on_s=_u(rng, 22, 35, 0), rer_peak=_u(rng, 1.10, 1.22), rf_max_bpm=_u(rng, 50, 60, 0),
        spo2_drop_pct=_u(rng, 0.0, 1.5, 1),
    )
    p = _with_mvv(p, _normal_mvv(p, rng))
    proto = _cycle_ramp(p, minutes=_u(rng, 9, 13, 1), warmup_w=round(_u(rng, 60, 110, 0) / 10) * 10)
    return CaseInputs(p, proto, ModelExtras(), None)


def _recreational_profile(rng: np.random.Generator, code: str, *, ml_kg_min: tuple[float, float] = (35, 50)) -> SubjectProfile:
    person = _person(rng, age=(22, 55), ml_kg_min=ml_kg_min)
    p = _profile(
        rng, code, person,
        vt1_fraction=_u(rng, 0.52, 0.66), vt2_fraction=_u(rng, 0.80, 0.90),
        hr_rest_bpm=_u(rng, 55, 75, 0), hr_max_bpm=_u(rng, 170, 192, 0), ve_vco2_slope=_u(rng, 24, 31, 1),
        petco2_rest_mmhg=_u(rng, 35, 41, 1), plateau=bool(rng.random() < 0.3), plateau_s=_u(rng, 70, 100, 0),
        tau_on_s=_u(rng, 28, 45, 0), rer_peak=_u(rng, 1.10, 1.20), rf_max_bpm=_u(rng, 44, 55, 0),
        spo2_drop_pct=_u(rng, 0.0, 1.5, 1),
    )
    return _with_mvv(p, _normal_mvv(p, rng))


def _recreational(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code)
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 20, 60, 0) / 10) * 10)
    return CaseInputs(p, proto, ModelExtras(), None)


def _rehab(rng: np.random.Generator, code: str) -> CaseInputs:
    person = _person(rng, age=(50, 75), ml_kg_min=(14, 24))
    p = _profile(
        rng, code, person,
        vt1_fraction=_u(rng, 0.55, 0.66), vt2_fraction=_u(rng, 0.80, 0.88),
        hr_rest_bpm=_u(rng, 58, 75, 0), hr_max_bpm=_u(rng, 118, 150, 0), ve_vco2_slope=_u(rng, 29, 36, 1),
        petco2_rest_mmhg=_u(rng, 33, 38, 1), plateau=False, vo2_work_slope_ml_min_w=_u(rng, 8.8, 10.2, 1),
        tau_on_s=_u(rng, 40, 60, 0), tau_off_s=_u(rng, 60, 90, 0), hr_tau_off_s=_u(rng, 110, 170, 0),
        rer_peak=_u(rng, 1.08, 1.16), petco2_rise_mmhg=_u(rng, 3, 5, 1), petco2_fall_mmhg=_u(rng, 3, 5, 1),
        rf_max_bpm=_u(rng, 36, 44, 0), spo2_drop_pct=_u(rng, 0.0, 1.5, 1),
    )
    p = _with_mvv(p, _normal_mvv(p, rng))
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 0, 20, 0) / 5) * 5)
    return CaseInputs(p, proto, ModelExtras(), None, {"beta_blocker": "yes"})


def _noisy_breaths(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code)
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 20, 60, 0) / 10) * 10)
    events = BreathEvents(
        sighs_per_10_min=_u(rng, 2.0, 4.0, 2),
        leak_runs=int(rng.integers(1, 4)),
        merged_breaths=int(rng.integers(2, 6)),
        dropped_runs=int(rng.integers(1, 4)),
        impossible_breaths=int(rng.integers(1, 4)),
    )
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 0, 8, 1)), events)


def _slow_component(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code, ml_kg_min=(38, 55))
    proto = _cycle_ramp(p, minutes=_u(rng, 9, 13, 1), warmup_w=round(_u(rng, 20, 60, 0) / 10) * 10)
    extras = ModelExtras(
        slow_component_fraction=_u(rng, 0.10, 0.25), slow_component_tau_s=_u(rng, 150, 240, 0),
        co2_extra_tau_s=_u(rng, 5, 12, 1),
    )
    return CaseInputs(p, proto, extras, _light_events(rng))


def _slow_co2(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code)
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 20, 60, 0) / 10) * 10)
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 15, 30, 1)), _light_events(rng))


def _treadmill_steps(rng: np.random.Generator, code: str) -> CaseInputs:
    # a person who can start running at 7.5 km/h below 85 % of the VT1 demand (drawn again
    # until so, at most 20 times; the walking start below is the fallback)
    for _ in range(20):
        p = _recreational_profile(rng, code, ml_kg_min=(46, 64))
        per_kmh_flat = (M._RUN_H + M._RUN_V / 100) * p.body_mass_kg * 1000 / 60
        if p.vo2_rest_ml_min + per_kmh_flat * 7.5 <= 0.85 * p.vo2_vt1_ml_min:
            break
    m = p.body_mass_kg
    rest = p.vo2_rest_ml_min
    stage_s = float(rng.choice([60.0, 120.0, 180.0]))
    minutes = _u(rng, 9, 14, 1)
    grade0 = float(rng.choice([0.0, 1.0]))
    variant = int(rng.integers(0, 3))  # 0 speed stages, 1 speed and grade, 2 mostly grade
    d0 = _u(rng, 0.60, 0.85) * p.vo2_vt1_ml_min  # the first stage's demand
    d_end = p.vo2max_ml_min
    # walk-to-run jump (ACSM running equation, from memory): running from at least 7.5 km/h;
    # where even 7.5 km/h would need more than 85 % of the VT1 level, a brisk uphill walk
    # (walking equation) with a grade jump at onset instead
    per_kmh = (M._RUN_H + M._RUN_V * grade0 / 100) * m * 1000 / 60  # mL/min per km/h, running
    running = rest + per_kmh * 7.5 <= 0.85 * p.vo2_vt1_ml_min
    if running:
        s0 = max(7.5, round((d0 - rest) / per_kmh * 2) / 2)
        speed_step = 0.0 if variant == 0 else (0.5 if variant == 1 else 0.2)
        h_cost, v_cost = M._RUN_H, M._RUN_V
        base = rest + per_kmh * s0
    else:
        s0 = _u(rng, 5.5, 6.5, 1)
        s_m_min = s0 * 1000 / 60
        grade0 = float(np.clip(round(((d0 - rest) / m - M._WALK_H * s_m_min) / (M._WALK_V * s_m_min) * 100, 1), 0, 12))
        speed_step = 0.0  # constant walking speed: above 7.2 km/h the running equation would apply
        h_cost, v_cost = M._WALK_H, M._WALK_V
        base = rest + (M._WALK_H * s_m_min + M._WALK_V * s_m_min * grade0 / 100) * m
    need_per_min = (d_end - base) / minutes
    if running and variant == 0:  # speed stages only
        speed_step = need_per_min / per_kmh
        grade_step = 0.0
    else:  # the grade carries what the speed does not
        speed_mid_m_min = (s0 + speed_step * minutes / 2) * 1000 / 60
        per_min_speed = speed_step * (h_cost + v_cost * grade0 / 100) * m * 1000 / 60
        per_pct_grade = v_cost * speed_mid_m_min * m / 100  # mL/min per % grade
        grade_step = float(np.clip(round((need_per_min - per_min_speed) / per_pct_grade, 2), 0.2, 3.0))
    proto = ProtocolSpec(
        mode="treadmill",
        warmup_s=_u(rng, 120, 240, 0),
        warmup_speed_kmh=_u(rng, 4.5, 5.0 if not running else 5.5, 1),
        warmup_grade_pct=0.0,
        start_speed_kmh=s0,
        start_grade_pct=grade0,
        speed_step_kmh_per_min=round(float(np.clip(speed_step, 0.0, 3.0)), 2),
        grade_step_pct_per_min=grade_step,
        recovery_speed_kmh=4.0,
        stage_s=stage_s,
    )
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 5, 15, 1)), _light_events(rng))


def _cycle_steps(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code)
    warm = round(_u(rng, 20, 50, 0) / 5) * 5
    # a step at the start: the first stage needs 55-85 % of the VT1 level
    start_w = (_u(rng, 0.55, 0.85) * p.vo2_vt1_ml_min - p.vo2_rest_ml_min) / p.vo2_work_slope_ml_min_w
    start_w = max(float(warm) + 10.0, round(start_w / 5) * 5)
    stage_s = float(rng.choice([60.0, 120.0, 180.0]))
    proto = _cycle_ramp(p, minutes=_u(rng, 9, 14, 1), warmup_w=warm, start_w=start_w, stage_s=stage_s)
    step_w = proto.ramp_w_per_min * stage_s / 60
    proto = replace(proto, ramp_w_per_min=max(round(step_w / 5) * 5, 5) * 60 / stage_s)
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 5, 15, 1)), _light_events(rng))


def _overbreathing(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code)
    proto = _cycle_ramp(
        p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 20, 50, 0) / 10) * 10, warmup_s=_u(rng, 60, 180, 0)
    )
    co2 = max(_u(rng, 0.28, 0.45), 1.03 / p.rer_rest - 1.0 + 0.01)  # resting RER above 1
    extras = ModelExtras(
        overbreathing_ve_fraction=_u(rng, 0.5, 0.9),
        overbreathing_co2_fraction=min(co2, 0.6),
        overbreathing_petco2_drop_mmhg=_u(rng, 5, 9, 1),
        overbreathing_tau_s=_u(rng, 50, 110, 0),
        co2_extra_tau_s=_u(rng, 3, 10, 1),
    )
    return CaseInputs(p, proto, extras, _light_events(rng))


def _hf_profile(rng: np.random.Generator, code: str) -> SubjectProfile:
    person = _person(rng, age=(50, 80), ml_kg_min=(10, 18))
    has_vt2 = rng.random() < 0.3  # often no respiratory compensation within the test
    p = _profile(
        rng, code, person,
        vt1_fraction=_u(rng, 0.55, 0.70), vt2_fraction=_u(rng, 0.86, 0.92) if has_vt2 else None,
        hr_rest_bpm=_u(rng, 62, 85, 0), hr_max_bpm=_u(rng, 110, 140, 0), ve_vco2_slope=_u(rng, 36, 50, 1),
        petco2_rest_mmhg=_u(rng, 28, 34, 1), plateau=False, vo2_work_slope_ml_min_w=_u(rng, 7.0, 9.0, 1),
        tau_on_s=_u(rng, 55, 80, 0), tau_off_s=_u(rng, 80, 110, 0), hr_tau_off_s=_u(rng, 150, 220, 0),
        rer_peak=_u(rng, 1.05, 1.14), petco2_rise_mmhg=_u(rng, 1, 3, 1), petco2_fall_mmhg=_u(rng, 2, 4, 1),
        rf_rest_bpm=_u(rng, 15, 20, 0), rf_max_bpm=_u(rng, 38, 46, 0),
        spo2_rest_pct=_u(rng, 95, 98, 1), spo2_drop_pct=_u(rng, 0.0, 2.0, 1),
    )
    return _with_mvv(p, _normal_mvv(p, rng))


def _hf(rng: np.random.Generator, code: str, *, end_fraction: tuple[float, float] | None) -> CaseInputs:
    p = _hf_profile(rng, code)
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=0.0, rest_s=240.0)
    osc: dict[str, Any] = {}
    if end_fraction is not None:
        osc = {
            "oscillation_period_s": _u(rng, 40, 90, 1),
            "oscillation_amplitude_fraction": _u(rng, 0.12, 0.30),
            "oscillation_phase_rad": _u(rng, 0, 2 * np.pi),
            "oscillation_end_fraction": _u(rng, *end_fraction),
        }
    extras = ModelExtras(co2_extra_tau_s=_u(rng, 5, 15, 1), **osc)
    return CaseInputs(p, proto, extras, _light_events(rng))


def _lung_limited(rng: np.random.Generator, code: str) -> CaseInputs:
    person = _person(rng, age=(50, 78), ml_kg_min=(13, 22))
    draft = _profile(
        rng, code, person,
        vt1_fraction=_u(rng, 0.50, 0.65), vt2_fraction=None,
        hr_rest_bpm=_u(rng, 70, 90, 0), hr_max_bpm=_u(rng, 120, 150, 0), ve_vco2_slope=_u(rng, 30, 38, 1),
        petco2_rest_mmhg=_u(rng, 36, 42, 1), plateau=False, tau_on_s=_u(rng, 50, 75, 0),
        rer_peak=_u(rng, 1.02, 1.10), petco2_rise_mmhg=_u(rng, 1, 3, 1), rf_rest_bpm=_u(rng, 16, 22, 0),
        rf_max_bpm=_u(rng, 36, 46, 0), spo2_rest_pct=_u(rng, 93, 96.5, 1), spo2_drop_pct=_u(rng, 4.0, 9.0, 1),
    )
    # MVV below the ventilation the person would need at peak: VE bends onto a ceiling near MVV
    fev1 = round(M.ve_peak_l_min(draft) / _u(rng, 1.0, 1.25) / 40.0, 2)
    mvv = 40.0 * fev1  # FEV1 x 40 (common practice; ATS/ACCP 2003)
    measured = rng.random() < 0.5
    p = replace(draft, mvv_l_min=mvv if measured else None)
    proto = _cycle_ramp(p, minutes=_u(rng, 8, 12, 1), warmup_w=round(_u(rng, 0, 20, 0) / 5) * 5)
    extras = ModelExtras(
        ve_ceiling_l_min=round(mvv * _u(rng, 0.95, 0.99), 2),
        ve_knee_fraction=_u(rng, 0.70, 0.80),
        co2_extra_tau_s=_u(rng, 5, 15, 1),
    )
    return CaseInputs(p, proto, extras, _light_events(rng), {} if measured else {"fev1_l": fev1})


def _short_ramp(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code, ml_kg_min=(32, 55))
    proto = _cycle_ramp(p, minutes=_u(rng, 4.0, 5.6, 1), warmup_w=round(_u(rng, 20, 50, 0) / 10) * 10)
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 3, 12, 1)), _light_events(rng))


def _submax(rng: np.random.Generator, code: str) -> CaseInputs:
    p = _recreational_profile(rng, code, ml_kg_min=(25, 45))
    proto = _cycle_ramp(
        p, minutes=_u(rng, 13, 18, 1), warmup_w=round(_u(rng, 20, 40, 0) / 10) * 10, stop="rer", stop_rer=_u(rng, 0.98, 1.04)
    )
    return CaseInputs(p, proto, ModelExtras(co2_extra_tau_s=_u(rng, 3, 12, 1)), _light_events(rng))


_KINDS: dict[str, Callable[[np.random.Generator, str], CaseInputs]] = {
    "athlete": _athlete,
    "recreational": _recreational,
    "rehab": _rehab,
    "noisy_breaths": _noisy_breaths,
    "slow_component": _slow_component,
    "slow_co2": _slow_co2,
    "treadmill_steps": _treadmill_steps,
    "cycle_steps": _cycle_steps,
    "overbreathing": _overbreathing,
    "hf_oscillation": lambda rng, code: _hf(rng, code, end_fraction=(0.7, 1.0)),
    "hf_transient_oscillation": lambda rng, code: _hf(rng, code, end_fraction=(0.15, 0.45)),
    "hf_plain": lambda rng, code: _hf(rng, code, end_fraction=None),
    "lung_limited": _lung_limited,
    "short_ramp": _short_ramp,
    "submax": _submax,
}
assert tuple(_KINDS) == ALL_KINDS


#: Kinds whose test has no compensation point because the heart-failure patient stops first:
#: their rapid shallow breathing late in exercise is drawn (see :func:`_cart_realism`).
_HF_KINDS: tuple[str, ...] = ("hf_oscillation", "hf_transient_oscillation", "hf_plain")


def _cart_realism(kind: str, inputs: CaseInputs, rng: np.random.Generator) -> CaseInputs:
    """What a real cart and a real patient add to a hard kind: the cart's breath noise, a rate of
    cough and swallow breaths, irregular oscillation cycles and (heart failure without a
    compensation point) rapid shallow breathing late in exercise. Drawn from a stream of its
    own, so the person, protocol and events of the kind stay as drawn. Sizes in
    ``docs/simulation.md`` ("Cart noise and irregular breathing")."""
    noisy = kind == "noisy_breaths"
    noise = CartNoise(
        gas_floor_sd_ml_min=_u(rng, 70, 120, 1) if noisy else _u(rng, 35, 80, 1),
        irregular_share=_u(rng, 0.06, 0.12) if noisy else _u(rng, 0.02, 0.07),
        irregular_scale=_u(rng, 2.0, 3.0, 2),
        wander_sd=_u(rng, 0.04, 0.07) if noisy else _u(rng, 0.02, 0.05),
        wander_tau_s=_u(rng, 15, 45, 0),
    )
    artifacts = int(rng.integers(8, 17)) if noisy else int(rng.integers(3, 11))
    extras = inputs.extras
    if kind in _HF_KINDS:
        jitter = {
            "oscillation_period_jitter": _u(rng, 0.08, 0.20),
            "oscillation_amplitude_jitter": _u(rng, 0.15, 0.35),
            "oscillation_seed": int(rng.integers(0, 2**31 - 1)),
        }
        late = _u(rng, 0.04, 0.10)
        start = _u(rng, 0.50, 0.75)
        if inputs.profile.vt2_fraction is None:
            jitter |= {"late_ve_rise_fraction": late, "late_ve_rise_start_fraction": start}
        extras = replace(extras, **jitter)  # type: ignore[arg-type]
    return replace(inputs, cart_noise=noise, artifacts=artifacts, extras=extras)


def case_inputs(kind: str, seed: int) -> CaseInputs:
    """The person, protocol, extras and events of one case.

    Parameters
    ----------
    kind : str
        One of :data:`ALL_KINDS`.
    seed : int
        Whole number >= 0; with ``kind`` it seeds the draw (the same pair, the same inputs).

    Returns
    -------
    CaseInputs

    Examples
    --------
    >>> a = case_inputs("lung_limited", 3)
    >>> a == case_inputs("lung_limited", 3), a.profile.vt2_fraction is None
    (True, True)
    """
    require(kind in _KINDS, "kind", f"one of {ALL_KINDS}", kind)
    require(isinstance(seed, (int, np.integer)) and not isinstance(seed, bool) and seed >= 0, "seed", "a whole number >= 0", seed)
    rng = np.random.default_rng([zlib.crc32(kind.encode()), int(seed)])
    code = f"SIM-{kind[:3].upper()}-{int(seed):04d}"
    inputs = _KINDS[kind](rng, code)
    if kind in HARD_KINDS:
        inputs = _cart_realism(kind, inputs, np.random.default_rng([zlib.crc32(kind.encode()), int(seed), 7]))
    return inputs
