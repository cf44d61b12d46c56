"""Exercise-test indices computed from breath or averaged data.

Public API
----------
Ventilatory efficiency
    :func:`ve_vco2_slope`, :func:`ve_vco2_nadir`, :func:`oues`
Cardiovascular
    :func:`o2_pulse_ml_beat`, :func:`o2_pulse_peak_ml_beat`, :func:`hr_reserve_bpm`,
    :func:`pct_hr_reserve`, :func:`hr_recovery_1min_bpm`
Work and energy
    :func:`vo2_work_rate_slope`, :func:`mets`, :func:`energy_expenditure_kcal_min`,
    :func:`carbohydrate_oxidation_g_min`, :func:`fat_oxidation_g_min`, :func:`fat_max`
Ventilatory limit
    :func:`breathing_reserve`
Reading a point
    :func:`point_values`, :func:`threshold_values` (:class:`ThresholdResult`), :func:`window_means`
The step of the pipeline
    :func:`compute_indices` (:class:`Indices`, :class:`FatMaxPoint`)
"""

from analysis.indices._fit import LineFit
from analysis.indices.breathing_reserve import MVV_PER_FEV1, BreathingReserve, breathing_reserve
from analysis.indices.heart_rate import hr_recovery_1min_bpm, hr_reserve_bpm, pct_hr_reserve
from analysis.indices.mets import ML_KG_MIN_PER_MET, mets
from analysis.indices.o2_pulse import o2_pulse_ml_beat, o2_pulse_peak_ml_beat
from analysis.indices.oues import oues
from analysis.indices.point_values import PointValues, point_values
from analysis.indices.substrate import (
    FatMax,
    carbohydrate_oxidation_g_min,
    energy_expenditure_kcal_min,
    fat_max,
    fat_oxidation_g_min,
)
from analysis.indices.summary import FatMaxPoint, Indices, compute_indices
from analysis.indices.threshold_values import ThresholdResult, threshold_values
from analysis.indices.ventilatory_efficiency import ve_vco2_nadir, ve_vco2_slope
from analysis.indices.windows import window_means
from analysis.indices.work_efficiency import DEFAULT_LAG_S, vo2_work_rate_slope

__all__ = [
    "BreathingReserve",
    "DEFAULT_LAG_S",
    "FatMax",
    "FatMaxPoint",
    "Indices",
    "ThresholdResult",
    "compute_indices",
    "threshold_values",
    "window_means",
    "LineFit",
    "ML_KG_MIN_PER_MET",
    "MVV_PER_FEV1",
    "PointValues",
    "breathing_reserve",
    "carbohydrate_oxidation_g_min",
    "energy_expenditure_kcal_min",
    "fat_max",
    "fat_oxidation_g_min",
    "hr_recovery_1min_bpm",
    "hr_reserve_bpm",
    "mets",
    "o2_pulse_ml_beat",
    "o2_pulse_peak_ml_beat",
    "oues",
    "pct_hr_reserve",
    "point_values",
    "ve_vco2_nadir",
    "ve_vco2_slope",
    "vo2_work_rate_slope",
]
