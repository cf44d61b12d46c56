"""The oxygen pathway of one test: the cascade at peak, what-if scenarios, sensitivities and
the CO2 side, built from the per-state comparison (one public step returning its record and
its notes as values).

Everything here is a model estimate (Wagner 1996); results are worded "consistent with" and
are not a diagnosis. Tidemark is not a medical device.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.cascade import (
    ASSUMPTIONS,
    CASCADE_CAUTION,
    CASCADE_VENOUS_BLOOD,
    CascadeInputs,
    CascadeLines,
    CascadePoint,
    OxygenCascade,
    cascade_lines,
    oxygen_cascade,
    solve_forward,
)
from analysis.oxygen.co2_carriage import Co2Carriage, Hyperventilation, co2_carriage, resting_hyperventilation
from analysis.oxygen.comparison import OxygenComparison, StateOxygen
from analysis.oxygen.scenarios import Sensitivity, WhatIf, limiting_statement, sensitivity, what_if
from analysis.records import derived, described

#: Reader-facing method sentence of the cascade (shown under ``methods``).
CASCADE_METHOD = (
    "O2 cascade at peak (Wagner 1996): convective Fick line and diffusive line (muscle O2 diffusing capacity by "
    "Bohr integration along the capillary, mitochondrial PO2 about 0) solved backward from the measured VO2peak, "
    "then forward for each what-if scenario; model estimates"
)

#: Peak R used when the comparison has none (common practice: at or above 1.10 at a maximal test).
DEFAULT_PEAK_RER = 1.10


@dataclass(frozen=True)
class OxygenPathway:
    """The O2 cascade at peak with its what-if scenarios, sensitivities and CO2 side.

    Attributes
    ----------
    vo2_peak_ml_min : float
        Measured VO2peak, mL/min (the baseline the scenarios are compared with).
    q_l_min, q_estimated, q_method
        Peak cardiac output (L/min), whether it is an estimate, and how it was obtained.
    dmo2_ml_min_mmhg : float
        Muscle O2 diffusing capacity that reproduces the measured VO2peak, mL/min/mmHg.
    peak : CascadePoint
        PAO2, PaO2, SaO2, CaO2, CvO2, venous PO2 and saturation, mean capillary PO2 at peak.
    inputs : CascadeInputs
        What the forward model takes (for scenarios the reviewer sets).
    what_if : tuple of WhatIf
        Scenarios with stable codes (:data:`analysis.oxygen.scenarios.SCENARIO_CODES`).
    sensitivity : tuple of Sensitivity
        VO2peak after a 10 % rise in each determinant, ranked.
    limiting : str
        One sentence on the most limiting step, worded "consistent with".
    co2 : tuple of Co2Carriage
        A-v CO2 difference and its carriage per state.
    hyperventilation : Hyperventilation
        Resting hyperventilation (PaCO2 40 -> 30 mmHg) for this person's Hb and barometric pressure.
    lines : CascadeLines
        The convective and diffusive lines of the person's cascade (for charts).
    """

    vo2_peak_ml_min: float = described(unit="mL/min", description="measured VO2peak (the baseline of the scenarios)")
    q_l_min: float = described(unit="L/min", description="peak cardiac output used")
    q_estimated: bool = described(description="true when peak cardiac output is an estimate")
    q_method: str = described(
        description="measured, stringer1997 or stringer1997_raised_to_venous_floor",
        method="Stringer et al. 1997 when not measured",
    )
    dmo2_ml_min_mmhg: float = described(
        unit="mL/min/mmHg", description="muscle O2 diffusing capacity that reproduces the measured VO2peak",
        method="Bohr integration along the muscle capillary, mitochondrial PO2 0 (Wagner 1996)",
    )
    peak: CascadePoint = described(description="the cascade at peak: alveolar to mixed venous values")
    inputs: CascadeInputs = described(description="what the forward model takes (for the reviewer's own scenarios)")
    what_if: tuple[WhatIf, ...] = described(description="what-if scenarios solved forward on the person's cascade")
    sensitivity: tuple[Sensitivity, ...] = described(description="VO2peak after a 10 % rise in each determinant, ranked")
    limiting: str = described(description="which step limits most, worded 'consistent with'")
    co2: tuple[Co2Carriage, ...] = described(description="a-v CO2 difference and how it is carried, per state")
    hyperventilation: Hyperventilation = described(description="resting hyperventilation, PaCO2 40 -> 30 mmHg")
    lines: CascadeLines = described(description="convective and diffusive lines of the person's cascade")
    venous_blood: str = described(description="which blood the venous figures describe", default=CASCADE_VENOUS_BLOOD)
    assumptions: tuple[str, ...] = described(description="the model's assumptions", default=ASSUMPTIONS)
    notes: tuple[str, ...] = described(description="notes on this cascade", default=())
    caution: str = described(description="the caution shown beside every figure", default=CASCADE_CAUTION)

    @derived(description="always true: every value here is a model estimate")
    def estimate(self) -> bool:
        return True

    @property
    def cascade(self) -> OxygenCascade:
        """The cascade record the scenarios are solved on."""
        return OxygenCascade(
            vo2_peak_ml_min=self.vo2_peak_ml_min, inputs=self.inputs, dmo2_ml_min_mmhg=self.dmo2_ml_min_mmhg,
            point=self.peak, q_estimated=self.q_estimated, q_method=self.q_method, notes=self.notes,
        )

    def scenario(self, code: str) -> WhatIf:
        for row in self.what_if:
            if row.scenario == code:
                return row
        raise KeyError(code)


def _total_saturation(sat: float, free: float) -> float:
    """Share of all haemoglobin that is not deoxygenated, from the functional saturation."""
    return 1.0 - free * (1.0 - sat)


def _co2_rows(comparison: OxygenComparison) -> tuple[Co2Carriage, ...]:
    free = 1.0 - comparison.cohb_fraction - comparison.methb_fraction
    rows = []
    for s in comparison.states:
        if s.svo2 is None or s.svo2 >= s.sao2:
            continue
        rows.append(
            co2_carriage(
                state=s.name, hb_g_dl=comparison.hb_g_dl, arterial=s.arterial_conditions, venous=s.conditions,
                sao2=_total_saturation(s.sao2, free), svo2=_total_saturation(s.svo2, free),
            )
        )
    return tuple(rows)


def oxygen_pathway(
    comparison: OxygenComparison, *, p50_standard_mmhg: float | None = None
) -> tuple[OxygenPathway | None, tuple[str, ...]]:
    """The O2 pathway at peak from the per-state comparison: a pipeline step.

    Parameters
    ----------
    comparison : OxygenComparison
        :func:`analysis.oxygen.oxygen_comparison` with a ``"peak"`` state.
    p50_standard_mmhg : float, optional
        The person's measured standard P50 (default: the curve model's own).

    Returns
    -------
    (OxygenPathway or None, notes)
        ``None`` with a note saying why when the cascade cannot be solved (no peak state, or a
        measured cardiac output that cannot carry the VO2peak).

    Notes
    -----
    Peak cardiac output: measured when the comparison had it, else ESTIMATED (Stringer 1997,
    raised to keep mixed venous PO2 at 15 mmHg where needed). Peak PaO2 and SaO2 are the
    comparison's (alveolar gas equation or measured, SpO2 where given); the A-a gradient that
    reproduces them is kept in every scenario.

    References
    ----------
    Wagner PD (1996). Annu Rev Physiol 58:21-50 (from memory).
    Houstis NE et al. (2018). Circulation 137:148-161 (from memory).
    """
    try:
        peak: StateOxygen = comparison.state("peak")
    except KeyError:
        return None, ("Oxygen cascade not made: the test has no peak state.",)
    try:
        cascade = oxygen_cascade(
            vo2_peak_ml_min=peak.vo2_ml_min,
            hb_g_dl=comparison.hb_g_dl,
            arterial=peak.arterial_conditions,
            capillary=peak.conditions,
            q_l_min=None if peak.q_estimated else peak.q_l_min,
            pb_mmhg=comparison.pb_mmhg,
            fio2=comparison.fio2,
            rer=peak.rer if peak.rer is not None else DEFAULT_PEAK_RER,
            pao2_mmhg=peak.pao2_mmhg,
            sao2=peak.sao2,
            model=comparison.model,
            huefner_ml_g=comparison.huefner_ml_g,
            cohb_fraction=comparison.cohb_fraction,
            methb_fraction=comparison.methb_fraction,
            p50_standard_mmhg=p50_standard_mmhg,
        )
    except InvalidParameter as exc:
        return None, (f"Oxygen cascade not made: {exc}",)
    notes = list(cascade.notes)
    if peak.rer is None:
        notes.append(f"Peak R not known: {DEFAULT_PEAK_RER:g} assumed for the alveolar gas equation (common practice).")
    rows = sensitivity(cascade)
    record = OxygenPathway(
        vo2_peak_ml_min=cascade.vo2_peak_ml_min,
        q_l_min=cascade.inputs.q_l_min,
        q_estimated=cascade.q_estimated,
        q_method=cascade.q_method,
        dmo2_ml_min_mmhg=cascade.dmo2_ml_min_mmhg,
        peak=cascade.point,
        inputs=cascade.inputs,
        what_if=what_if(cascade),
        sensitivity=rows,
        limiting=limiting_statement(rows),
        co2=_co2_rows(comparison),
        hyperventilation=resting_hyperventilation(
            hb_g_dl=comparison.hb_g_dl, pb_mmhg=comparison.pb_mmhg, fio2=comparison.fio2,
            model=comparison.model, huefner_ml_g=comparison.huefner_ml_g,
        ),
        lines=cascade_lines(cascade.inputs, dmo2_ml_min_mmhg=cascade.dmo2_ml_min_mmhg),
        notes=tuple(notes),
    )
    return record, tuple(notes)


@dataclass(frozen=True)
class Exploration:
    """A reviewer's scenario: the solution and the two lines of the cascade chart."""

    point: CascadePoint = described(description="the solution of the scenario")
    lines: CascadeLines = described(description="the scenario's convective and diffusive lines")
    change_pct: float = described(unit="%", description="change from the measured VO2peak")


def explore(
    pathway: OxygenPathway,
    *,
    hb_g_dl: float | None = None,
    cohb_fraction: float | None = None,
    p50_standard_mmhg: float | None = None,
    pb_mmhg: float | None = None,
    fio2: float | None = None,
    q_l_min: float | None = None,
    dmo2_ml_min_mmhg: float | None = None,
) -> Exploration:
    """Solve the person's cascade forward with any inputs replaced (the what-if panel).

    Parameters left out keep the person's values. ``pb_mmhg`` may come from
    :func:`analysis.oxygen.alveolar.barometric_pressure_mmhg` for an altitude.

    Returns
    -------
    Exploration
        The meeting point, the convective and diffusive lines, and the change in predicted
        VO2peak from the measured one (%).

    References
    ----------
    Wagner PD (1996). Annu Rev Physiol 58:21-50 (from memory).
    """
    # (input field, name its range is checked under, value given)
    given = (
        ("hb_g_dl", "hb_g_dl", hb_g_dl),
        ("cohb_fraction", "cohb_fraction", cohb_fraction),
        ("p50_standard_mmhg", "p50_mmhg", p50_standard_mmhg),
        ("pb_mmhg", "pb_mmhg", pb_mmhg),
        ("fio2", "fio2", fio2),
        ("q_l_min", "q_l_min", q_l_min),
    )
    changes: dict[str, Any] = {
        field: _checks.scalar(checked_as, value) for field, checked_as, value in given if value is not None
    }
    inputs = replace(pathway.inputs, **changes)
    dmo2 = pathway.dmo2_ml_min_mmhg if dmo2_ml_min_mmhg is None else _checks.scalar("dmo2_ml_min_mmhg", dmo2_ml_min_mmhg)
    point = solve_forward(inputs, dmo2_ml_min_mmhg=dmo2)
    return Exploration(
        point=point,
        lines=cascade_lines(inputs, dmo2_ml_min_mmhg=dmo2),
        change_pct=100.0 * (point.vo2_ml_min / pathway.vo2_peak_ml_min - 1.0),
    )


def comparison_from_json(oxygen: dict[str, Any]) -> OxygenComparison:
    """The per-state comparison again from its JSON (``TestResults.oxygen``), for the cascade step.

    Every state is re-solved from its own inputs (VO2, HR, %VO2peak, R, measured Q or none,
    the saturation's source) with the bloods and gas conditions the JSON records, so the
    result equals the comparison the pipeline made.
    """
    from analysis.oxygen.comparison import oxygen_comparison
    from analysis.oxygen.states import StateConditions, StatePoint

    if not isinstance(oxygen, dict) or not oxygen.get("states"):
        raise InvalidParameter("oxygen", "the 'oxygen' part of an analysis result with its states", oxygen)
    cohb, methb = float(oxygen.get("cohb_fraction") or 0.0), float(oxygen.get("methb_fraction") or 0.0)
    points, venous, arterial = [], {}, {}
    for s in oxygen["states"]:
        spo2 = None
        if s.get("sao2_source") == "spo2":  # back to what the oximeter read (it counts COHb as O2Hb)
            spo2 = 100.0 * (float(s["sao2"]) * (1.0 - cohb - methb) + cohb)
        points.append(
            StatePoint(
                s["name"], s["vo2_ml_min"], hr_bpm=s.get("hr_bpm"), pct_vo2_peak=s.get("pct_vo2_peak"), rer=s.get("rer"),
                q_l_min=None if s.get("q_estimated") else s.get("q_l_min"), spo2_pct=spo2,
            )
        )
        venous[s["name"]] = StateConditions(**s["conditions"])
        arterial[s["name"]] = StateConditions(**s["arterial_conditions"])
    venous.setdefault("rest", StateConditions(**oxygen["resting_conditions"]))
    return oxygen_comparison(
        points, hb_g_dl=oxygen["hb_g_dl"], pao2_mmhg=oxygen.get("pao2_mmhg"), conditions=venous,
        model=oxygen["model"], huefner_ml_g=oxygen.get("huefner_ml_g", 1.34), arterial_conditions=arterial,
        pb_mmhg=oxygen["pb_mmhg"], fio2=oxygen["fio2"], cohb_fraction=cohb, methb_fraction=methb,
    )
