"""The one place where the results of a test are computed: :func:`analyze_session`.

The CLI, the dashboard, the store and the reports all call it; nothing else computes a number
that is shown to a user. It is a short composition of public steps, each in its own package,
each returning its own record and its notes as values.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.breaths import average_breaths
from analysis.breaths.cleaning import clean_breaths, outliers_method
from analysis.breaths.derived import with_derived_series
from analysis.errors import AnalysisError, InvalidParameter, TidemarkError
from analysis.indices._arrays import present_values
from analysis.indices.summary import compute_indices, indices_methods
from analysis.indices.threshold_values import threshold_values
from analysis.interpretation.lag import LagCorrection, threshold_lag
from analysis.interpretation.summary import interpret_test, interpretation_methods, interpretation_reference_method
from analysis.maximality import MAXIMALITY_METHOD, assess_maximality, peak_values
from analysis.numeric import finite_or_none
from analysis.oxygen.from_test import oxygen_from_test
from analysis.oxygen.pathway import CASCADE_METHOD, oxygen_pathway
from analysis.phases import PHASES_METHOD, label_phases
from analysis.reference import mode_code
from analysis.reference.heart_rate import BRAWNER_METHOD
from analysis.reference.summary import Classes, ReferenceValues, reference_methods, reference_values
from analysis.results import TestResults
from analysis.results.session_parts import AveragingUsed, BreathCounts, subject_from_metadata
from analysis.session import Session
from analysis.settings import AnalysisSettings
from analysis.thresholds import detect_thresholds, override_threshold
from analysis.thresholds.results import ThresholdPick, ThresholdReport
from analysis.zones import ZoneSet, lag_corrected_zones, training_zones, zones_method

#: Metadata keys read as positive numbers (others are passed on as given).
_NUMERIC_META = ("body_mass_kg", "age_y", "height_cm", "hb_g_dl", "mvv_l_min", "fev1_l")


def effective_metadata(session: Session, settings: AnalysisSettings) -> dict[str, Any]:
    """The session's metadata with the settings' overrides applied; numbers that are not
    positive and finite become ``None``."""
    meta = settings.metadata.apply(session.meta)
    for key in _NUMERIC_META:
        v = meta.get(key)
        if v is not None:
            try:
                f = float(v)
            except (TypeError, ValueError):
                f = math.nan
            meta[key] = f if math.isfinite(f) and f > 0 else None
    return meta


def exercise_mode(meta: dict[str, Any], avg: pd.DataFrame) -> str | None:
    """``cycle`` or ``treadmill``: from the metadata, else from the load column recorded."""
    if meta.get("mode"):
        try:
            return mode_code(meta["mode"])
        except TidemarkError:
            pass
    for col, mode in ((C.WORK_W, "cycle"), (C.SPEED_KMH, "treadmill")):
        values = present_values(avg, col)
        if values is not None and float(np.nanmax(values)) > 0:
            return mode
    return None


def checked_breaths(session: Session) -> pd.DataFrame:
    """The session's breaths, sorted by time with ``source_row``, or an :class:`AnalysisError`
    saying what is missing."""
    if not isinstance(session, Session):
        raise AnalysisError(f"analyze_session needs a Session; received {type(session).__name__}.")
    breaths = session.breaths
    name = session.source_name or "the session"
    missing = [c for c in C.REQUIRED if c not in breaths.columns]
    if missing:
        raise AnalysisError(
            f"{name} has no column(s) {', '.join(f'{C.COLUMNS[c].label} ({c})' for c in missing)}; "
            "a test needs time, VO2, VCO2 and VE."
        )
    if len(breaths) < 20:
        raise AnalysisError(f"{name} holds only {len(breaths)} breaths; at least 20 are needed for an analysis.")
    if "source_row" not in breaths.columns:
        breaths = breaths.assign(source_row=np.arange(1, len(breaths) + 1))
    if np.any(np.diff(breaths[C.T_S].to_numpy(dtype=float)) < 0):  # NaN times compare False, as diff().lt(0)
        breaths = breaths.sort_values(C.T_S, kind="stable").reset_index(drop=True)
    return breaths


def find_thresholds(avg: pd.DataFrame, phases_avg: np.ndarray, settings: AnalysisSettings) -> ThresholdReport:
    """Detected VT1/VT2 (:func:`detect_thresholds`) with the reviewer's overrides applied."""
    report = detect_thresholds(avg, phases=phases_avg)
    for kind in ("vt1", "vt2"):
        ov = getattr(settings, f"{kind}_override")
        if ov is not None:
            report = override_threshold(report, avg, kind=kind, t_s=ov.t_s, vo2_ml_min=ov.vo2_ml_min, reason=ov.reason)
    return report


def threshold_method(pick: ThresholdPick | None) -> str:
    """The reader-facing method sentence of the threshold in use."""
    if pick is None:
        return "not found (see the threshold notes for why)"
    if pick.source == "manual":
        return pick.note  # "set by the reviewer at ... s (...)", with the reviewer's reason
    return f"{pick.method} of the automatic methods — {pick.note}" if pick.note else pick.method


def zones_for(
    ex: pd.DataFrame, *, vt1: Any | None, vt2: Any | None, peak: Any, hr_peak_bpm: float | None,
    lag: LagCorrection | None = None,
) -> ZoneSet:
    """Training zones (:func:`training_zones`) topped by the peak HR and the highest load of exercise.

    The VO2-peak row itself can sit in an averaging window that already holds the first breaths
    of recovery (lower load), so the load maxima of exercise are used for the top. With ``lag``
    (a ramp), the work-rate/speed bounds at VT1 and VT2 are its steady-state equivalents
    (:func:`analysis.zones.lag_corrected_zones`, Whipp et al. 1981).
    """
    if vt1 is not None and vt2 is not None and vt2.vo2_ml_min < vt1.vo2_ml_min:
        return ZoneSet(
            (),
            f"Zones not given: VT2 ({vt2.vo2_ml_min:.0f} mL/min) is below VT1 ({vt1.vo2_ml_min:.0f} mL/min); "
            "check both thresholds on the charts.",
        )

    def top(col: str, fallback: float | None) -> float | None:
        values = present_values(ex, col)
        return float(np.nanmax(values)) if values is not None else fallback

    ceiling = dataclasses.replace(
        peak,
        hr_bpm=hr_peak_bpm if hr_peak_bpm is not None else peak.hr_bpm,
        work_w=top(C.WORK_W, peak.work_w),
        speed_kmh=top(C.SPEED_KMH, peak.speed_kmh),
        grade_pct=top(C.GRADE_PCT, peak.grade_pct),
    )
    try:
        zones = training_zones(vt1=vt1, vt2=vt2, peak=ceiling)
    except TidemarkError as exc:
        return ZoneSet((), f"Zones not given: {exc}")
    if lag is None:
        return zones
    return lag_corrected_zones(
        zones, load=lag.load, vt1_load=lag.vt1_corrected, vt2_load=lag.vt2_corrected,
        ramp_rate_per_min=lag.ramp_rate_per_min, mean_response_time_s=lag.mean_response_time_s,
    )


def analyze_session(
    session: Session, settings: AnalysisSettings | None = None, *, with_oxygen: bool = True
) -> TestResults:
    """Analyse one exercise test: clean, average, find thresholds, and compute every result.

    Parameters
    ----------
    session : Session
        Breaths in canonical columns with metadata (:class:`analysis.session.Session`).
    settings : AnalysisSettings, optional
        Averaging, outlier test, manual exclusions and restorations, threshold overrides,
        plateau threshold, metadata overrides and oxygen conditions (defaults when omitted).
    with_oxygen : bool, keyword-only
        Compute the per-state oxygen comparison when Hb is known (default). The folder batch
        turns it off because its summary row holds no oxygen values; ``oxygen`` is then
        ``None`` and every other result is unchanged.

    Returns
    -------
    TestResults
        ``analysis.records.to_json(results)`` gives the JSON documented in ``docs/results.md``.

    Raises
    ------
    AnalysisError
        Required columns missing, too few breaths, or no exercise phase.

    Notes
    -----
    Steps: clean (outlier breaths and the reviewer's exclusions) -> phases -> average (with the
    derived series) -> thresholds (detected, then the reviewer's overrides) -> values at the
    thresholds and the peak -> maximality -> indices -> reference values and classes -> the ramp's
    lag correction -> zones (power/speed bounds lag-corrected on a ramp) ->
    oxygen (when Hb is known). Each step returns its record and its notes; the notes are
    gathered in ``warnings``, nothing is printed.
    """
    settings = settings or AnalysisSettings()
    breaths = checked_breaths(session)
    meta = effective_metadata(session, settings)
    body_mass = meta.get("body_mass_kg")

    cleaned = clean_breaths(
        breaths,
        window_breaths=settings.outlier_window_breaths,
        k_sd=settings.outlier_k_sd,
        excluded_rows=settings.excluded_rows,
        restored_rows=settings.restored_rows,
    )
    phases = label_phases(cleaned.breaths)
    avg = average_breaths(cleaned.breaths, settings.averaging, phase_labels=phases.labels.to_numpy())
    avg = with_derived_series(avg.reset_index(drop=True))
    phases_avg = avg[C.PHASE].fillna("exercise").astype(str).to_numpy() if C.PHASE in avg else np.full(len(avg), "exercise")
    ex = avg.loc[phases_avg == "exercise"]
    if len(ex) == 0:
        raise AnalysisError(
            f"{session.source_name or 'the session'}: no exercise phase was found — label the phases in the file "
            "or include a work-rate or speed column."
        )
    mode = exercise_mode(meta, avg)

    report = find_thresholds(avg, phases_avg, settings)
    peak = peak_values(ex, body_mass_kg=body_mass, window_s=settings.peak_window_s)
    vt1, vt2 = (
        threshold_values(
            avg, getattr(report, kind), vo2_peak_ml_min=peak.vo2_ml_min, body_mass_kg=body_mass,
            typed_t_s=ov.t_s if ov else None, typed_vo2_ml_min=ov.vo2_ml_min if ov else None,
        )
        for kind, ov in (("vt1", settings.vt1_override), ("vt2", settings.vt2_override))
    )
    subject = subject_from_metadata(meta, source_name=session.source_name, mode=mode)
    maximality = assess_maximality(
        ex, age_y=meta.get("age_y"), beta_blocker=subject.beta_blocker,
        plateau_threshold_ml_min=settings.plateau_threshold_ml_min,
        peak_window_s=settings.peak_window_s,
    )
    indices, index_notes = compute_indices(
        avg, phases_avg=phases_avg, peak=peak, vt1_hr_bpm=vt1.hr_bpm if vt1 else None,
        vt2_t_s=vt2.t_s if vt2 else None, vt2_hr_bpm=vt2.hr_bpm if vt2 else None,
        hr_peak_bpm=maximality.hr_peak_bpm, mode=mode, body_mass_kg=body_mass,
        mvv_l_min=meta.get("mvv_l_min"), fev1_l=meta.get("fev1_l"),
    )
    try:
        predicted, classes, reference_notes = reference_values(
            age_y=meta.get("age_y"), sex=meta.get("sex"), body_mass_kg=body_mass, height_cm=meta.get("height_cm"),
            mode=mode, vo2_peak_ml_kg_min=peak.vo2_ml_kg_min, hr_peak_bpm=maximality.hr_peak_bpm,
            ve_vco2_slope_whole_exercise=indices.ve_vco2_slope_whole_exercise,
        )
    except InvalidParameter as exc:  # metadata out of range: no reference values, said in a note
        predicted, classes = ReferenceValues(), Classes()
        reference_notes = (f"Reference values and classes not given: {exc}",)
    lag, lag_notes = threshold_lag(avg, phases_avg=phases_avg, vt1=vt1, vt2=vt2, mode=mode)
    zones = zones_for(ex, vt1=vt1, vt2=vt2, peak=peak, hr_peak_bpm=maximality.hr_peak_bpm, lag=lag)
    oxygen, oxygen_notes, oxygen_methods = (
        oxygen_from_test(
            avg, phases_avg=phases_avg, hb_g_dl=meta.get("hb_g_dl"), barometric_mmhg=finite_or_none(meta.get("barometric_mmhg")),
            options=settings.oxygen, peak=peak, vt1=vt1, vt2=vt2,
        )
        if with_oxygen
        else (None, (), {})
    )

    oxygen_cascade, cascade_notes = oxygen_pathway(oxygen) if oxygen is not None else (None, ())
    interpretation, interpretation_notes = interpret_test(
        cleaned.breaths, avg, breath_phases=phases.labels.to_numpy(dtype=str), phases_avg=phases_avg, meta=meta,
        mode=mode, beta_blocker=subject.beta_blocker, indices=indices, maximality=maximality,
        vo2_peak_ml_min=peak.vo2_ml_min, vt1=vt1, vt2=vt2, reference_set=settings.reference_set, lag=lag,
    )
    if oxygen_cascade is not None:
        oxygen_methods = {**oxygen_methods, "oxygen_cascade": CASCADE_METHOD}
    notes = [*phases.notes, *index_notes, *reference_notes, *oxygen_notes, *(f"Oxygen: {n}" for n in cascade_notes),
             *lag_notes, *interpretation_notes]
    if body_mass is None:
        notes.append("Body mass unknown: per-kg values, METs and predicted values are not given.")
    if meta.get("beta_blocker") not in (None, "") and subject.beta_blocker is None:
        notes.append(
            f"Metadata beta_blocker '{meta['beta_blocker']}' is not yes or no, so it was not used; "
            "set it in the subject details (yes or no)."
        )
    notes.extend(cleaned.notes)
    notes.extend(r if r[:1].isupper() else r[:1].upper() + r[1:] for r in report.reasons if "not found" in r)
    if not zones.zones:
        notes.append(zones.note)

    window = (
        f"centred {settings.peak_window_s:g}-s mean (windows wholly inside exercise) of the"
        if settings.peak_window_s
        else "value of the"
    )
    methods = {
        "outliers": outliers_method(window_breaths=settings.outlier_window_breaths, k_sd=settings.outlier_k_sd),
        "phases": PHASES_METHOD,
        **indices_methods(indices, vt2_found=report.vt2 is not None),
        "maximality": MAXIMALITY_METHOD,
        **reference_methods(),
        **({"hr_max_beta_blocker": BRAWNER_METHOD} if maximality.hr_max_beta_blocker_bpm is not None else {}),
        "zones": zones_method(load_basis=zones.load_basis),
        "averaging": settings.averaging.label,
        "vo2_peak": f"highest {window} averaged exercise VO2 (common practice: 30-s peak values)",
        "rer_peak": f"highest {window} averaged exercise VCO2 / VO2 (same window as VO2peak)",
        "vt1": threshold_method(report.vt1),
        "vt2": threshold_method(report.vt2),
        **oxygen_methods,
        **interpretation_methods(),
        "interpretation_reference_set": interpretation_reference_method(settings.reference_set),
    }
    return TestResults(
        subject=subject,
        vt1=vt1,
        vt2=vt2,
        peak=peak,
        maximality=maximality,
        indices=indices,
        predicted=predicted,
        classes=classes,
        zones=zones,
        phases=phases.spans,
        thresholds=report,
        averaging=AveragingUsed(settings.averaging.method, float(settings.averaging.size)),
        breaths=BreathCounts(total=len(breaths), used=len(cleaned.breaths), excluded=len(cleaned.excluded)),
        excluded_breaths=cleaned.excluded,
        oxygen=oxygen,
        oxygen_cascade=oxygen_cascade,
        interpretation=interpretation,
        warnings=tuple(dict.fromkeys(notes)),
        methods=methods,
        settings=settings,
        averaged=avg,
    )
