"""Ventilatory thresholds: VT1 (gas-exchange threshold) and VT2 (respiratory compensation point).

Public API
----------
Results
    :class:`ThresholdPick`, :class:`VSlopeFit`, :class:`ThresholdReport`
Fits
    :func:`vslope_fit` (Beaver 1986)
Detection
    :func:`detect_thresholds`, method names in :data:`VT1_METHODS` / :data:`VT2_METHODS`
Review
    :func:`override_threshold`, :func:`clear_override`, :func:`pick_from_chart_point`
"""

from analysis.thresholds.detect import (
    CONSENSUS,
    VT1_METHODS,
    VT2_METHODS,
    agreement_tolerance_ml_min,
    detect_thresholds,
)
from analysis.thresholds.override import clear_override, override_threshold, pick_from_chart_point
from analysis.thresholds.results import ThresholdPick, ThresholdReport, VSlopeFit
from analysis.thresholds.vslope import vslope_fit

__all__ = [
    "CONSENSUS",
    "ThresholdPick",
    "ThresholdReport",
    "VSlopeFit",
    "VT1_METHODS",
    "VT2_METHODS",
    "agreement_tolerance_ml_min",
    "clear_override",
    "detect_thresholds",
    "override_threshold",
    "pick_from_chart_point",
    "vslope_fit",
]
