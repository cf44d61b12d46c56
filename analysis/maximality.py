"""Peak values and test maximality: the VO2 plateau and the secondary criteria.

All functions take the averaged **exercise** rows (canonical columns, sorted by time); the
caller selects them (``avg[avg.phase == "exercise"]``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Literal

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import AnalysisError, require
from analysis.indices._arrays import present_values
from analysis.indices.point_values import PointValues, point_values
from analysis.indices.windows import window_means
from analysis.records import described

#: Reader-facing method sentence (shown under ``methods``).
MAXIMALITY_METHOD = (
    "VO2 plateau below the set rise over the last minute despite more work (Taylor et al. 1955), "
    "else peak RER ≥ 1.10 (Balady et al. 2010); peak HR against the Tanaka prediction is shown as "
    "information only, and not applied under beta-blockade (Brawner et al. 2004 prediction shown)"
)

#: Plateau threshold: VO2 rising less than this over the last minute despite more work
#: (Taylor, Buskirk & Henschel 1955, from memory), mL/min.
DEFAULT_PLATEAU_ML_MIN = 150.0
#: Width of each averaging window compared by the plateau test, s.
PLATEAU_WINDOW_S = 30.0
#: Distance between the centres of the two windows compared, s (one minute, as Taylor's stages).
PLATEAU_SPAN_S = 60.0
#: Secondary criteria (common practice).
DEFAULT_RER_MIN = 1.10
DEFAULT_HR_PCT_MIN = 90.0
#: Window over which peak VO2 and RER are meaned (common practice: 30-s peak values), s.
DEFAULT_PEAK_WINDOW_S = 30.0

Verdict = Literal["vo2max_plateau", "vo2peak_criteria_met", "vo2peak_submaximal"]

#: Reader-facing wording of each verdict.
VERDICT_LABELS: dict[str, str] = {
    "vo2max_plateau": "VO2max (plateau reached)",
    "vo2peak_criteria_met": "VO2peak (no plateau; peak RER criterion met)",
    "vo2peak_submaximal": "VO2peak (effort may have been submaximal)",
}


def _need_exercise(exercise_avg: pd.DataFrame) -> None:
    if len(exercise_avg) == 0 or present_values(exercise_avg, C.VO2_ML_MIN) is None:
        raise AnalysisError(
            "No exercise data with VO2 were found, so peak values cannot be read — check the "
            "phase labels or the work-rate / speed column of the file."
        )


def peak_values(
    exercise_avg: pd.DataFrame, *, body_mass_kg: float | None, window_s: float = DEFAULT_PEAK_WINDOW_S
) -> PointValues:
    """Values at the highest VO2 during exercise, VO2 taken as a ``window_s`` mean.

    Parameters
    ----------
    exercise_avg : pandas.DataFrame
        Averaged exercise rows (canonical columns), sorted by time.
    body_mass_kg : float or None, keyword-only
        Body mass, kg, for VO2peak per kg.
    window_s : float, keyword-only
        Width of the centred time window over which the averaged VO2 is meaned before the
        highest value is taken (default 30 s; 0 = the averaged rows as they are).

    Returns
    -------
    PointValues
        At the row where the window mean of VO2 is highest; ``vo2_ml_min`` (and per kg, RER)
        are the window values, the other columns the row's own. The peak RER and peak HR of the
        test are given by :func:`peak_rer` and :func:`peak_hr_bpm`.

    Notes
    -----
    The maximum of many noisy short averages is biased upwards; a 30-s window for peak values
    is common practice. Only windows lying wholly inside exercise count (``window_means`` with
    ``inside=True``): a window centred on the last row would hold only half its width.
    """
    _need_exercise(exercise_avg)
    require(math.isfinite(window_s) and 0 <= window_s <= 120, "window_s", "a window of 0-120 s", window_s)
    require(body_mass_kg is None or (math.isfinite(body_mass_kg) and body_mass_kg > 0),
            "body_mass_kg", "a body mass above 0 kg, or nothing", body_mass_kg)
    t = exercise_avg[C.T_S].to_numpy(dtype=float)
    vo2w = window_means(t, exercise_avg[C.VO2_ML_MIN].to_numpy(dtype=float), window_s=window_s, inside=True)
    if not np.isfinite(vo2w).any():
        raise AnalysisError("No exercise VO2 could be averaged for the peak — check the VO2 column.")
    pos = int(np.nanargmax(vo2w))
    idx = exercise_avg.index[pos]
    vo2_peak = float(vo2w[pos])
    point = point_values(exercise_avg, idx, vo2_peak_ml_min=vo2_peak, body_mass_kg=body_mass_kg)
    vco2w = window_means(t, exercise_avg[C.VCO2_ML_MIN].to_numpy(dtype=float), window_s=window_s, inside=True)[pos]
    return replace(
        point,
        vo2_ml_min=vo2_peak,
        vo2_ml_kg_min=vo2_peak / body_mass_kg if body_mass_kg else None,
        pct_vo2_peak=100.0,
        rer=float(vco2w / vo2_peak) if np.isfinite(vco2w) and vo2_peak > 0 else point.rer,
    )


def peak_rer(exercise_avg: pd.DataFrame, *, window_s: float = DEFAULT_PEAK_WINDOW_S) -> float | None:
    """Highest RER (window mean of VCO2 / window mean of VO2) during exercise, or ``None``.

    Uses the same centred ``window_s`` as :func:`peak_values`, windows wholly inside exercise
    (common practice).
    """
    require(math.isfinite(window_s) and 0 <= window_s <= 120, "window_s", "a window of 0-120 s", window_s)
    if len(exercise_avg) == 0:
        return None
    t = exercise_avg[C.T_S].to_numpy(dtype=float)
    vo2 = window_means(t, exercise_avg[C.VO2_ML_MIN].to_numpy(dtype=float), window_s=window_s, inside=True)
    vco2 = window_means(t, exercise_avg[C.VCO2_ML_MIN].to_numpy(dtype=float), window_s=window_s, inside=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        rer = np.where(vo2 > 0, vco2 / vo2, np.nan)
    return float(np.nanmax(rer)) if np.isfinite(rer).any() else None


def peak_hr_bpm(exercise_avg: pd.DataFrame) -> float | None:
    """Highest averaged heart rate during exercise, beats/min, or ``None`` when not recorded."""
    hr = present_values(exercise_avg, C.HR_BPM)
    return None if hr is None else float(np.nanmax(hr))


def _load_column(exercise_avg: pd.DataFrame) -> str | None:
    for col in (C.WORK_W, C.SPEED_KMH):
        values = present_values(exercise_avg, col)
        if values is not None and float(np.nanmax(values)) > 0:
            return col
    return None


@dataclass(frozen=True)
class PlateauTest:
    """Result of the plateau test.

    Attributes
    ----------
    plateau : bool or None
        ``True`` when VO2 rose less than ``threshold_ml_min`` over the last minute while the
        load still rose; ``None`` when the exercise phase is too short to test.
    vo2_rise_ml_min : float or None
        Mean VO2 of the final window minus that of the window one minute earlier, mL/min.
    threshold_ml_min : float
        Threshold used, mL/min.
    load_column : str or None
        ``work_w`` or ``speed_kmh`` (``None`` when no load was recorded).
    load_rise : float or None
        Rise of that load between the two windows (W or km/h; grade changes are counted
        through ``grade_load_rise_pct``).
    grade_load_rise_pct : float or None
        Rise of the treadmill grade between the windows, % (``None`` when not recorded).
    expected_rise_ml_min : float or None
        Rise per minute expected from the earlier part of exercise (least-squares slope of VO2
        on time, mL/min per minute); ``None`` when too little data.
    note : str
        Plain-language result.
    """

    plateau: bool | None = described(description="VO2 plateau reached (null when exercise was too short to test)")
    vo2_rise_ml_min: float | None = described(
        unit="mL/min", description="mean VO2 of the final window minus that of the window one minute earlier"
    )
    threshold_ml_min: float = described(unit="mL/min", description="largest rise still counted as a plateau")
    load_column: str | None = described(description="`work_w` or `speed_kmh` (null when no load was recorded)")
    load_rise: float | None = described(unit="W or km/h", description="rise of that load between the two windows")
    grade_load_rise_pct: float | None = described(unit="%", description="rise of the treadmill grade between the windows")
    expected_rise_ml_min: float | None = described(
        unit="mL/min", description="rise per minute expected from the earlier exercise (least-squares slope of VO2 on time)"
    )
    note: str = described(description="the plateau test's result in plain words")


def plateau_test(
    exercise_avg: pd.DataFrame,
    *,
    threshold_ml_min: float = DEFAULT_PLATEAU_ML_MIN,
    window_s: float = PLATEAU_WINDOW_S,
) -> PlateauTest:
    """Test for a VO2 plateau at the end of exercise.

    Parameters
    ----------
    exercise_avg : pandas.DataFrame
        Averaged exercise rows, sorted by time.
    threshold_ml_min : float, keyword-only
        Largest VO2 rise (mL/min) over the last minute still counted as a plateau (default 150).
    window_s : float, keyword-only
        Width of the two windows compared, s (default 30).

    Returns
    -------
    PlateauTest

    Notes
    -----
    The mean VO2 over the final ``window_s`` seconds of exercise is compared with the mean over
    the window whose centre lies 60 s earlier. A plateau needs a rise below the threshold
    *despite more work*: the load (work rate, or speed / grade) must also have risen between the
    windows. Without a load signal the VO2 criterion alone is reported, with that caveat.

    Taylor's 150 mL/min was about half the rise expected from one of his work increments. On a
    slow ramp (e.g. 10 W/min, ~100 mL/min per minute) every minute rises less than 150 mL/min,
    so the rise must also be below half the rise per minute expected from the earlier part of
    exercise (least-squares slope of VO2 on time from 60 s after the start to the compared
    windows), and below that expected rise by more than twice the noise of the difference of
    two window means (row-to-row SD of the averaged VO2 around that line). This ramp
    adaptation is ours, in the spirit of Taylor's criterion; it errs towards "no plateau".

    References
    ----------
    Taylor HL, Buskirk E, Henschel A. Maximal oxygen intake as an objective measure of
    cardio-respiratory performance. J Appl Physiol 1955;8:73-80 (from memory: < 150 mL/min).
    """
    require(math.isfinite(threshold_ml_min) and threshold_ml_min > 0, "threshold_ml_min", "a VO2 rise > 0 mL/min", threshold_ml_min)
    require(math.isfinite(window_s) and 5 <= window_s <= 60, "window_s", "a window of 5-60 s", window_s)
    _need_exercise(exercise_avg)
    t = exercise_avg[C.T_S].to_numpy(dtype=float)
    vo2 = exercise_avg[C.VO2_ML_MIN].to_numpy(dtype=float)
    t_end = float(np.nanmax(t))
    late = t > t_end - window_s
    early = (t > t_end - PLATEAU_SPAN_S - window_s) & (t <= t_end - PLATEAU_SPAN_S)
    load_col = _load_column(exercise_avg)
    if not (np.isfinite(vo2[late]).any() and np.isfinite(vo2[early]).any()):
        return PlateauTest(
            None, None, threshold_ml_min, load_col, None, None, None,
            "Exercise lasted too briefly to test for a VO2 plateau over its last minute.",
        )
    rise = float(np.nanmean(vo2[late]) - np.nanmean(vo2[early]))
    before = (t >= float(np.nanmin(t)) + 60.0) & (t <= t_end - PLATEAU_SPAN_S - window_s) & np.isfinite(vo2)
    expected = None
    noise_margin = None
    if before.sum() >= 5 and np.ptp(t[before]) > 0:
        coef = np.polyfit(t[before], vo2[before], 1)
        expected = float(coef[0] * 60.0)
        resid = vo2[before] - np.polyval(coef, t[before])
        sd_row = float(np.sqrt(resid @ resid / (before.sum() - 2)))
        n_late, n_early = int(np.isfinite(vo2[late]).sum()), int(np.isfinite(vo2[early]).sum())
        noise_margin = 2.0 * sd_row * math.sqrt(1.0 / n_late + 1.0 / n_early)

    def _rise(col: str) -> float | None:
        if col not in exercise_avg:
            return None
        v = exercise_avg[col].to_numpy(dtype=float)
        if not (np.isfinite(v[late]).any() and np.isfinite(v[early]).any()):
            return None
        return float(np.nanmean(v[late]) - np.nanmean(v[early]))

    load_rise = _rise(load_col) if load_col else None
    grade_rise = _rise(C.GRADE_PCT) if load_col == C.SPEED_KMH else None
    more_work = (load_rise is not None and load_rise > 0) or (grade_rise is not None and grade_rise > 0)
    below_expected = expected is None or (
        rise < 0.5 * expected and (noise_margin is None or rise < expected - noise_margin)
    )
    small = rise < threshold_ml_min and below_expected
    limit = f"a plateau needs a rise below {threshold_ml_min:.0f} mL/min" + (
        f" and well below the {expected:.0f} mL/min the earlier ramp predicts for that minute"
        if expected is not None
        else ""
    )
    if load_col is None:
        plateau = small
        note = (
            f"VO2 rose {rise:.0f} mL/min over the last minute ({limit}: "
            f"{'met' if small else 'not met'}); no load was recorded, so 'despite more work' could not be checked."
        )
    else:
        plateau = small and more_work
        if small and more_work:
            note = f"VO2 rose only {rise:.0f} mL/min over the last minute although the load kept rising: plateau."
        elif small:
            note = f"VO2 rose {rise:.0f} mL/min over the last minute, but the load did not rise, so this is not a plateau."
        elif rise >= threshold_ml_min or expected is None:
            note = f"VO2 was still rising at the end ({rise:.0f} mL/min over the last minute; {limit}): no plateau."
        else:
            moved = f"rose {rise:.0f}" if rise >= 0 else f"fell {-rise:.0f}"
            note = (
                f"VO2 {moved} mL/min over the last minute, not clearly less than the {expected:.0f} mL/min the "
                "earlier ramp predicts for that minute (a plateau needs under half of it, beyond the "
                "breath-to-breath noise): no plateau."
            )
    return PlateauTest(plateau, rise, threshold_ml_min, load_col, load_rise, grade_rise, expected, note)


@dataclass(frozen=True)
class MaximalityReport:
    """Was the test maximal?

    Attributes
    ----------
    verdict : {"vo2max_plateau", "vo2peak_criteria_met", "vo2peak_submaximal"}
    label : str
        Reader-facing wording (:data:`VERDICT_LABELS`).
    reasons : list of str
        One sentence per criterion, in plain words.
    plateau : PlateauTest
    rer_peak : float or None
    rer_criterion_met : bool or None
        ``None`` when RER could not be read.
    hr_peak_bpm : float or None
    hr_max_predicted_bpm : float or None
        Tanaka prediction (needs age).
    hr_pct_predicted : float or None
    hr_criterion_met : bool or None
        ``None`` when HR or age is missing.
    """

    verdict: Verdict = described(description="`vo2max_plateau`, `vo2peak_criteria_met` or `vo2peak_submaximal`")
    label: str = described(description="the verdict in the reader's words")
    reasons: tuple[str, ...] = described(default=(), description="one sentence per criterion, in plain words")
    plateau: PlateauTest | None = described(default=None, description="the plateau test")
    rer_peak: float | None = described(default=None, description="peak RER (ratio of the peak-window means of VCO2 and VO2)")
    rer_criterion_met: bool | None = described(default=None, description="`rer_peak` at least 1.10 (null when RER could not be read)")
    hr_peak_bpm: float | None = described(default=None, unit="beats/min", description="highest averaged exercise heart rate")
    hr_max_predicted_bpm: float | None = described(default=None, unit="beats/min", description="predicted maximal heart rate (Tanaka)")
    hr_pct_predicted: float | None = described(default=None, unit="%", description="`hr_peak_bpm` as % of `hr_max_predicted_bpm`")
    hr_criterion_met: bool | None = described(
        default=None,
        description="`hr_pct_predicted` at least 90 % (information only, it does not decide the verdict; null "
        "without heart rate or age, or when the criterion does not apply)",
    )
    beta_blocker: bool | None = described(
        default=None, description="metadata `beta_blocker` (null when not recorded)"
    )
    hr_criterion_applies: bool = described(
        default=True, description="false under beta-blockade: age-predicted heart rate does not apply"
    )
    hr_max_beta_blocker_bpm: float | None = described(
        default=None, unit="beats/min", description="predicted maximal heart rate on a beta-blocker, 164 - 0.72·age "
        "(given when `beta_blocker` is true and age is known)", method="Brawner et al. 2004, from memory",
    )


def assess_maximality(
    exercise_avg: pd.DataFrame,
    *,
    age_y: float | None,
    beta_blocker: bool | None = None,
    plateau_threshold_ml_min: float = DEFAULT_PLATEAU_ML_MIN,
    rer_min: float = DEFAULT_RER_MIN,
    hr_pct_min: float = DEFAULT_HR_PCT_MIN,
    peak_window_s: float = DEFAULT_PEAK_WINDOW_S,
) -> MaximalityReport:
    """Judge whether the peak is a true VO2max, a VO2peak with maximal effort, or submaximal.

    Parameters
    ----------
    exercise_avg : pandas.DataFrame
        Averaged exercise rows.
    age_y : float or None, keyword-only
        Age, years, for the predicted maximal heart rate (Tanaka; Brawner under beta-blockade).
    beta_blocker : bool or None, keyword-only
        The test's metadata ``beta_blocker`` (``None`` when not recorded). When true, the heart
        rate is not compared with an age prediction (the criterion does not apply).
    plateau_threshold_ml_min : float, keyword-only
        See :func:`plateau_test` (default 150 mL/min).
    rer_min : float, keyword-only
        Peak RER at least this counts as maximal effort (default 1.10).
    hr_pct_min : float, keyword-only
        Peak HR at least this % of the predicted maximum is reported as met (information only;
        default 90).
    peak_window_s : float, keyword-only
        Window for the peak RER (see :func:`peak_rer`, default 30 s).

    Returns
    -------
    MaximalityReport

    Notes
    -----
    1. A plateau (:func:`plateau_test`) gives ``"vo2max_plateau"``.
    2. Otherwise peak RER ≥ ``rer_min`` gives ``"vo2peak_criteria_met"``.
    3. Otherwise ``"vo2peak_submaximal"``, with the reason.

    Peak RER ≥ 1.10 is the best non-invasive sign of maximal effort; age-predicted maximal heart
    rate scatters widely and is unreliable under beta-blockade and in heart failure (Balady et
    al. 2010), so the heart rate is reported beside the verdict as information and never
    decides it. The judgement of effort belongs to the supervising staff.

    References
    ----------
    Taylor HL, Buskirk E, Henschel A 1955 (plateau, from memory).
    Balady GJ, Arena R, Sietsema K, et al. Clinician's guide to cardiopulmonary exercise testing
    in adults: a scientific statement from the American Heart Association. Circulation
    2010;122:191-225 (RER ≥ 1.10; from memory).
    Tanaka H, Monahan KD, Seals DR 2001 (predicted maximal heart rate, from memory).
    Brawner CA, et al. Am Heart J 2004;148:910-914 (maximal heart rate under beta-blockade, from memory).
    """
    from analysis.reference.heart_rate import brawner_hr_max_bpm, tanaka_hr_max_bpm

    require(math.isfinite(rer_min) and 0.8 <= rer_min <= 1.5, "rer_min", "an RER between 0.8 and 1.5", rer_min)
    require(math.isfinite(hr_pct_min) and 50 <= hr_pct_min <= 100, "hr_pct_min", "a percentage 50-100", hr_pct_min)
    plateau = plateau_test(exercise_avg, threshold_ml_min=plateau_threshold_ml_min)
    reasons = [plateau.note]

    rer = peak_rer(exercise_avg, window_s=peak_window_s)
    rer_ok = None if rer is None else rer >= rer_min
    if rer is None:
        reasons.append("RER could not be read.")
    elif rer_ok:
        reasons.append(f"Peak RER {rer:.2f} reaches {rer_min:.2f}: maximal effort by the RER criterion.")
    else:
        shown = f"{rer:.2f}" if round(rer, 2) < rer_min else f"{rer:.3f}"  # 1.097 is not "1.10"
        reasons.append(f"Peak RER {shown} is below {rer_min:.2f}, the RER criterion of maximal effort.")

    hr = peak_hr_bpm(exercise_avg)
    applies = beta_blocker is not True
    hr_pred = tanaka_hr_max_bpm(age_y=age_y) if age_y is not None else None
    hr_bb = brawner_hr_max_bpm(age_y=age_y) if age_y is not None and beta_blocker else None
    hr_pct = 100.0 * hr / hr_pred if hr is not None and hr_pred else None
    hr_ok = None if hr_pct is None or not applies else hr_pct >= hr_pct_min
    if hr is None:
        reasons.append("No heart rate recorded (heart rate is information only).")
    elif not applies:
        bb = (
            f"; for reference, {100.0 * hr / hr_bb:.0f} % of the {hr_bb:.0f} beats/min predicted on a beta-blocker "
            "(Brawner et al. 2004)"
            if hr_bb
            else ""
        )
        reasons.append(
            f"Peak HR {hr:.0f} beats/min: the heart-rate criterion does not apply, the test records a beta-blocker{bb}."
        )
    elif hr_pred is None:
        reasons.append(f"Peak HR {hr:.0f} beats/min; age unknown, so no predicted maximum (information only).")
    elif hr_ok:
        reasons.append(
            f"Peak HR {hr:.0f} beats/min is {hr_pct:.0f} % of predicted {hr_pred:.0f} (≥ {hr_pct_min:.0f} %; "
            "information only)."
        )
    elif hr_pct is not None:
        pct = f"{hr_pct:.0f}" if round(hr_pct) < hr_pct_min else f"{hr_pct:.1f}"  # 89.7 % is not "90 %"
        reasons.append(
            f"Peak HR {hr:.0f} beats/min is {pct} % of predicted {hr_pred:.0f} (< {hr_pct_min:.0f} %); information "
            "only: age-predicted heart rate is unreliable in heart disease and under chronotropic incompetence "
            "(staff judgement)."
        )

    if plateau.plateau:
        verdict: Verdict = "vo2max_plateau"
    elif rer_ok:
        verdict = "vo2peak_criteria_met"
    else:
        verdict = "vo2peak_submaximal"
    return MaximalityReport(
        verdict=verdict,
        label=VERDICT_LABELS[verdict],
        reasons=tuple(reasons),
        plateau=plateau,
        rer_peak=rer,
        rer_criterion_met=rer_ok,
        hr_peak_bpm=hr,
        hr_max_predicted_bpm=hr_pred,
        hr_pct_predicted=hr_pct,
        hr_criterion_met=hr_ok,
        beta_blocker=beta_blocker,
        hr_criterion_applies=applies,
        hr_max_beta_blocker_bpm=hr_bb,
    )
