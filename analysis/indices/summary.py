"""The indices of one test as one record (:class:`Indices`) and the step that computes them."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Literal, TypeVar

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import AnalysisError
from analysis.indices._arrays import present_values
from analysis.indices.breathing_reserve import BREATHING_RESERVE_METHOD, BreathingReserve, breathing_reserve
from analysis.indices.heart_rate import (
    HR_PEAK_METHOD,
    HR_RECOVERY_METHOD,
    HR_RESERVE_METHOD,
    hr_recovery_1min_bpm,
    hr_reserve_bpm,
    pct_hr_reserve,
)
from analysis.indices.mets import METS_METHOD, mets
from analysis.indices.o2_pulse import MIN_HR_BPM, O2_PULSE_METHOD, o2_pulse_peak_ml_beat
from analysis.indices.oues import OUES_METHOD, oues
from analysis.indices.point_values import PointValues
from analysis.indices.substrate import (
    ENERGY_EXPENDITURE_METHOD,
    FAT_MAX_METHOD,
    SUBSTRATE_METHOD,
    energy_expenditure_kcal_min,
    fat_max,
)
from analysis.indices.ventilatory_efficiency import (
    VE_VCO2_NADIR_METHOD,
    VE_VCO2_SLOPE_TO_VT2_METHOD,
    VE_VCO2_SLOPE_WHOLE_EXERCISE_METHOD,
    ve_vco2_nadir,
    ve_vco2_slope,
)
from analysis.indices.windows import window_means
from analysis.indices.work_efficiency import VO2_WORK_RATE_SLOPE_METHOD, vo2_work_rate_slope
from analysis.numeric import column_mean, finite_or_none
from analysis.records import described

#: Width of the windows over which the VE/VCO2 nadir and the peak O2 pulse are read, s (common
#: practice: 30-s values, as for VO2peak).
INDEX_WINDOW_S = 30.0

#: Values of :attr:`Indices.ve_vco2_slope_span`: which span the headline VE/VCO2 slope covers.
VE_VCO2_TO_VT2 = "to_vt2"
VE_VCO2_WHOLE_EXERCISE = "whole_exercise"

SlopeSpan = Literal["to_vt2", "whole_exercise"]

R = TypeVar("R")


@dataclass(frozen=True)
class FatMaxPoint:
    """Where fat oxidation peaked in the averaged exercise data (a ramp estimate only)."""

    fat_g_min: float = described(unit="g/min", description="highest fat oxidation, Frayn 1.67·(VO2 - VCO2) among rows with RER < 1.0",
                             method="Frayn 1983, from memory; Achten et al. 2002")
    vo2_ml_min: float = described(unit="mL/min", description="O2 uptake at that point")
    pct_vo2_peak: float | None = described(unit="%", description="that VO2 as % of VO2peak")
    t_s: float = described(unit="s", key="time_s", description="time of that point")
    hr_bpm: float | None = described(unit="beats/min", description="heart rate at that point")
    work_w: float | None = described(unit="W", description="work rate at that point")
    speed_kmh: float | None = described(unit="km/h", description="treadmill speed at that point")


@dataclass(frozen=True)
class Indices:
    """Every scalar index of the test, each a named field (``null`` when not computable)."""

    ve_vco2_slope: float | None = described(
        description="the headline VE/VCO2 slope: to VT2 when a VT2 is found, else over the whole exercise "
        "phase (`ve_vco2_slope_span` names the span)", method="Arena et al. 2007",
    )
    ve_vco2_intercept_l_min: float | None = described(unit="L/min", description="intercept of the headline line")
    ve_vco2_slope_r2: float | None = described(description="r² of the headline line")
    ve_vco2_slope_span: SlopeSpan | None = described(description="`to_vt2` or `whole_exercise`: the span of the headline line")
    ve_vco2_slope_to_vt2: float | None = described(
        description="least-squares slope of VE (L/min) on VCO2 (L/min) from exercise start to VT2 (null without VT2)",
        method="Arena et al. 2007",
    )
    ve_vco2_slope_whole_exercise: float | None = described(
        description="least-squares slope of VE on VCO2 over the whole exercise phase", method="Arena et al. 2007"
    )
    ve_vco2_nadir: float | None = described(
        description="lowest VE/VCO2 during exercise, as the ratio of 30-s means of VE and VCO2 (windows wholly "
        "inside exercise)", method="Sun et al. 2002, from memory",
    )
    oues: float | None = described(
        unit="mL/min per log10(L/min)", description="slope of VO2 on log10 VE over the whole exercise phase",
        method="Baba et al. 1996, from memory",
    )
    oues_per_kg: float | None = described(unit="mL/min per log10(L/min) per kg", description="`oues` per kg body mass")
    o2_pulse_peak_ml_beat: float | None = described(
        unit="mL/beat", description="highest O2 pulse during exercise, as the ratio of 30-s means of VO2 and HR "
        "(windows wholly inside exercise; HR < 30 ignored)", method="Wasserman et al., from memory",
    )
    o2_pulse_at_peak_ml_beat: float | None = described(
        unit="mL/beat", description="VO2peak / peak HR", method="Wasserman et al., from memory"
    )
    vo2_work_rate_slope_ml_min_w: float | None = described(
        unit="mL/min/W",
        description="ΔVO2/ΔWR: least-squares slope of averaged VO2 on work rate over the ramp, first 60 s left out "
        "(cycle tests only; ≈ 10 in healthy adults)", method="ATS/ACCP 2003",
    )
    work_peak_w: float | None = described(unit="W", description="highest averaged work rate (cycle)")
    mets_peak: float | None = described(unit="MET", description="`vo2_peak_ml_kg_min / 3.5`", method="common practice")
    hr_rest_bpm: float | None = described(unit="beats/min", description="mean averaged HR of the rest phase")
    hr_reserve_bpm: float | None = described(unit="beats/min", description="peak HR - resting HR", method="Karvonen et al. 1957, from memory")
    pct_hr_reserve_vt1: float | None = described(unit="%", description="HR at VT1 as % of the reserve", method="Karvonen")
    pct_hr_reserve_vt2: float | None = described(unit="%", description="HR at VT2 as % of the reserve", method="Karvonen")
    hr_recovery_1min_bpm: float | None = described(
        unit="beats/min", description="HR at the end of exercise - HR 60 s later (null without 60 s of recovery)",
        method="Cole et al. 1999, from memory",
    )
    ve_peak_l_min: float | None = described(unit="L/min", description="highest averaged VE during exercise")
    breathing_reserve: BreathingReserve | None = described(
        description="MVV - peak VE (null without MVV or FEV1)", method="ATS/ACCP 2003; MVV ≈ FEV1 × 40, common practice"
    )
    energy_expenditure_peak_kcal_min: float | None = described(
        unit="kcal/min", description="abbreviated Weir equation 3.941·VO2 + 1.106·VCO2 (L/min) at peak", method="Weir 1949"
    )
    fat_max: FatMaxPoint | None = described(description="the point of highest fat oxidation (null when none)")


def _safe(fn: Callable[..., R], *args: Any, **kwargs: Any) -> R | None:
    """``fn(...)``, or ``None`` when the data do not allow the index (AnalysisError)."""
    try:
        return fn(*args, **kwargs)
    except AnalysisError:
        return None


def compute_indices(
    avg: pd.DataFrame,
    *,
    phases_avg: np.ndarray,
    peak: PointValues,
    vt1_hr_bpm: float | None,
    vt2_t_s: float | None,
    vt2_hr_bpm: float | None,
    hr_peak_bpm: float | None,
    mode: str | None,
    body_mass_kg: float | None,
    mvv_l_min: float | None,
    fev1_l: float | None,
) -> tuple[Indices, tuple[str, ...]]:
    """Every index of the test from the averaged data, with notes on what could not be computed.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths (canonical columns), index 0..n-1.
    phases_avg : numpy.ndarray
        Phase label of every averaged row.
    peak : PointValues, keyword-only
        Values at the VO2 peak.
    vt1_hr_bpm : float or None, keyword-only
        Heart rate at VT1.
    vt2_t_s, vt2_hr_bpm : float or None, keyword-only
        Time and heart rate at VT2 (``None`` without VT2).
    hr_peak_bpm : float or None, keyword-only
        Peak heart rate.
    mode : {"cycle", "treadmill"} or None, keyword-only
    body_mass_kg, mvv_l_min, fev1_l : float or None, keyword-only
        From the subject's metadata.

    Returns
    -------
    (Indices, tuple of str)
        The record and notes in plain words.

    References
    ----------
    See each index's own function (Arena et al. 2007, Baba et al. 1996, Wasserman et al., Weir 1949,
    Frayn 1983, Karvonen et al. 1957, Cole et al. 1999, ATS/ACCP 2003).
    """
    notes: list[str] = []
    ex = avg.loc[phases_avg == "exercise"]
    vo2, vco2, ve = (ex[c].to_numpy(dtype=float) for c in (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN))
    t = ex[C.T_S].to_numpy(dtype=float)

    whole = _safe(ve_vco2_slope, vco2, ve)
    to_vt2 = None
    if vt2_t_s is not None:
        below = t <= vt2_t_s
        to_vt2 = _safe(ve_vco2_slope, vco2[below], ve[below])
    # Headline slope: to VT2 when a VT2 was found (the span below respiratory compensation,
    # where VE follows VCO2 alone), else the whole exercise phase (docs/results.md).
    fit, span = (to_vt2, VE_VCO2_TO_VT2) if to_vt2 is not None else (whole, VE_VCO2_WHOLE_EXERCISE)
    ou = _safe(oues, vo2, ve)
    hr = present_values(ex, C.HR_BPM)
    # Nadir VE/VCO2 and peak O2 pulse from 30-s means (windows wholly inside exercise): the
    # extreme of single short bins is biased by their noise (common practice, as for VO2peak).
    ve_w, vco2_w, vo2_w = (window_means(t, x, window_s=INDEX_WINDOW_S, inside=True) for x in (ve, vco2, vo2))
    hr_w = None
    if hr is not None:
        hr_w = window_means(t, np.where(hr >= MIN_HR_BPM, hr, np.nan), window_s=INDEX_WINDOW_S, inside=True)
    work = present_values(ex, C.WORK_W)
    wr = _safe(vo2_work_rate_slope, t, vo2, work) if mode == "cycle" and work is not None else None

    hr_rest = column_mean(avg, C.HR_BPM, phases_avg == "rest")
    reserve = hr_rest is not None and hr_peak_bpm is not None and hr_peak_bpm > hr_rest

    def pct_reserve(hr_at: float | None) -> float | None:
        if not reserve or not hr_at or hr_peak_bpm is None or hr_rest is None:
            return None
        return float(pct_hr_reserve(hr_at, hr_max_bpm=hr_peak_bpm, hr_rest_bpm=hr_rest))

    hr_all = present_values(avg, C.HR_BPM)
    ve_peak = float(np.nanmax(ve))
    fm = fat_max(t, vo2, vco2, vo2_peak_ml_min=peak.vo2_ml_min)
    fat_point = None
    if fm is not None:
        row = ex.iloc[fm.position]
        fat_point = FatMaxPoint(
            fat_g_min=fm.fat_g_min, vo2_ml_min=fm.vo2_ml_min, pct_vo2_peak=fm.pct_vo2_peak, t_s=fm.t_s,
            hr_bpm=finite_or_none(row.get(C.HR_BPM)), work_w=finite_or_none(row.get(C.WORK_W)),
            speed_kmh=finite_or_none(row.get(C.SPEED_KMH)),
        )
    indices = Indices(
        ve_vco2_slope=fit.slope if fit else None,
        ve_vco2_intercept_l_min=fit.intercept if fit else None,
        ve_vco2_slope_r2=fit.r2 if fit else None,
        ve_vco2_slope_span=span if fit else None,  # type: ignore[arg-type]
        ve_vco2_slope_to_vt2=to_vt2.slope if to_vt2 else None,
        ve_vco2_slope_whole_exercise=whole.slope if whole else None,
        ve_vco2_nadir=_safe(ve_vco2_nadir, vco2_w, ve_w),
        oues=ou.slope if ou else None,
        oues_per_kg=ou.slope / body_mass_kg if ou and body_mass_kg else None,
        o2_pulse_peak_ml_beat=_safe(o2_pulse_peak_ml_beat, vo2_w, hr_w) if hr_w is not None else None,
        o2_pulse_at_peak_ml_beat=peak.vo2_ml_min / hr_peak_bpm if hr_peak_bpm else None,
        vo2_work_rate_slope_ml_min_w=wr.slope if wr else None,
        work_peak_w=float(np.nanmax(work)) if mode == "cycle" and work is not None else None,
        mets_peak=float(mets(peak.vo2_ml_kg_min)) if peak.vo2_ml_kg_min else None,
        hr_rest_bpm=hr_rest,
        hr_reserve_bpm=hr_reserve_bpm(hr_max_bpm=hr_peak_bpm, hr_rest_bpm=hr_rest) if reserve else None,  # type: ignore[arg-type]
        pct_hr_reserve_vt1=pct_reserve(vt1_hr_bpm),
        pct_hr_reserve_vt2=pct_reserve(vt2_hr_bpm),
        hr_recovery_1min_bpm=(
            hr_recovery_1min_bpm(avg[C.T_S].to_numpy(dtype=float), hr_all, t_end_exercise_s=float(t.max()))
            if hr_all is not None and (phases_avg == "recovery").any()
            else None
        ),
        ve_peak_l_min=ve_peak,
        breathing_reserve=breathing_reserve(ve_peak, mvv_l_min=mvv_l_min, fev1_l=fev1_l),
        energy_expenditure_peak_kcal_min=(
            float(energy_expenditure_kcal_min(peak.vo2_ml_min, peak.rer * peak.vo2_ml_min)) if peak.rer is not None else None
        ),
        fat_max=fat_point,
    )
    if indices.ve_vco2_slope is None:
        notes.append("The VE/VCO2 slope could not be computed from the exercise data.")
    elif vt2_t_s is not None and to_vt2 is None:
        notes.append(
            "The VE/VCO2 slope to VT2 could not be computed (too few points below VT2): the whole-exercise slope is given."
        )
    return indices, tuple(notes)


def indices_methods(indices: Indices, *, vt2_found: bool) -> dict[str, str]:
    """The reader-facing method sentence of every index (the ``methods`` entries of this step)."""
    if indices.ve_vco2_slope_span == VE_VCO2_TO_VT2:
        headline = "least-squares slope of VE on VCO2 from exercise start to VT2 (VT2 found; Arena et al. 2007)"
    elif indices.ve_vco2_slope_span == VE_VCO2_WHOLE_EXERCISE:
        why = "no VT2 found" if not vt2_found else "too few points below VT2"
        headline = f"least-squares slope of VE on VCO2 over the whole exercise phase ({why}; Arena et al. 2007)"
    else:
        headline = "least-squares slope of VE on VCO2 (Arena et al. 2007); could not be computed here, see the warnings"
    return {
        "hr_peak_bpm": HR_PEAK_METHOD,
        "ve_vco2_slope": headline,
        "ve_vco2_slope_to_vt2": VE_VCO2_SLOPE_TO_VT2_METHOD,
        "ve_vco2_slope_whole_exercise": VE_VCO2_SLOPE_WHOLE_EXERCISE_METHOD,
        "ve_vco2_nadir": VE_VCO2_NADIR_METHOD,
        "oues": OUES_METHOD,
        "o2_pulse": O2_PULSE_METHOD,
        "vo2_work_rate_slope": VO2_WORK_RATE_SLOPE_METHOD,
        "mets": METS_METHOD,
        "hr_reserve": HR_RESERVE_METHOD,
        "hr_recovery_1min": HR_RECOVERY_METHOD,
        "breathing_reserve": BREATHING_RESERVE_METHOD,
        "energy_expenditure": ENERGY_EXPENDITURE_METHOD,
        "substrate_oxidation": SUBSTRATE_METHOD,
        "fat_max": FAT_MAX_METHOD,
    }
