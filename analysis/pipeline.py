"""The one place where the results of a test are computed: :func:`analyze_session`.

The CLI, the dashboard, the store and the reports all call it; nothing else computes a number
that is shown to a user.
"""

from __future__ import annotations

import dataclasses
import math
import threading
import warnings
from collections.abc import Callable
from typing import Any, ParamSpec, TypeVar

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.breaths import average_breaths, exclude_breaths
from analysis.breaths.outliers import outlier_columns, outlier_frame
from analysis.errors import AnalysisError, DataQualityWarning, TidemarkError
from analysis.indices import (
    breathing_reserve,
    energy_expenditure_kcal_min,
    fat_max,
    hr_recovery_1min_bpm,
    hr_reserve_bpm,
    mets,
    o2_pulse_peak_ml_beat,
    oues,
    pct_hr_reserve,
    point_values,
    ve_vco2_nadir,
    ve_vco2_slope,
    vo2_work_rate_slope,
)
from analysis.indices._arrays import present_values
from analysis.indices.point_values import PointValues
from analysis.maximality import assess_maximality, peak_values
from analysis.phases import detect_phases
from analysis.reference import (
    friend_vo2max_ml_kg_min,
    mode_code,
    pct_predicted,
    tanaka_hr_max_bpm,
    ventilatory_class,
    weber_class,
)
from analysis.results import TestResults, json_safe
from analysis.session import Session
from analysis.settings import AnalysisSettings
from analysis.subject import reference_sex
from analysis.thresholds import detect_thresholds, override_threshold
from analysis.thresholds.results import ThresholdPick, ThresholdReport
from analysis.zones import ZoneSet, training_zones

#: Columns of :attr:`TestResults.excluded_breaths`.
EXCLUDED_COLUMNS: tuple[str, ...] = ("source_row", "t_s", "column", "value", "reason", "by")

_WARNINGS_LOCK = threading.Lock()

#: Half-width (s) of the window of averaged rows whose SpO2 is averaged at VT1, VT2 and peak.
SPO2_HALF_WINDOW_S = 15.0

#: Values of ``indices["ve_vco2_slope_span"]``: which span the headline VE/VCO2 slope covers.
VE_VCO2_TO_VT2 = "to_vt2"
VE_VCO2_WHOLE_EXERCISE = "whole_exercise"

#: Share of breaths excluded above which a warning is raised (common practice: a clean
#: recording loses a few per cent to swallows, coughs and talking).
EXCLUDED_WARN_FRACTION = 0.10

_BASE_METHODS: dict[str, str] = {
    "outliers": "breaths far from the local mean of their neighbours are excluded (Lamarra et al. 1987)",
    "phases": "the file's phase column when present, else found from the work-rate signal (common practice)",
    "hr_peak_bpm": "highest averaged heart rate during exercise",
    "ve_vco2_slope_to_vt2": "least-squares slope of VE on VCO2 from exercise start to VT2 (Arena et al. 2007)",
    "ve_vco2_slope_whole_exercise": "least-squares slope of VE on VCO2 over the whole exercise phase (Arena et al. 2007)",
    "ve_vco2_nadir": "lowest averaged VE/VCO2 during exercise (Sun et al. 2002)",
    "oues": "slope of VO2 (mL/min) on log10 VE (L/min) over the whole exercise phase (Baba et al. 1996)",
    "o2_pulse": "VO2/HR, highest averaged value during exercise (Wasserman et al.)",
    "vo2_work_rate_slope": "least-squares slope of VO2 on work rate over the ramp, first 60 s left out (ATS/ACCP 2003)",
    "mets": "VO2peak per kg / 3.5 mL/kg/min (common practice)",
    "hr_reserve": "peak HR - resting HR; % of reserve by Karvonen et al. 1957",
    "hr_recovery_1min": "HR at end of exercise - HR 60 s later (Cole et al. 1999)",
    "breathing_reserve": "MVV - peak VE; MVV measured or FEV1 × 40 (ATS/ACCP 2003)",
    "energy_expenditure": "abbreviated Weir equation (Weir 1949)",
    "substrate_oxidation": "Frayn 1983 equations without protein (averaged points with RER below 1.0)",
    "fat_max": "averaged exercise point with the highest fat oxidation by the Frayn 1983 equations (Achten et al. 2002)",
    "maximality": "VO2 plateau below the set rise over the last minute despite more work (Taylor et al. 1955); "
    "secondary criteria RER ≥ 1.10 and HR ≥ 90 % of Tanaka-predicted (common practice)",
    "predicted_vo2max": "FRIEND registry equation (de Souza e Silva et al. 2018)",
    "hr_max_predicted": "208 - 0.7 × age (Tanaka et al. 2001)",
    "weber_class": "classes A-D by VO2peak per kg (Weber & Janicki 1985)",
    "ventilatory_class": "classes I-IV by the whole-exercise VE/VCO2 slope (Arena et al. 2007; the paper's slope "
    "spans all exercise data, from memory)",
    "zones": "three zones bounded by VT1 and VT2, values read from the averaged data (common practice)",
}


def _effective_meta(session: Session, settings: AnalysisSettings) -> dict[str, Any]:
    meta = settings.metadata.apply(session.meta)
    for key in ("body_mass_kg", "age_y", "height_cm", "hb_g_dl", "mvv_l_min", "fev1_l"):
        v = meta.get(key)
        if v is not None:
            try:
                f = float(v)
            except (TypeError, ValueError):
                f = math.nan
            meta[key] = f if math.isfinite(f) and f > 0 else None
    return meta


def _mode(meta: dict[str, Any], avg: pd.DataFrame) -> str | None:
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


def _excluded_table(breaths: pd.DataFrame, settings: AnalysisSettings) -> pd.DataFrame:
    found = outlier_columns(breaths, window_breaths=settings.outlier_window_breaths, k_sd=settings.outlier_k_sd)
    restored = set(settings.restored_rows)
    if found is not None and restored:
        back = np.isin(found["source_row"], np.fromiter(restored, dtype=np.int64, count=len(restored)))
        if back.any():
            keep = np.flatnonzero(~back)
            found = {k: v[keep] if isinstance(v, np.ndarray) else [v[i] for i in keep] for k, v in found.items()}
    n_auto = 0 if found is None else len(found["column"])
    manual_rows = settings.excluded_rows
    auto_rows = set(found["source_row"].tolist()) if manual_rows and n_auto and found is not None else set()
    manual = [r for r in manual_rows if r not in auto_rows]
    if not manual and n_auto and found is not None:
        rows = found["source_row"]
        order = np.argsort(rows, kind="stable") if np.any(np.diff(rows) < 0) else np.arange(len(rows))
        column, reason = found["column"], found["reason"]
        return pd.DataFrame(
            {
                "source_row": rows[order],
                "t_s": found["t_s"][order],
                "column": [column[i] for i in order],
                "value": found["value"][order],
                "reason": [reason[i] for i in order],
                "by": ["auto"] * len(rows),
            }
        )
    auto = outlier_frame(found)
    parts = [auto.assign(by="auto")[list(EXCLUDED_COLUMNS)]] if len(auto) else []
    if manual:
        src = breaths["source_row"] if "source_row" in breaths else pd.Series(np.arange(1, len(breaths) + 1))
        pos = {int(s): i for i, s in enumerate(src.to_numpy())}
        t = breaths[C.T_S].to_numpy(dtype=float)
        rows = [
            (r, t[pos[r]] if r in pos else np.nan, "", np.nan, "excluded by the reviewer", "reviewer")
            for r in manual
        ]
        parts.append(pd.DataFrame(rows, columns=list(EXCLUDED_COLUMNS)))
    if not parts:
        return pd.DataFrame(
            {c: pd.Series(dtype=object if c in ("column", "reason", "by") else float) for c in EXCLUDED_COLUMNS}
        ).astype({"source_row": int})
    out = pd.concat(parts, ignore_index=True) if len(parts) > 1 else parts[0].reset_index(drop=True)
    return out.sort_values("source_row", kind="stable").reset_index(drop=True)


def _phase_times(breaths: pd.DataFrame, phases: np.ndarray) -> dict[str, dict[str, float]]:
    t = breaths[C.T_S].to_numpy(dtype=float)
    ph = np.asarray(phases)
    out: dict[str, dict[str, float]] = {}
    for name in C.PHASES:
        m = ph == name
        if m.any():
            out[name] = {"start_s": float(t[m].min()), "end_s": float(t[m].max())}
    return out


def _apply_overrides(report: ThresholdReport, avg: pd.DataFrame, settings: AnalysisSettings) -> ThresholdReport:
    for kind in ("vt1", "vt2"):
        ov = getattr(settings, f"{kind}_override")
        if ov is not None:
            report = override_threshold(
                report, avg, kind=kind, t_s=ov.t_s, vo2_ml_min=ov.vo2_ml_min, reason=ov.reason
            )
    return report


def _ceiling(ex: pd.DataFrame, peak: PointValues, hr_peak: float | None) -> PointValues:
    """Top of the test for the highest zone: peak HR and the highest load reached in exercise.

    The VO2-peak row itself can sit in an averaging window that already holds the first
    breaths of recovery (lower load), so the load maxima are used instead.
    """
    def top(col: str, fallback: float | None) -> float | None:
        values = present_values(ex, col)
        return float(np.nanmax(values)) if values is not None else fallback

    return dataclasses.replace(
        peak,
        hr_bpm=hr_peak if hr_peak is not None else peak.hr_bpm,
        work_w=top(C.WORK_W, peak.work_w),
        speed_kmh=top(C.SPEED_KMH, peak.speed_kmh),
        grade_pct=top(C.GRADE_PCT, peak.grade_pct),
    )


_P = ParamSpec("_P")
_T = TypeVar("_T")


def _safe(fn: Callable[_P, _T], *args: _P.args, **kwargs: _P.kwargs) -> _T | None:
    """``fn(...)``, or ``None`` when the data do not allow the index (AnalysisError)."""
    try:
        return fn(*args, **kwargs)
    except AnalysisError:
        return None


def _mean_where(frame: pd.DataFrame, name: str, mask: np.ndarray) -> float | None:
    """Mean of column ``name`` over the rows in ``mask``, missing values skipped (``None`` when none)."""
    if name not in frame:
        return None
    values = frame[name].to_numpy(dtype=float)[mask]
    return float(np.nanmean(values)) if (~np.isnan(values)).any() else None


def _indices(
    *,
    avg: pd.DataFrame,
    ex: pd.DataFrame,
    phases_avg: np.ndarray,
    meta: dict[str, Any],
    mode: str | None,
    peak: PointValues,
    vt1: PointValues | None,
    vt2: PointValues | None,
    hr_peak: float | None,
    warns: list[str],
) -> dict[str, Any]:
    out: dict[str, Any] = {}
    vo2, vco2, ve = (ex[c].to_numpy(dtype=float) for c in (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN))
    t = ex[C.T_S].to_numpy(dtype=float)

    whole = _safe(ve_vco2_slope, vco2, ve)
    to_vt2 = None
    if vt2 is not None:
        below = t <= vt2.t_s
        to_vt2 = _safe(ve_vco2_slope, vco2[below], ve[below])
    # Headline slope: to VT2 when a VT2 was found (the span below respiratory compensation,
    # where VE follows VCO2 alone), else the whole exercise phase (docs/results.md).
    fit, span = (to_vt2, VE_VCO2_TO_VT2) if to_vt2 is not None else (whole, VE_VCO2_WHOLE_EXERCISE)
    out["ve_vco2_slope"] = fit.slope if fit else None
    out["ve_vco2_intercept_l_min"] = fit.intercept if fit else None
    out["ve_vco2_slope_r2"] = fit.r2 if fit else None
    out["ve_vco2_slope_span"] = span if fit else None
    out["ve_vco2_slope_to_vt2"] = to_vt2.slope if to_vt2 else None
    out["ve_vco2_slope_whole_exercise"] = whole.slope if whole else None
    out["ve_vco2_nadir"] = _safe(ve_vco2_nadir, vco2, ve)
    ou = _safe(oues, vo2, ve)
    out["oues"] = ou.slope if ou else None
    out["oues_per_kg"] = ou.slope / meta["body_mass_kg"] if ou and meta.get("body_mass_kg") else None

    hr = present_values(ex, C.HR_BPM)
    out["o2_pulse_peak_ml_beat"] = _safe(o2_pulse_peak_ml_beat, vo2, hr) if hr is not None else None
    out["o2_pulse_at_peak_ml_beat"] = peak.vo2_ml_min / peak.hr_bpm if peak.hr_bpm else None

    work = present_values(ex, C.WORK_W)
    if mode == "cycle" and work is not None:
        wr = _safe(vo2_work_rate_slope, t, vo2, work)
        out["vo2_work_rate_slope_ml_min_w"] = wr.slope if wr else None
        out["work_peak_w"] = float(np.nanmax(work))
    else:
        out["vo2_work_rate_slope_ml_min_w"] = None
        out["work_peak_w"] = None
    out["mets_peak"] = mets(peak.vo2_ml_kg_min) if peak.vo2_ml_kg_min else None

    hr_rest = _mean_where(avg, C.HR_BPM, phases_avg == "rest")
    out["hr_rest_bpm"] = hr_rest
    if hr_rest is not None and hr_peak is not None and hr_peak > hr_rest:
        out["hr_reserve_bpm"] = hr_reserve_bpm(hr_max_bpm=hr_peak, hr_rest_bpm=hr_rest)
        for name, p in (("vt1", vt1), ("vt2", vt2)):
            out[f"pct_hr_reserve_{name}"] = (
                pct_hr_reserve(p.hr_bpm, hr_max_bpm=hr_peak, hr_rest_bpm=hr_rest) if p and p.hr_bpm else None
            )
    else:
        out["hr_reserve_bpm"] = out["pct_hr_reserve_vt1"] = out["pct_hr_reserve_vt2"] = None
    hr_all = present_values(avg, C.HR_BPM)
    out["hr_recovery_1min_bpm"] = (
        hr_recovery_1min_bpm(avg[C.T_S].to_numpy(dtype=float), hr_all, t_end_exercise_s=float(t.max()))
        if hr_all is not None and (phases_avg == "recovery").any()
        else None
    )

    ve_peak = float(np.nanmax(ve))
    out["ve_peak_l_min"] = ve_peak
    br = breathing_reserve(ve_peak, mvv_l_min=meta.get("mvv_l_min"), fev1_l=meta.get("fev1_l"))
    out["breathing_reserve"] = json_safe(br) if br else None

    out["energy_expenditure_peak_kcal_min"] = (
        energy_expenditure_kcal_min(peak.vo2_ml_min, peak.rer * peak.vo2_ml_min) if peak.rer is not None else None
    )
    fm = fat_max(t, vo2, vco2, vo2_peak_ml_min=peak.vo2_ml_min)
    if fm is not None:
        row = ex.iloc[fm.position]
        out["fat_max"] = json_safe(
            {
                "fat_g_min": fm.fat_g_min,
                "vo2_ml_min": fm.vo2_ml_min,
                "pct_vo2_peak": fm.pct_vo2_peak,
                "time_s": fm.t_s,
                "hr_bpm": row.get(C.HR_BPM),
                "work_w": row.get(C.WORK_W),
                "speed_kmh": row.get(C.SPEED_KMH),
            }
        )
    else:
        out["fat_max"] = None
    if out["ve_vco2_slope"] is None:
        warns.append("The VE/VCO2 slope could not be computed from the exercise data.")
    elif vt2 is not None and to_vt2 is None:
        warns.append("The VE/VCO2 slope to VT2 could not be computed (too few points below VT2): the whole-exercise slope is given.")
    return json_safe(out)


def _reference(meta: dict[str, Any], mode: str | None, peak: PointValues, ve_vco2: float | None, hr_peak: float | None, warns: list[str]) -> tuple[dict[str, Any], dict[str, Any]]:
    predicted: dict[str, Any] = {
        "vo2max_friend_ml_kg_min": None,
        "pct_predicted_vo2max": None,
        "hr_max_tanaka_bpm": None,
        "pct_predicted_hr_max": None,
    }
    age, mass, height, sex = meta.get("age_y"), meta.get("body_mass_kg"), meta.get("height_cm"), meta.get("sex")
    missing = [n for n, v in (("age", age), ("sex", sex), ("body mass", mass), ("height", height), ("mode", mode)) if v is None]
    if not missing and age is not None and mass is not None and height is not None and mode is not None:
        try:
            pred = friend_vo2max_ml_kg_min(age_y=age, sex=reference_sex(sex), body_mass_kg=mass, height_cm=height, mode=mode)
            predicted["vo2max_friend_ml_kg_min"] = pred
            if peak.vo2_ml_kg_min is not None and pred > 0:
                predicted["pct_predicted_vo2max"] = pct_predicted(peak.vo2_ml_kg_min, pred)
        except TidemarkError as exc:
            warns.append(f"Predicted VO2max not given: {exc}")
    else:
        warns.append("Predicted VO2max (FRIEND) not given: missing " + ", ".join(missing) + ".")
    if age is not None:
        try:
            hr_pred = tanaka_hr_max_bpm(age_y=age)
            predicted["hr_max_tanaka_bpm"] = hr_pred
            if hr_peak is not None:
                predicted["pct_predicted_hr_max"] = pct_predicted(hr_peak, hr_pred)
        except TidemarkError as exc:
            warns.append(f"Predicted maximal heart rate not given: {exc}")
    classes: dict[str, Any] = {"weber": None, "ventilatory": None}
    if peak.vo2_ml_kg_min is not None:
        classes["weber"] = _safe_cls(weber_class, peak.vo2_ml_kg_min)
    if ve_vco2 is not None:
        classes["ventilatory"] = _safe_cls(ventilatory_class, ve_vco2)
    return json_safe(predicted), classes


def _safe_cls(fn: Callable[[float], str], value: float) -> str | None:
    try:
        return fn(value)
    except TidemarkError:
        return None


def spo2_by_state(
    avg: pd.DataFrame, phases_avg: np.ndarray, times_s: dict[str, float], *, warns: list[str] | None = None
) -> dict[str, float]:
    """Mean SpO2 (%) of the session's ``spo2_pct`` column around each oxygen state.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (``t_s``, ``spo2_pct``).
    phases_avg : numpy.ndarray
        Phase label of every averaged row.
    times_s : dict of str to float
        State name -> time (s) of the state (VT1, VT2, peak).
    warns : list of str, optional
        Receives a note for each state whose mean lies outside 50-100 % (then left out).

    Returns
    -------
    dict of str to float
        ``"rest"``: mean over the rest phase; every state in ``times_s``: mean of the averaged
        rows within ±15 s of its time (a 30-s window, as for peak values; common practice).
        States without finite SpO2 values are left out; an empty dict without the column.
    """
    if C.SPO2_PCT not in avg.columns:
        return {}
    spo2 = avg[C.SPO2_PCT].to_numpy(dtype=float)
    t = avg[C.T_S].to_numpy(dtype=float)
    masks = {"rest": phases_avg == "rest"}
    masks.update({name: np.abs(t - t_s) <= SPO2_HALF_WINDOW_S for name, t_s in times_s.items()})
    out: dict[str, float] = {}
    for name, mask in masks.items():
        values = spo2[mask & np.isfinite(spo2)]
        if values.size == 0:
            continue
        mean = float(values.mean())
        if 50.0 <= mean <= 100.0:
            out[name] = mean
        elif warns is not None:
            warns.append(f"Oxygen: SpO2 around {name} averages {mean:.0f} %, outside 50-100 %: not used.")
    return out


def _oxygen(
    meta: dict[str, Any],
    settings: AnalysisSettings,
    *,
    avg: pd.DataFrame,
    phases_avg: np.ndarray,
    peak: PointValues,
    vt1: PointValues | None,
    vt2: PointValues | None,
    warns: list[str],
) -> dict[str, Any] | None:
    """Per-state oxygen comparison (Oxygen engineer's :func:`analysis.oxygen.oxygen_comparison`)."""
    hb = meta.get("hb_g_dl")
    if hb is None:
        return None
    from analysis.oxygen import StateConditions, StatePoint, oxygen_comparison

    opts = dict(settings.oxygen)
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
    if opts.get("pb_mmhg") is None and meta.get("barometric_mmhg") is not None:
        opts["pb_mmhg"] = float(meta["barometric_mmhg"])  # the test's own barometric pressure
    opts = {k: v for k, v in opts.items() if v is not None}
    column_spo2: dict[str, float] | None = {} if opts.get("spo2_pct") is not None else None  # a set SpO2 overrides the column
    states: list[tuple[str, float, float | None, float | None, float | None]] = []
    at_rest = phases_avg == "rest"
    vo2_rest = _mean_where(avg, C.VO2_ML_MIN, at_rest)
    if vo2_rest is not None:
        vco2_rest = _mean_where(avg, C.VCO2_ML_MIN, at_rest)
        rer_rest = None if vco2_rest is None else vco2_rest / vo2_rest
        rest_pct = 100.0 * vo2_rest / peak.vo2_ml_min
        states.append(("rest", vo2_rest, _mean_where(avg, C.HR_BPM, at_rest), rest_pct, rer_rest))
    for name, p in (("vt1", vt1), ("vt2", vt2), ("peak", peak)):
        if p is not None:
            states.append((name, p.vo2_ml_min, p.hr_bpm, p.pct_vo2_peak, p.rer))
    if column_spo2 is None:
        times = {name: p.t_s for name, p in (("vt1", vt1), ("vt2", vt2), ("peak", peak)) if p is not None}
        column_spo2 = spo2_by_state(avg, phases_avg, times, warns=warns)
    try:
        points = [
            StatePoint(
                name, vo2, hr_bpm=hr, pct_vo2_peak=pct, q_l_min=measured_q.get(name),
                spo2_pct=state_spo2.get(name, column_spo2.get(name)),
                rer=rer if rer is not None and 0.5 <= rer <= 2.0 else None,
            )
            for name, vo2, hr, pct, rer in states
        ]
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            comparison = oxygen_comparison(points, hb_g_dl=hb, **opts)
        warns.extend(f"Oxygen: {w.message}" for w in caught if issubclass(w.category, DataQualityWarning))
        return comparison.to_json_dict()  # already plain JSON types (NaN/inf as None)
    except (TidemarkError, TypeError) as exc:
        warns.append(f"Oxygen comparison not made: {exc}")
        return None


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
        ``.to_json_dict()`` gives the stable JSON documented in ``docs/results.md``.

    Raises
    ------
    AnalysisError
        Required columns missing, too few breaths, or no exercise phase.

    Notes
    -----
    Steps: (1) automatic outlier breaths (local mean ± k SD) minus the reviewer's restored rows,
    plus the reviewer's excluded rows, are left out; (2) phases are labelled; (3) breaths are
    averaged as set; (4) VT1/VT2 are detected on the averaged data and manual overrides
    applied; (5) peak values, maximality, indices, reference values, classes, zones and (when
    Hb is known) the per-state oxygen comparison are computed. Data-quality warnings raised on
    the way are collected in ``warnings``, never printed.
    """
    settings = settings or AnalysisSettings()
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

    warns: list[str] = []
    # warnings.catch_warnings swaps process-wide state, so analyses in several threads (the
    # dashboard server) take turns here to keep each one's warnings its own.
    with _WARNINGS_LOCK, warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        meta = _effective_meta(session, settings)
        excluded = _excluded_table(breaths, settings)
        clean = exclude_breaths(breaths, excluded["source_row"].tolist())
        phases = detect_phases(clean)
        labels = phases.to_numpy()
        avg = average_breaths(clean, settings.averaging, phase_labels=labels).reset_index(drop=True)
        phases_avg = avg[C.PHASE].fillna("exercise").astype(str).to_numpy() if C.PHASE in avg else np.full(len(avg), "exercise")
        ex = avg.loc[phases_avg == "exercise"]
        if len(ex) == 0:
            raise AnalysisError(
                f"{name}: no exercise phase was found — label the phases in the file or include a work-rate or speed column."
            )
        report = _apply_overrides(detect_thresholds(avg, phases=phases_avg), avg, settings)
        mode = _mode(meta, avg)
        body_mass = meta.get("body_mass_kg")
        peak = peak_values(ex, body_mass_kg=body_mass, window_s=settings.peak_window_s)
        vo2_peak = peak.vo2_ml_min

        def at(pick: ThresholdPick | None) -> PointValues | None:
            if pick is None:
                return None
            return point_values(avg, avg.index[int(pick.index)], vo2_peak_ml_min=vo2_peak, body_mass_kg=body_mass)

        vt1, vt2 = at(report.vt1), at(report.vt2)
        maximality = assess_maximality(
            ex,
            age_y=meta.get("age_y"),
            plateau_threshold_ml_min=settings.plateau_threshold_ml_min,
            peak_window_s=settings.peak_window_s,
        )
        indices = _indices(
            avg=avg, ex=ex, phases_avg=phases_avg, meta=meta, mode=mode, peak=peak, vt1=vt1, vt2=vt2,
            hr_peak=maximality.hr_peak_bpm, warns=warns,
        )
        # Arena et al. 2007 classed patients by the slope over all exercise data (from memory).
        predicted, classes = _reference(
            meta, mode, peak, indices["ve_vco2_slope_whole_exercise"], maximality.hr_peak_bpm, warns
        )
        if vt1 is not None and vt2 is not None and vt2.vo2_ml_min < vt1.vo2_ml_min:
            zones = ZoneSet(
                [],
                f"Zones not given: VT2 ({vt2.vo2_ml_min:.0f} mL/min) is below VT1 ({vt1.vo2_ml_min:.0f} mL/min); "
                "check both thresholds on the charts.",
            )
        else:
            try:
                zones = training_zones(vt1=vt1, vt2=vt2, peak=_ceiling(ex, peak, maximality.hr_peak_bpm))
            except TidemarkError as exc:
                zones = ZoneSet([], f"Zones not given: {exc}")
        oxygen = (
            _oxygen(meta, settings, avg=avg, phases_avg=phases_avg, peak=peak, vt1=vt1, vt2=vt2, warns=warns)
            if with_oxygen
            else None
        )
    for w in caught:
        if issubclass(w.category, DataQualityWarning):
            text = str(w.message)
            if text not in warns:
                warns.append(text)

    if body_mass is None:
        warns.append("Body mass unknown: per-kg values, METs and predicted values are not given.")
    n_ex = len(excluded)
    if n_ex > EXCLUDED_WARN_FRACTION * len(breaths):
        warns.append(
            f"{n_ex} of {len(breaths)} breaths ({100 * n_ex / len(breaths):.0f} %) were excluded — check the recording."
        )
    warns.extend(r if r[:1].isupper() else r[:1].upper() + r[1:] for r in report.reasons if "not found" in r)
    if not zones.zones:
        warns.append(zones.note)

    methods = dict(_BASE_METHODS)
    methods["outliers"] = (
        f"breaths more than {settings.outlier_k_sd:g} SD from the mean of the {settings.outlier_window_breaths} "
        "breaths around them are excluded (Lamarra et al. 1987)"
    )
    span = indices.get("ve_vco2_slope_span")
    if span == VE_VCO2_TO_VT2:
        methods["ve_vco2_slope"] = "least-squares slope of VE on VCO2 from exercise start to VT2 (VT2 found; Arena et al. 2007)"
    elif span == VE_VCO2_WHOLE_EXERCISE:
        why = "no VT2 found" if report.vt2 is None else "too few points below VT2"
        methods["ve_vco2_slope"] = f"least-squares slope of VE on VCO2 over the whole exercise phase ({why}; Arena et al. 2007)"
    else:
        methods["ve_vco2_slope"] = "least-squares slope of VE on VCO2 (Arena et al. 2007); could not be computed here, see the warnings"
    methods["averaging"] = settings.averaging.label
    window = f"centred {settings.peak_window_s:g}-s mean of the" if settings.peak_window_s else "value of the"
    methods["vo2_peak"] = f"highest {window} averaged exercise VO2 (common practice: 30-s peak values)"
    methods["rer_peak"] = f"highest {window} averaged exercise VCO2 / VO2 (same window as VO2peak)"
    for kind in ("vt1", "vt2"):
        pick = getattr(report, kind)
        if pick is None:
            methods[kind] = "not found (see the threshold notes for why)"
        elif pick.source == "manual":
            methods[kind] = pick.note  # "set by the reviewer at ... s (...)", with the reviewer's reason
        else:
            methods[kind] = f"{pick.method} of the automatic methods — {pick.note}" if pick.note else pick.method
    if oxygen is not None:
        from analysis.oxygen.comparison import MODEL_LABELS

        curve = MODEL_LABELS.get(str(oxygen.get("model")), "published curve model")
        methods["oxygen"] = (
            "Fick a-vO2 difference (from VO2 and cardiac output) compared with what the haemoglobin "
            f"dissociation curve allows ({curve})"
        )
        sources = {st.get("name"): st.get("sao2_source") for st in oxygen.get("states", [])}
        if "spo2" in sources.values():
            methods["oxygen_spo2"] = (
                "arterial saturation from SpO2: the settings' value where set, else the mean of the session's "
                "SpO2 column over the rest phase or within ±15 s of VT1, VT2 and peak; "
                "states without either use PaO2 on the curve"
            )

    return TestResults(
        source_name=session.source_name,
        meta=meta,
        mode=mode,
        settings=settings,
        averaged=avg,
        phases=phases,
        phase_times=_phase_times(clean, labels),
        thresholds=report,
        excluded_breaths=excluded,
        breaths_total=len(breaths),
        breaths_used=len(clean),
        peak=peak,
        vt1=vt1,
        vt2=vt2,
        maximality=maximality,
        rer_peak=maximality.rer_peak,
        hr_peak_bpm=maximality.hr_peak_bpm,
        indices=indices,
        predicted=predicted,
        classes=classes,
        zones=zones,
        oxygen=oxygen,
        methods=methods,
        warnings=warns,
    )
