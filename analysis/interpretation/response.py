"""Efficiency and response: ΔVO2/ΔWR, the O2-pulse trajectory and heart-rate recovery."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.interpretation.flags import Flag, flag
from analysis.records import described

#: ΔVO2/ΔWR below this is low, mL/min/W (lower limit about 8.4–8.6; from memory — the lower
#: end is used so that a value is flagged only when clearly low).
DVO2_DWR_LOW_ML_MIN_W = 8.4
#: HR recovery at 1 min at or below this is abnormal after an upright active cool-down, beats/min
#: (Cole et al. 1999, from memory).
HR_RECOVERY_LOW_BPM = 12.0
#: Cool-down postures the Cole limit was derived for (metadata ``cooldown_posture``).
UPRIGHT_ACTIVE = "upright_active"
COOLDOWN_POSTURES: tuple[str, ...] = ("upright_active", "upright_passive", "seated", "supine")
#: Share of the exercise (by time) whose O2 pulse trajectory is read as the "late" part.
LATE_SHARE = 1.0 / 3.0

RESPONSE_METHOD = (
    f"ΔVO2/ΔWR low below {DVO2_DWR_LOW_ML_MIN_W:g} mL/min/W (lower limit ≈ 8.4–8.6, from memory); O2 pulse "
    "trajectory: least-squares slope of the O2 pulse over the last third of exercise against its slope over the "
    "first two thirds (after the first minute) — a flattening or fall while VO2 has no plateau (Belardinelli et al. "
    f"2003); HR recovery at 1 min ≤ {HR_RECOVERY_LOW_BPM:g} beats/min abnormal after an upright active cool-down "
    "(Cole et al. 1999, from memory)"
)


@dataclass(frozen=True)
class O2PulseTrajectory:
    """How the O2 pulse rose during exercise: early and late slopes."""

    early_slope_ml_beat_min: float = described(unit="mL/beat per min", description="slope over exercise (after 1 min) up to the last third")
    late_slope_ml_beat_min: float = described(unit="mL/beat per min", description="slope over the last third of exercise")
    flattening: bool = described(
        description="late slope ≤ 0 (a plateau or a fall) while the early slope was positive and VO2 showed no plateau",
        method="Belardinelli et al. 2003",
    )


@dataclass(frozen=True)
class HeartRateRecovery:
    """Heart-rate recovery at 1 min with the cool-down posture it was measured in."""

    hr_recovery_1min_bpm: float = described(unit="beats/min", description="HR at the end of exercise - HR 60 s later")
    cooldown_posture: str | None = described(
        description="metadata `cooldown_posture`: upright_active, upright_passive, seated or supine (null when not recorded)"
    )
    limit_applies: bool = described(description="the ≤ 12 beats/min limit applies (upright active cool-down)")


def _slope_per_min(t: np.ndarray, y: np.ndarray) -> float | None:
    ok = np.isfinite(t) & np.isfinite(y)
    if ok.sum() < 3 or np.ptp(t[ok]) <= 0:
        return None
    return float(np.polyfit(t[ok] / 60.0, y[ok], 1)[0])


def o2_pulse_trajectory(avg: pd.DataFrame, *, phases_avg: np.ndarray, vo2_plateau: bool) -> O2PulseTrajectory | None:
    """Early and late slope of the O2 pulse during exercise and whether it flattened.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data with ``o2_pulse_ml_beat`` (VO2 / HR).
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    vo2_plateau : bool, keyword-only
        A VO2 plateau was found: a late O2-pulse plateau then follows it and is not flagged.

    Returns
    -------
    O2PulseTrajectory or None
        ``None`` without heart rate or with less than 3 minutes of exercise.

    References
    ----------
    Belardinelli R, Lacalaprice F, Carle F, et al. Exercise-induced myocardial ischaemia detected
    by cardiopulmonary exercise testing. Eur Heart J 2003;24:1304-1313 (from memory).
    """
    if "o2_pulse_ml_beat" not in avg:
        return None
    ex = phases_avg == "exercise"
    t = avg[C.T_S].to_numpy(dtype=float)[ex]
    y = avg["o2_pulse_ml_beat"].to_numpy(dtype=float)[ex]
    if t.size < 6 or np.ptp(t) < 180:
        return None
    start, end = t.min() + 60.0, t.max()
    cut = end - LATE_SHARE * (end - t.min())
    early = _slope_per_min(t[(t >= start) & (t < cut)], y[(t >= start) & (t < cut)])
    late = _slope_per_min(t[t >= cut], y[t >= cut])
    if early is None or late is None:
        return None
    return O2PulseTrajectory(
        early_slope_ml_beat_min=early, late_slope_ml_beat_min=late,
        flattening=bool(early > 0 and late <= 0 and not vo2_plateau),
    )


def o2_pulse_flag(trajectory: O2PulseTrajectory | None) -> Flag | None:
    """``o2_pulse_flattening`` when the O2 pulse stopped rising in the last third of exercise."""
    if trajectory is None or not trajectory.flattening:
        return None
    return flag(
        "o2_pulse_flattening", severity="caution",
        text=(
            f"The O2 pulse stopped rising in the last third of exercise ({trajectory.late_slope_ml_beat_min:+.2f} mL/beat "
            f"per min, after {trajectory.early_slope_ml_beat_min:+.2f} earlier) without a VO2 plateau."
        ),
        value=trajectory.late_slope_ml_beat_min, unit="mL/beat per min", limit="late slope ≤ 0 after an early rise",
        source="Belardinelli et al. 2003",
    )


def dvo2_dwr_flag(slope_ml_min_w: float | None) -> Flag | None:
    """``dvo2_dwr_low`` when ΔVO2/ΔWR is below :data:`DVO2_DWR_LOW_ML_MIN_W`."""
    if slope_ml_min_w is None or slope_ml_min_w >= DVO2_DWR_LOW_ML_MIN_W:
        return None
    return flag(
        "dvo2_dwr_low", severity="abnormal", text=f"ΔVO2/ΔWR {slope_ml_min_w:.1f} mL/min/W over the ramp (about 10 in healthy adults).",
        value=slope_ml_min_w, unit="mL/min/W", limit=f"< {DVO2_DWR_LOW_ML_MIN_W:g} mL/min/W",
        source="ATS/ACCP 2003; lower limit ≈ 8.4–8.6 (from memory)",
    )


def heart_rate_recovery(hr_recovery_1min_bpm: float | None, *, cooldown_posture: str | None) -> HeartRateRecovery | None:
    """HR recovery with its cool-down posture (``None`` without a recovery value).

    An unknown posture spelling is kept as given and the limit does not apply.

    References
    ----------
    Cole CR, Blackstone EH, Pashkow FJ, Snader CE, Lauer MS. N Engl J Med 1999;341:1351-1357 (from memory).
    """
    if hr_recovery_1min_bpm is None:
        return None
    posture = str(cooldown_posture).strip().lower().replace(" ", "_").replace("-", "_") if cooldown_posture else None
    return HeartRateRecovery(
        hr_recovery_1min_bpm=float(hr_recovery_1min_bpm), cooldown_posture=posture,
        limit_applies=posture == UPRIGHT_ACTIVE,
    )


def hr_recovery_flag(recovery: HeartRateRecovery | None) -> Flag | None:
    """``hr_recovery_low`` at ≤ 12 beats/min: abnormal after an upright active cool-down, a
    caution when the posture was not recorded; no flag for another recorded posture."""
    if recovery is None or recovery.hr_recovery_1min_bpm > HR_RECOVERY_LOW_BPM:
        return None
    if recovery.cooldown_posture is not None and not recovery.limit_applies:
        return None
    known = recovery.limit_applies
    text = f"Heart rate fell {recovery.hr_recovery_1min_bpm:.0f} beats/min in the first minute of recovery."
    if not known:
        text += " The cool-down posture was not recorded; the limit holds for an upright active cool-down."
    return flag(
        "hr_recovery_low", severity="abnormal" if known else "caution", text=text,
        value=recovery.hr_recovery_1min_bpm, unit="beats/min",
        limit=f"≤ {HR_RECOVERY_LOW_BPM:g} beats/min (upright active cool-down)", source="Cole et al. 1999 (from memory)",
    )
