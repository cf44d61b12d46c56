"""The one typed result of an analysis: :class:`TestResults`, composed of part records."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import pandas as pd

from analysis.breaths.cleaning import ExcludedBreath, excluded_frame
from analysis.indices.point_values import PointValues
from analysis.indices.summary import Indices
from analysis.indices.threshold_values import ThresholdResult
from analysis.interpretation.flags import Flag
from analysis.interpretation.summary import Interpretation
from analysis.maximality import MaximalityReport
from analysis.oxygen.comparison import OxygenComparison
from analysis.oxygen.pathway import OxygenPathway
from analysis.phases import PhaseSpan
from analysis.records import derived, described
from analysis.reference.summary import Classes, ReferenceValues
from analysis.results.session_parts import AveragingUsed, BreathCounts, Subject
from analysis.settings import AnalysisSettings
from analysis.thresholds.results import ThresholdReport
from analysis.zones import ZoneSet

#: Version of the JSON layout of :class:`TestResults` (``schema_version``; see the changelog in
#: docs/results.md).
RESULTS_SCHEMA_VERSION = 2

#: Cautions that travel with every result (shown by the CLI, the dashboard and reports).
CAUTIONS: tuple[str, ...] = (
    "Tidemark is not a medical device. Values are estimates computed by the stated published "
    "methods from the data supplied.",
    "Predicted values, classes, estimated cardiac output and venous values are population or "
    "model estimates, not measurements.",
    "Exercise testing, its supervision and the interpretation of these results belong to "
    "qualified staff working under local protocols.",
)


@dataclass(frozen=True)
class TestResults:
    """Everything :func:`analysis.pipeline.analyze_session` computed for one session.

    Every field is a typed part record; :func:`analysis.records.to_json` writes the JSON
    documented in ``docs/results.md`` (generated from these fields) and
    :func:`analysis.records.from_json` reads it back. The averaged frame is kept for the
    charts but is not part of the JSON (an empty frame after reading JSON back).
    """

    __test__: ClassVar[bool] = False  # not a pytest test class despite its name
    SCHEMA_VERSION: ClassVar[int] = RESULTS_SCHEMA_VERSION

    subject: Subject = described(description="who was tested and how (after the settings' metadata overrides)")
    vt1: ThresholdResult | None = described(description="the first ventilatory threshold (null when not found)")
    vt2: ThresholdResult | None = described(description="the second ventilatory threshold, RCP (null when not found)")
    peak: PointValues = described(description="values at the VO2 peak (`index` is the averaged row)")
    maximality: MaximalityReport = described(description="was the test maximal: plateau and secondary criteria")
    indices: Indices = described(description="every scalar index, by name")
    predicted: ReferenceValues = described(description="reference values and % reached")
    classes: Classes = described(description="functional classes")
    zones: ZoneSet = described(description="training zones bounded by VT1 and VT2")
    phases: dict[str, PhaseSpan] = described(description="phase -> first and last breath time of the breaths used")
    thresholds: ThresholdReport = described(
        description="every threshold method's pick, the V-slope fit, agreement notes, reasons, and the "
        "automatic picks kept under a manual override (docs/thresholds.md)"
    )
    averaging: AveragingUsed = described(description="the averaging used")
    breaths: BreathCounts = described(description="breath counts")
    excluded_breaths: tuple[ExcludedBreath, ...] = described(description="every breath left out, by source row")
    oxygen: OxygenComparison | None = described(
        description="per-state oxygen comparison at rest, VT1, VT2 and peak (null without Hb; docs/oxygen.md)"
    )
    warnings: tuple[str, ...] = described(description="data-quality and missing-value notes of every step, in plain words")
    methods: dict[str, str] = described(description="result key -> the method behind it, in plain words")
    settings: AnalysisSettings = described(description="the settings used (re-running with them gives the same results)")
    oxygen_cascade: OxygenPathway | None = described(
        default=None,
        description="O2 cascade at peak with what-if scenarios, sensitivities and the CO2 side (null without the "
        "oxygen comparison; model estimates; docs/oxygen.md)",
    )
    interpretation: Interpretation | None = described(
        default=None,
        description="flags read against published limits, the values behind them and the patterns they are consistent "
        "with (never a diagnosis; docs/interpretation.md)",
    )
    averaged: pd.DataFrame = described(default_factory=pd.DataFrame, json=False)

    @derived(description="every interpretation flag `{code, severity, text, value, limit, source, unit, sport_relevant}` "
             "(`interpretation.flags`; empty without an interpretation)")
    def flags(self) -> tuple[Flag, ...]:
        return self.interpretation.flags if self.interpretation is not None else ()

    @derived(unit="mL/min", description="VO2peak: `peak.vo2_ml_min`")
    def vo2_peak_ml_min(self) -> float:
        return self.peak.vo2_ml_min

    @derived(unit="mL/kg/min", description="`peak.vo2_ml_kg_min`")
    def vo2_peak_ml_kg_min(self) -> float | None:
        return self.peak.vo2_ml_kg_min

    @derived(description="`maximality.rer_peak`: highest ratio of the peak-window means of VCO2 and VO2")
    def rer_peak(self) -> float | None:
        return self.maximality.rer_peak

    @derived(unit="beats/min", description="`maximality.hr_peak_bpm`: highest averaged exercise heart rate")
    def hr_peak_bpm(self) -> float | None:
        return self.maximality.hr_peak_bpm

    @derived(description="`indices.ve_vco2_slope`: the headline VE/VCO2 slope (span in `indices.ve_vco2_slope_span`)")
    def ve_vco2_slope(self) -> float | None:
        return self.indices.ve_vco2_slope

    @derived(description="`indices.ve_vco2_slope_to_vt2`")
    def ve_vco2_slope_to_vt2(self) -> float | None:
        return self.indices.ve_vco2_slope_to_vt2

    @derived(description="`indices.ve_vco2_slope_whole_exercise`")
    def ve_vco2_slope_whole_exercise(self) -> float | None:
        return self.indices.ve_vco2_slope_whole_exercise

    @derived(unit="mL/min per log10(L/min)", description="`indices.oues`")
    def oues(self) -> float | None:
        return self.indices.oues

    @derived(unit="mL/beat", description="`indices.o2_pulse_peak_ml_beat`")
    def o2_pulse_peak_ml_beat(self) -> float | None:
        return self.indices.o2_pulse_peak_ml_beat

    @derived(description="the standard cautions")
    def cautions(self) -> tuple[str, ...]:
        return CAUTIONS

    def excluded_table(self) -> pd.DataFrame:
        """The excluded breaths as a table (``source_row, t_s, column, value, reason, by``)."""
        return excluded_frame(self.excluded_breaths)
