"""What-if scenarios and sensitivities, each solved forward on the person's own cascade.

Every scenario changes one input of :class:`~analysis.oxygen.cascade.CascadeInputs` (or the
muscle O2 diffusing capacity) and solves the cascade forward (Wagner 1996): the predicted
VO2peak is where the convective and diffusive lines meet again. ``baseline`` is the unchanged
cascade and equals the measured VO2peak (round trip).

The scenario codes are stable (they are keys in the JSON result):

===================  ======================================================================
code                 change
===================  ======================================================================
baseline             none (= measured VO2peak)
hb_minus_10pct       Hb 10 % lower (anaemia)
hb_minus_20pct       Hb 20 % lower
hb_plus_10pct        Hb 10 % higher (e.g. after altitude training or a transfusion)
cohb_10pct           carboxyhaemoglobin 10 % (heavy smoking, CO exposure): capacity and left shift
p50_18mmhg           a high-affinity haemoglobin, standard P50 18 mmHg
altitude_2000m       barometric pressure of the standard atmosphere at 2,000 m, no acclimatisation
fio2_30pct           30 % O2 inspired
q_plus_10pct         cardiac output 10 % higher
dmo2_plus_10pct      muscle O2 diffusing capacity 10 % higher
===================  ======================================================================

All results are model estimates, consistent with the inputs and the assumptions in
:data:`analysis.oxygen.cascade.ASSUMPTIONS`; none is a diagnosis or a prediction for care.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

from analysis.oxygen.alveolar import barometric_pressure_mmhg
from analysis.oxygen.cascade import CascadeInputs, OxygenCascade, _model_p50, solve_forward
from analysis.records import described

#: Stable scenario codes, in the order they are reported.
SCENARIO_CODES: tuple[str, ...] = (
    "baseline",
    "hb_minus_10pct",
    "hb_minus_20pct",
    "hb_plus_10pct",
    "cohb_10pct",
    "p50_18mmhg",
    "altitude_2000m",
    "fio2_30pct",
    "q_plus_10pct",
    "dmo2_plus_10pct",
)

#: Determinants whose 10 % change is ranked, with the words the reader sees.
DETERMINANTS: dict[str, str] = {
    "ventilation": "ventilation (alveolar PO2)",
    "hb": "haemoglobin",
    "q": "cardiac output",
    "dmo2": "muscle O2 diffusing capacity",
    "p50": "haemoglobin P50 (curve position)",
}


@dataclass(frozen=True)
class WhatIf:
    """One scenario: predicted VO2peak (mL/min) and its change from the measured VO2peak (%)."""

    scenario: str = described(description="stable scenario code (baseline, hb_minus_10pct, ...)")
    vo2_peak_ml_min: float = described(unit="mL/min", description="predicted VO2peak (model estimate)")
    change_pct: float = described(unit="%", description="change from the measured VO2peak")
    note: str = described(description="what the scenario changes and keeps, in words")


@dataclass(frozen=True)
class Sensitivity:
    """VO2peak after a 10 % rise in one determinant, and its rank (1 = largest change)."""

    determinant: str = described(description="ventilation, hb, q, dmo2 or p50")
    label: str = described(description="the determinant in words")
    vo2_peak_ml_min: float = described(unit="mL/min", description="predicted VO2peak after a 10 % rise (model estimate)")
    change_pct: float = described(unit="%", description="change from the measured VO2peak")
    rank: int = described(description="1 = the largest change")


def _forward(cascade: OxygenCascade, inputs: CascadeInputs, dmo2: float | None = None) -> float:
    return solve_forward(inputs, dmo2_ml_min_mmhg=cascade.dmo2_ml_min_mmhg if dmo2 is None else dmo2).vo2_ml_min


def _scenario(cascade: OxygenCascade, code: str) -> tuple[float, str]:
    """Predicted VO2peak (mL/min) and the note of one scenario."""
    i = cascade.inputs
    same = "cardiac output, DmO2 and ventilation unchanged"
    if code == "baseline":
        return _forward(cascade, i), "the person's own cascade, solved forward (equals the measured VO2peak)"
    if code in ("hb_minus_10pct", "hb_minus_20pct", "hb_plus_10pct"):
        factor = {"hb_minus_10pct": 0.9, "hb_minus_20pct": 0.8, "hb_plus_10pct": 1.1}[code]
        hb = i.hb_g_dl * factor
        return _forward(cascade, replace(i, hb_g_dl=hb)), f"Hb {i.hb_g_dl:.1f} -> {hb:.1f} g/dL; {same}"
    if code == "cohb_10pct":
        return (
            _forward(cascade, replace(i, cohb_fraction=0.10)),
            "COHb 10 %: a tenth of Hb carries no O2 and CO shifts the rest of the curve to the left "
            f"(Roughton & Darling 1944); {same}; SpO2 would still read near normal",
        )
    if code == "p50_18mmhg":
        return (
            _forward(cascade, replace(i, p50_standard_mmhg=18.0)),
            f"standard P50 18 mmHg (a high-affinity haemoglobin) instead of about 26.8; exercise shifts kept; {same}",
        )
    if code == "altitude_2000m":
        pb = barometric_pressure_mmhg(altitude_m=2000.0)
        return (
            _forward(cascade, replace(i, pb_mmhg=pb)),
            f"PB {i.pb_mmhg:.0f} -> {pb:.0f} mmHg (standard atmosphere, 2,000 m); no acclimatisation: PaCO2, R, "
            "A-a gradient, cardiac output and DmO2 as measured",
        )
    if code == "fio2_30pct":
        return _forward(cascade, replace(i, fio2=0.30)), f"FIO2 {i.fio2:.3f} -> 0.30; {same}"
    if code == "q_plus_10pct":
        q = i.q_l_min * 1.1
        return _forward(cascade, replace(i, q_l_min=q)), f"cardiac output {i.q_l_min:.1f} -> {q:.1f} L/min; Hb and DmO2 unchanged"
    if code == "dmo2_plus_10pct":
        dmo2 = cascade.dmo2_ml_min_mmhg * 1.1
        return (
            _forward(cascade, i, dmo2),
            f"DmO2 {cascade.dmo2_ml_min_mmhg:.0f} -> {dmo2:.0f} mL/min/mmHg (e.g. capillary growth with training); "
            "cardiac output and Hb unchanged",
        )
    raise KeyError(code)


def what_if(cascade: OxygenCascade, *, codes: tuple[str, ...] = SCENARIO_CODES) -> tuple[WhatIf, ...]:
    """Every what-if scenario solved forward on ``cascade``.

    Parameters
    ----------
    cascade : OxygenCascade
        The person's cascade (:func:`analysis.oxygen.cascade.oxygen_cascade`).
    codes : tuple of str
        Scenario codes (default: all of :data:`SCENARIO_CODES`).

    Returns
    -------
    tuple of WhatIf
        One per code, ``change_pct`` relative to the measured VO2peak.

    References
    ----------
    Wagner PD (1996). Determinants of maximal oxygen transport and utilization. Annu Rev
    Physiol 58:21-50 (from memory).
    U.S. Standard Atmosphere, 1976 (barometric pressure at 2,000 m).
    Roughton FJW, Darling RC (1944). Am J Physiol 141:17-31 (from memory).
    """
    out = []
    for code in codes:
        vo2, note = _scenario(cascade, code)
        out.append(WhatIf(code, vo2, 100.0 * (vo2 / cascade.vo2_peak_ml_min - 1.0), note))
    return tuple(out)


def _rise(cascade: OxygenCascade, determinant: str) -> float:
    i = cascade.inputs
    changes: dict[str, Callable[[], float]] = {
        # 10 % more alveolar ventilation: PaCO2 / 1.1 (same CO2 output), PAO2 by the alveolar gas equation
        "ventilation": lambda: _forward(cascade, replace(i, paco2_mmhg=i.paco2_mmhg / 1.1)),
        "hb": lambda: _forward(cascade, replace(i, hb_g_dl=i.hb_g_dl * 1.1)),
        "q": lambda: _forward(cascade, replace(i, q_l_min=i.q_l_min * 1.1)),
        "dmo2": lambda: _forward(cascade, i, cascade.dmo2_ml_min_mmhg * 1.1),
        "p50": lambda: _forward(
            cascade, replace(i, p50_standard_mmhg=1.1 * (i.p50_standard_mmhg or _model_p50(i.model)))
        ),
    }
    return changes[determinant]()


def sensitivity(cascade: OxygenCascade) -> tuple[Sensitivity, ...]:
    """VO2peak after a 10 % rise in each determinant, ranked by the size of the change.

    Ventilation: alveolar ventilation 10 % higher at the same CO2 output, so PaCO2 falls by
    1/1.1 and PAO2 rises by the alveolar gas equation (arterial pH kept). P50: the standard P50
    10 % higher (curve to the right).

    References
    ----------
    Wagner PD (1996). Annu Rev Physiol 58:21-50 (from memory).
    Houstis NE et al. (2018). Circulation 137:148-161 (ranking the steps for one person;
    from memory).
    """
    rows = [(name, _rise(cascade, name)) for name in DETERMINANTS]
    order = sorted(rows, key=lambda r: -abs(r[1] - cascade.vo2_peak_ml_min))
    ranks = {name: k + 1 for k, (name, _) in enumerate(order)}
    return tuple(
        Sensitivity(name, DETERMINANTS[name], vo2, 100.0 * (vo2 / cascade.vo2_peak_ml_min - 1.0), ranks[name])
        for name, vo2 in sorted(rows, key=lambda r: ranks[r[0]])
    )


def limiting_statement(rows: tuple[Sensitivity, ...]) -> str:
    """One sentence on which step the model finds most limiting, worded "consistent with".

    Examples
    --------
    >>> rows = (Sensitivity("q", "cardiac output", 3800.0, 5.0, 1), Sensitivity("hb", "haemoglobin", 3700.0, 4.0, 2))
    >>> limiting_statement(rows).startswith("In this model a 10 % rise in cardiac output")
    True
    """
    if not rows:
        return ""
    top = rows[0]
    rest = ", ".join(f"{r.label} {r.change_pct:+.1f} %" for r in rows[1:])
    return (
        f"In this model a 10 % rise in {top.label} changes predicted VO2peak most ({top.change_pct:+.1f} %; "
        f"then {rest}): consistent with {top.label} being the step that limits this person's VO2peak most, "
        "under the model's assumptions. A model estimate, not a diagnosis."
    )
