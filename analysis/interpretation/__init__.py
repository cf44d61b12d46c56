"""Clinical interpretation: flags read against published limits, and the patterns they fit.

Pure functions returning frozen records. Every flag is a :class:`Flag`
``{code, severity, text, value, limit, source}``; interpretation is worded "consistent with",
never as a diagnosis (see docs/interpretation.md).
"""

from analysis.interpretation.chronotropic import ChronotropicResponse, chronotropic_index, chronotropic_response
from analysis.interpretation.flags import FLAG_GROUPS, SPORT_RELEVANT, Flag, Severity
from analysis.interpretation.gas_exchange import GasExchange, gas_exchange, vd_vt_from_ve_vco2, ve_vco2_from_vd_vt
from analysis.interpretation.lag import LagCorrection, lag_corrected_load, lag_correction
from analysis.interpretation.oscillation import Oscillation, exercise_oscillation
from analysis.interpretation.patterns import PATTERN_CAUTION, PATTERN_STATEMENT, PatternMatch, PatternSummary, pattern_summary
from analysis.interpretation.predicted import REFERENCE_SETS, PredictedPeak, predicted_peak
from analysis.interpretation.response import HeartRateRecovery, O2PulseTrajectory, heart_rate_recovery, o2_pulse_trajectory
from analysis.interpretation.saturation import Saturation, spo2_summary
from analysis.interpretation.summary import Interpretation, interpret_test, interpretation_methods
from analysis.interpretation.ventilation import Ventilation, ventilation

__all__ = [
    "FLAG_GROUPS", "PATTERN_CAUTION", "PATTERN_STATEMENT", "REFERENCE_SETS", "SPORT_RELEVANT",
    "ChronotropicResponse", "Flag", "GasExchange", "HeartRateRecovery", "Interpretation", "LagCorrection",
    "O2PulseTrajectory", "Oscillation", "PatternMatch", "PatternSummary", "PredictedPeak", "Saturation", "Severity",
    "Ventilation", "chronotropic_index", "chronotropic_response", "exercise_oscillation", "gas_exchange",
    "heart_rate_recovery", "interpret_test", "interpretation_methods", "lag_corrected_load", "lag_correction",
    "o2_pulse_trajectory", "pattern_summary", "predicted_peak", "spo2_summary", "vd_vt_from_ve_vco2",
    "ve_vco2_from_vd_vt", "ventilation",
]
