"""The interpretation of one test as one record (:class:`Interpretation`) and the step computing it."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import TidemarkError
from analysis.indices.summary import Indices
from analysis.indices.threshold_values import ThresholdResult
from analysis.interpretation.chronotropic import (
    CHRONOTROPIC_METHOD,
    ChronotropicResponse,
    chronotropic_flag,
    chronotropic_response,
)
from analysis.interpretation.flags import Flag
from analysis.interpretation.gas_exchange import GAS_EXCHANGE_METHOD, GasExchange, gas_exchange, gas_exchange_flags
from analysis.interpretation.lag import LAG_METHOD, LagCorrection
from analysis.interpretation.oscillation import EOV_METHOD, Oscillation, exercise_oscillation, oscillation_flag
from analysis.interpretation.patterns import CONDITIONAL_FLAGS, PatternSummary, pattern_summary
from analysis.interpretation.predicted import REFERENCE_METHODS, PredictedPeak, predicted_peak, vo2peak_flag
from analysis.interpretation.response import (
    RESPONSE_METHOD,
    HeartRateRecovery,
    O2PulseTrajectory,
    dvo2_dwr_flag,
    heart_rate_recovery,
    hr_recovery_flag,
    o2_pulse_flag,
    o2_pulse_trajectory,
)
from analysis.interpretation.saturation import SATURATION_METHOD, Saturation, desaturation_flag, spo2_summary
from analysis.interpretation.ventilation import VENTILATION_METHOD, Ventilation, breathing_reserve_flag, ventilation
from analysis.maximality import MaximalityReport
from analysis.records import described


@dataclass(frozen=True)
class Interpretation:
    """Flags read against published limits, the values they were read from, and the patterns."""

    flags: tuple[Flag, ...] = described(description="every flag raised, in a stable order (docs/interpretation.md)")
    patterns: PatternSummary = described(description="the interpretation patterns the flags are consistent with")
    predicted: PredictedPeak = described(description="predicted peak VO2, HR and O2 pulse by the reference set chosen")
    chronotropic: ChronotropicResponse | None = described(description="chronotropic index (null without rest HR, peak HR or age)")
    saturation: Saturation | None = described(description="SpO2 at rest, lowest and at peak (null without SpO2)")
    oscillation: Oscillation | None = described(description="exercise oscillatory ventilation (null for < 2 min of exercise)")
    gas_exchange: GasExchange = described(description="PETCO2 at rest and VT1, VE/VCO2 at VT1 and peak, VD/VT")
    ventilation: Ventilation = described(description="breathing reserve, breathing pattern at peak, tidal volume against VE")
    o2_pulse: O2PulseTrajectory | None = described(description="O2-pulse trajectory (null without HR or < 3 min of exercise)")
    hr_recovery: HeartRateRecovery | None = described(description="HR recovery at 1 min with the cool-down posture")
    lag: LagCorrection | None = described(description="loads at the thresholds corrected for the VO2 lag on a ramp (null when not a ramp)")

    def sport_flags(self) -> tuple[Flag, ...]:
        """The flags a coach sees."""
        return tuple(f for f in self.flags if f.sport_relevant)


def interpretation_methods() -> dict[str, str]:
    """Reader-facing method sentence of each part (the ``methods`` entries of this step)."""
    return {
        "interpretation_chronotropic": CHRONOTROPIC_METHOD,
        "interpretation_saturation": SATURATION_METHOD,
        "interpretation_oscillation": EOV_METHOD,
        "interpretation_gas_exchange": GAS_EXCHANGE_METHOD,
        "interpretation_ventilation": VENTILATION_METHOD,
        "interpretation_response": RESPONSE_METHOD,
        "interpretation_lag": LAG_METHOD,
    }


def _number(value: Any) -> float | None:
    try:
        f = float(value)
    except (TypeError, ValueError):
        return None
    return f if np.isfinite(f) and f > 0 else None


def interpret_test(
    breaths: pd.DataFrame,
    avg: pd.DataFrame,
    *,
    breath_phases: np.ndarray,
    phases_avg: np.ndarray,
    meta: dict[str, Any],
    mode: str | None,
    beta_blocker: bool | None,
    indices: Indices,
    maximality: MaximalityReport,
    vo2_peak_ml_min: float,
    vt1: ThresholdResult | None,
    vt2: ThresholdResult | None,
    reference_set: str,
    lag: LagCorrection | None,
) -> tuple[Interpretation, tuple[str, ...]]:
    """Read the test against published limits: flags, the values behind them, and patterns.

    Parameters
    ----------
    breaths : pandas.DataFrame
        The cleaned breaths (canonical columns); SpO2 and oscillation are judged breath by breath.
    avg : pandas.DataFrame
        The averaged data with derived series (``o2_pulse_ml_beat``).
    breath_phases, phases_avg : numpy.ndarray, keyword-only
        Phase label of every breath and of every averaged row.
    meta : dict, keyword-only
        Effective metadata (``age_y``, ``sex``, ``body_mass_kg``, ``height_cm``, ``paco2_mmhg``,
        ``cooldown_posture``).
    mode : {'cycle', 'treadmill'} or None, keyword-only
    beta_blocker : bool or None, keyword-only
    indices, maximality : keyword-only
        The index and maximality records of the same analysis.
    vo2_peak_ml_min : float, keyword-only
    vt1, vt2 : ThresholdResult or None, keyword-only
    reference_set : str, keyword-only
        ``AnalysisSettings.reference_set``.
    lag : LagCorrection or None, keyword-only
        The ramp's lag correction (:func:`analysis.interpretation.lag.threshold_lag`; the
        pipeline computes it before the zones, which are based on it), carried into the record.

    Returns
    -------
    (Interpretation, tuple of str)
        The record and notes in plain words.

    References
    ----------
    ATS/ACCP 2003; Balady et al. 2010; EACPR/AHA 2012/2016; and each part's own function.
    """
    notes: list[str] = []
    t_b = breaths[C.T_S].to_numpy(dtype=float)
    effort_submaximal = maximality.verdict == "vo2peak_submaximal"

    chrono = None
    age = _number(meta.get("age_y"))
    hr_peak = maximality.hr_peak_bpm
    if indices.hr_rest_bpm is not None and hr_peak is not None and age is not None:
        try:
            chrono = chronotropic_response(hr_rest_bpm=indices.hr_rest_bpm, hr_peak_bpm=hr_peak, age_y=age, beta_blocker=beta_blocker)
        except TidemarkError as exc:
            notes.append(f"Chronotropic index not given: {exc}")
    elif hr_peak is not None:
        notes.append("Chronotropic index not given: it needs the resting heart rate (a rest phase) and the age.")

    saturation = None
    if C.SPO2_PCT in breaths:
        saturation = spo2_summary(t_b, breaths[C.SPO2_PCT].to_numpy(dtype=float), breath_phases)
    oscillation = exercise_oscillation(t_b, breaths[C.VE_L_MIN].to_numpy(dtype=float), breath_phases)
    paco2 = _number(meta.get("paco2_mmhg"))
    try:
        gas = gas_exchange(avg, phases_avg=phases_avg, vt1_t_s=vt1.t_s if vt1 else None, paco2_mmhg=paco2)
    except TidemarkError as exc:
        notes.append(f"Dead space not given: {exc}")
        gas = gas_exchange(avg, phases_avg=phases_avg, vt1_t_s=vt1.t_s if vt1 else None, paco2_mmhg=None)
    vent = ventilation(avg, phases_avg=phases_avg, reserve=indices.breathing_reserve)
    pulse = o2_pulse_trajectory(avg, phases_avg=phases_avg, vo2_plateau=bool(maximality.plateau and maximality.plateau.plateau))
    recovery = heart_rate_recovery(indices.hr_recovery_1min_bpm, cooldown_posture=meta.get("cooldown_posture"))
    o2_pulse_peak = indices.o2_pulse_at_peak_ml_beat
    try:
        predicted = predicted_peak(
            reference_set, age_y=age, sex=meta.get("sex"), body_mass_kg=_number(meta.get("body_mass_kg")),
            height_cm=_number(meta.get("height_cm")), mode=mode, vo2_peak_ml_min=vo2_peak_ml_min, hr_peak_bpm=hr_peak,
            o2_pulse_peak_ml_beat=o2_pulse_peak,
        )
    except TidemarkError as exc:  # a recorded value the equations cannot use (e.g. an unknown sex spelling)
        predicted = predicted_peak(
            reference_set, age_y=None, sex=None, body_mass_kg=None, height_cm=None, mode=None,
            vo2_peak_ml_min=vo2_peak_ml_min, hr_peak_bpm=hr_peak, o2_pulse_peak_ml_beat=o2_pulse_peak,
        )
        predicted = dataclasses.replace(predicted, note=f"Predicted values not given: {exc}")
    if predicted.note:
        notes.append(f"{predicted.reference_name}: {predicted.note}")

    raised = [
        oscillation_flag(oscillation),
        desaturation_flag(saturation),
        breathing_reserve_flag(vent),
        *gas_exchange_flags(gas, ve_vco2_slope=indices.ve_vco2_slope),
        chronotropic_flag(chrono, effort_adequate=not effort_submaximal),
        o2_pulse_flag(pulse),
        dvo2_dwr_flag(indices.vo2_work_rate_slope_ml_min_w if mode == "cycle" else None),
        hr_recovery_flag(recovery),
        vo2peak_flag(predicted),
    ]
    flags = tuple(f for f in raised if f is not None)
    return Interpretation(
        flags=flags,
        patterns=pattern_summary(
            (f.code for f in flags if not (f.severity == "caution" and f.code in CONDITIONAL_FLAGS)),
            effort_submaximal=effort_submaximal,
        ),
        predicted=predicted,
        chronotropic=chrono,
        saturation=saturation,
        oscillation=oscillation,
        gas_exchange=gas,
        ventilation=vent,
        o2_pulse=pulse,
        hr_recovery=recovery,
        lag=lag,
    ), tuple(notes)


def interpretation_reference_method(reference_set: str) -> str:
    """The method sentence of the reference set used."""
    return REFERENCE_METHODS.get(reference_set, reference_set)
