"""The oxygen cascade at peak exercise: where the convective and diffusive lines meet.

Model (Wagner 1996; its use on individual patients, Houstis et al. 2018; both from memory):

* **Inspired to arterial.** PAO2 by the alveolar gas equation (barometric pressure, FIO2,
  arterial PCO2, R); PaO2 = PAO2 - A-a gradient; SaO2 on the ARTERIAL curve at peak (exercise
  temperature and acidosis), with carbon monoxide's left shift and the person's P50.
  CaO2 = k Hb (1 - FCOHb - FMetHb) SaO2 + 0.0031 PaO2.
* **Convective (Fick) line.** VO2 = 10 Q [CaO2 - C(PvO2)]: the O2 that blood flow brings and the
  venous blood does not take away, for each venous PO2 (Q in L/min, contents in mL/dL).
* **Diffusive line.** Along the muscle capillary O2 leaves blood in proportion to the local
  capillary PO2 (mitochondrial PO2 about 0): 10 Q dC = -DmO2 P dx over the capillary length
  x = 0..1 (Bohr integration). Integrated from arterial content to venous content:
  DmO2 = 10 Q [I(CaO2) - I(CvO2)], I(C) = integral of dC / P(C), on the capillary curve.
* **Meeting point.** Given Q, DmO2 and CaO2, the venous content that satisfies both is the
  one state the body can be in; VO2 there is the predicted VO2peak.

The cascade is first solved BACKWARD from the measured VO2peak (venous PO2 and DmO2), then
FORWARD with changed inputs (what-if scenarios, sensitivities). Forward with unchanged inputs
returns the measured VO2peak (round trip; a test).

Assumptions (stated beside every result): the whole body is one muscle compartment with the
mixed venous blood as its effluent; capillary blood takes the peak mixed venous conditions
(temperature, pH, PCO2) from its entry; mitochondrial PO2 is 0; Q, DmO2, the A-a gradient,
PaCO2 and R do not change in a scenario unless the scenario changes them (no acclimatisation,
no change in cardiac output with altered Hb); shunt and ventilation-perfusion mismatch are
inside the A-a gradient.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cache, lru_cache

import numpy as np

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.alveolar import FIO2_AIR, PH2O_37C_MMHG, SEA_LEVEL_PB_MMHG, alveolar_po2_mmhg
from analysis.oxygen.content import DEFAULT_HUEFNER_ML_G, O2_SOLUBILITY_ML_DL_MMHG, free_haemoglobin_fraction
from analysis.oxygen.curves import STANDARD, _Curve, _curve, p50
from analysis.oxygen.dyshaemoglobin import _functional_saturation_at, co_share, curve_table
from analysis.oxygen.states import StateConditions
from analysis.records import described

#: Words shown beside every cascade figure.
CASCADE_CAUTION = (
    "Model estimate from an integrative O2-transport model (Wagner 1996), not a measurement: "
    "predicted values are consistent with the inputs and the model's assumptions, not a diagnosis. "
    "Tidemark is not a medical device; interpretation belongs to qualified staff under local "
    "protocols and licensed practice."
)

#: The model's assumptions in words (shown beside the sensitivities and what-if scenarios).
ASSUMPTIONS: tuple[str, ...] = (
    "the whole body is treated as one muscle compartment whose effluent is mixed venous blood",
    "capillary blood takes the peak mixed venous temperature and pH from its entry",
    "mitochondrial PO2 is about 0 mmHg",
    "cardiac output, muscle O2 diffusing capacity, the alveolar-arterial gradient, PaCO2 and R stay "
    "as measured unless a scenario changes them (no acclimatisation, no other compensation)",
    "shunt and ventilation-perfusion mismatch are contained in the alveolar-arterial gradient",
)

#: Which blood the cascade's venous figures describe.
CASCADE_VENOUS_BLOOD = "mixed venous (the whole body as one muscle compartment)"


@dataclass(frozen=True)
class CascadeInputs:
    """Everything the forward model needs (units in the names).

    ``sao2_offset`` carries a measured saturation through scenarios: SaO2 = curve value at
    PaO2 + offset (0 when SaO2 comes from the curve itself).
    """

    q_l_min: float = described(unit="L/min", description="peak cardiac output")
    hb_g_dl: float = described(unit="g/dL", description="haemoglobin")
    pb_mmhg: float = described(unit="mmHg", description="barometric pressure")
    fio2: float = described(description="inspired O2 fraction")
    paco2_mmhg: float = described(unit="mmHg", description="arterial PCO2 at peak (alveolar gas equation)")
    rer: float = described(description="respiratory exchange ratio at peak")
    aa_gradient_mmhg: float = described(unit="mmHg", description="alveolar-arterial PO2 gradient at peak")
    arterial: StateConditions = described(description="arterial blood conditions at peak")
    capillary: StateConditions = described(description="muscle capillary (= peak mixed venous) blood conditions")
    model: str = described(description="dissociation-curve model")
    huefner_ml_g: float = described(unit="mL/g", description="O2 bound per g Hb", default=DEFAULT_HUEFNER_ML_G)
    cohb_fraction: float = described(description="carboxyhaemoglobin, fraction of total Hb", default=0.0)
    methb_fraction: float = described(description="methaemoglobin, fraction of total Hb", default=0.0)
    p50_standard_mmhg: float | None = described(
        unit="mmHg", description="the person's standard P50 (null: the curve model's own)", default=None
    )
    sao2_offset: float = described(description="measured SaO2 minus the curve's value at baseline", default=0.0)
    ph2o_mmhg: float = described(unit="mmHg", description="water vapour pressure", default=PH2O_37C_MMHG)


@dataclass(frozen=True)
class CascadePoint:
    """One solution of the cascade (the meeting point of the two lines)."""

    vo2_ml_min: float = described(unit="mL/min", description="VO2 where the convective and diffusive lines meet")
    pao2_alveolar_mmhg: float = described(unit="mmHg", description="alveolar PO2 (alveolar gas equation)")
    pao2_mmhg: float = described(unit="mmHg", description="arterial PO2")
    sao2: float = described(description="functional arterial O2 saturation")
    cao2_ml_dl: float = described(unit="mL/dL", description="arterial O2 content")
    cvo2_ml_dl: float = described(unit="mL/dL", description="mixed venous O2 content")
    pvo2_mmhg: float = described(unit="mmHg", description="mixed venous PO2")
    svo2: float = described(description="mixed venous functional O2 saturation")
    mean_capillary_po2_mmhg: float = described(unit="mmHg", description="mean muscle capillary PO2 (VO2 / DmO2)")
    o2_delivery_ml_min: float = described(unit="mL/min", description="O2 delivery, 10 Q CaO2")
    extraction_fraction: float = described(description="VO2 / O2 delivery")


@dataclass(frozen=True)
class OxygenCascade:
    """The cascade at peak: inputs, the DmO2 that reproduces the measured VO2peak, and notes."""

    vo2_peak_ml_min: float
    inputs: CascadeInputs
    dmo2_ml_min_mmhg: float
    point: CascadePoint
    q_estimated: bool
    q_method: str
    venous_blood: str = CASCADE_VENOUS_BLOOD
    assumptions: tuple[str, ...] = ASSUMPTIONS
    notes: tuple[str, ...] = ()
    caution: str = CASCADE_CAUTION


# --- the curve table of one blood --------------------------------------------------------


@dataclass(frozen=True)
class _Table:
    po2: np.ndarray  # increasing
    content: np.ndarray  # increasing
    integral: np.ndarray  # I(C) = cumulative integral of dC / P


@cache
def _model_p50(model: str) -> float:
    """The model's P50 at standard conditions (mmHg), computed once per model."""
    return p50(model=model)


def _affinity_scale(inputs: CascadeInputs) -> float:
    if inputs.p50_standard_mmhg is None:
        return 1.0
    return _model_p50(inputs.model) / inputs.p50_standard_mmhg


def _curve_of(conds: StateConditions, model: str) -> _Curve:
    return _curve(**{**STANDARD, **conds.curve_kwargs(model)}, model=model, p50_mmhg=None, hill_n=None)


@lru_cache(maxsize=128)
def _table(conds: StateConditions, model: str, share: float, scale: float, capacity_ml_dl: float) -> _Table:
    """Content and Bohr integral on the capillary curve; ``capacity_ml_dl`` = k Hb (1 - FCOHb - FMetHb)."""
    po2, sat = curve_table(_curve_of(conds, model), share=share, scale=scale, p_low_mmhg=0.5, p_high_mmhg=800.0, n=4000)
    content = capacity_ml_dl * sat + O2_SOLUBILITY_ML_DL_MMHG * po2
    mid = np.sqrt(po2[1:] * po2[:-1])
    integral = np.concatenate([[0.0], np.cumsum(np.diff(content) / mid)])
    return _Table(po2=po2, content=content, integral=integral)


def _blood(inputs: CascadeInputs) -> tuple[float, float, float]:
    """(capacity k Hb free in mL/dL, CO share, affinity scale)."""
    free = free_haemoglobin_fraction(cohb_fraction=inputs.cohb_fraction, methb_fraction=inputs.methb_fraction)
    share = co_share(cohb_fraction=inputs.cohb_fraction, methb_fraction=inputs.methb_fraction)
    return inputs.huefner_ml_g * inputs.hb_g_dl * free, share, _affinity_scale(inputs)


def _arterial(inputs: CascadeInputs) -> tuple[float, float, float, float]:
    """(PAO2, PaO2, SaO2, CaO2) of the inputs."""
    capacity, share, scale = _blood(inputs)
    pao2_alv = alveolar_po2_mmhg(
        pb_mmhg=inputs.pb_mmhg, fio2=inputs.fio2, paco2_mmhg=inputs.paco2_mmhg, rer=inputs.rer, ph2o_mmhg=inputs.ph2o_mmhg
    )
    pao2 = max(1.0, pao2_alv - inputs.aa_gradient_mmhg)
    s_curve = _functional_saturation_at(pao2, _curve_of(inputs.arterial, inputs.model), share, scale)
    sao2 = min(1.0, max(0.0, s_curve + inputs.sao2_offset))
    return pao2_alv, pao2, sao2, capacity * sao2 + O2_SOLUBILITY_ML_DL_MMHG * pao2


def _capillary_table(inputs: CascadeInputs) -> _Table:
    capacity, share, scale = _blood(inputs)
    return _table(inputs.capillary, inputs.model, round(share, 12), round(scale, 12), round(capacity, 12))


def _point(inputs: CascadeInputs, cvo2: float, arterial: tuple[float, float, float, float]) -> CascadePoint:
    table = _capillary_table(inputs)
    pao2_alv, pao2, sao2, cao2 = arterial
    capacity, _, _ = _blood(inputs)
    q_dl = 10.0 * inputs.q_l_min
    cv = min(max(cvo2, float(table.content[0])), cao2)
    pv = float(np.interp(cv, table.content, table.po2))
    sv = (cv - O2_SOLUBILITY_ML_DL_MMHG * pv) / capacity
    i_a = float(np.interp(cao2, table.content, table.integral))
    i_v = float(np.interp(cv, table.content, table.integral))
    mean_pc = (cao2 - cv) / (i_a - i_v) if i_a > i_v else pv
    vo2 = q_dl * (cao2 - cv)
    delivery = q_dl * cao2
    return CascadePoint(
        vo2_ml_min=vo2, pao2_alveolar_mmhg=pao2_alv, pao2_mmhg=pao2, sao2=sao2, cao2_ml_dl=cao2, cvo2_ml_dl=cv,
        pvo2_mmhg=pv, svo2=min(1.0, max(0.0, sv)), mean_capillary_po2_mmhg=mean_pc, o2_delivery_ml_min=delivery,
        extraction_fraction=vo2 / delivery if delivery > 0 else float("nan"),
    )


def solve_forward(inputs: CascadeInputs, *, dmo2_ml_min_mmhg: float) -> CascadePoint:
    """Predicted VO2 where the convective and diffusive lines meet, for these inputs.

    Parameters
    ----------
    inputs : CascadeInputs
        Q, Hb, gas and blood conditions.
    dmo2_ml_min_mmhg : float
        Muscle O2 diffusing capacity, mL O2/min/mmHg.

    Returns
    -------
    CascadePoint

    Notes
    -----
    I(CvO2) = I(CaO2) - DmO2 / (10 Q) on the capillary curve (Bohr integration with
    mitochondrial PO2 0), then VO2 = 10 Q (CaO2 - CvO2).

    References
    ----------
    Wagner PD (1996). Determinants of maximal oxygen transport and utilization. Annu Rev
    Physiol 58:21-50 (from memory).
    """
    dmo2 = _checks.scalar("dmo2_ml_min_mmhg", dmo2_ml_min_mmhg)
    arterial = _arterial(inputs)
    table = _capillary_table(inputs)
    cao2 = arterial[3]
    target = float(np.interp(cao2, table.content, table.integral)) - dmo2 / (10.0 * inputs.q_l_min)
    cvo2 = float(np.interp(target, table.integral, table.content))  # clamps to the table's lowest content
    return _point(inputs, cvo2, arterial)


def diffusing_capacity_ml_min_mmhg(inputs: CascadeInputs, *, vo2_ml_min: float) -> tuple[float, CascadePoint]:
    """Muscle O2 diffusing capacity that makes the cascade deliver ``vo2_ml_min`` (backward solve).

    Returns
    -------
    (dmo2_ml_min_mmhg, point)

    Raises
    ------
    InvalidParameter
        When Q and CaO2 cannot carry that much O2 (the Fick difference exceeds the arterial content).

    References
    ----------
    Wagner PD (1996). Annu Rev Physiol 58:21-50 (from memory).
    """
    vo2 = _checks.scalar("vo2_ml_min", vo2_ml_min)
    arterial = _arterial(inputs)
    table = _capillary_table(inputs)
    cao2 = arterial[3]
    cvo2 = cao2 - vo2 / (10.0 * inputs.q_l_min)
    if cvo2 <= table.content[0]:
        raise InvalidParameter(
            "q_l_min",
            f"a cardiac output that can carry VO2 {vo2:.0f} mL/min with arterial content {cao2:.1f} mL/dL "
            f"(at least {vo2 / (10.0 * cao2):.1f} L/min)",
            inputs.q_l_min,
        )
    i_a = float(np.interp(cao2, table.content, table.integral))
    i_v = float(np.interp(cvo2, table.content, table.integral))
    return 10.0 * inputs.q_l_min * (i_a - i_v), _point(inputs, cvo2, arterial)


def oxygen_cascade(
    *,
    vo2_peak_ml_min: float,
    hb_g_dl: float,
    arterial: StateConditions,
    capillary: StateConditions,
    q_l_min: float | None = None,
    pb_mmhg: float = SEA_LEVEL_PB_MMHG,
    fio2: float = FIO2_AIR,
    rer: float = 1.1,
    aa_gradient_mmhg: float = 20.0,
    pao2_mmhg: float | None = None,
    sao2: float | None = None,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
    cohb_fraction: float = 0.0,
    methb_fraction: float = 0.0,
    p50_standard_mmhg: float | None = None,
    min_pvo2_mmhg: float = 15.0,
) -> OxygenCascade:
    """Solve the O2 cascade at peak backward from the measured VO2peak.

    Parameters
    ----------
    vo2_peak_ml_min : float
        Measured VO2peak, mL/min.
    hb_g_dl : float
        Haemoglobin, g/dL.
    arterial, capillary : StateConditions
        Arterial and (mixed venous = capillary) blood conditions at peak; any two of pH, PCO2 and
        base excess (the third follows from the Van Slyke equation). The arterial PCO2 also
        enters the alveolar gas equation.
    q_l_min : float, optional
        Measured peak cardiac output, L/min. When left out it is ESTIMATED (Stringer 1997 at
        100 % of VO2peak, a-vO2 16.22 mL/dL), and raised where that estimate would take the
        venous PO2 below ``min_pvo2_mmhg``; either way the cascade is flagged as resting on an
        estimate.
    pb_mmhg, fio2, rer : float
        Barometric pressure (mmHg), inspired O2 fraction, and R at peak.
    aa_gradient_mmhg : float, default 20
        Alveolar-arterial PO2 gradient at peak (Dempsey & Wagner 1999, from memory). Replaced
        by PAO2 - ``pao2_mmhg`` when a PaO2 is given.
    pao2_mmhg : float, optional
        Measured (or otherwise known) PaO2 at peak, mmHg.
    sao2 : float, optional
        Functional arterial saturation measured at peak (e.g. SpO2 corrected for COHb); the
        difference to the curve's value is carried through the scenarios.
    model : {"siggaard_andersen", "severinghaus"}
        Curve model.
    huefner_ml_g : float, default 1.34
        Hüfner factor.
    cohb_fraction, methb_fraction : float, default 0.0
        Dyshaemoglobins as fractions of total Hb.
    p50_standard_mmhg : float, optional
        The person's P50 at standard conditions (default: the model's own, 26.8 mmHg).
    min_pvo2_mmhg : float, default 15
        Lowest mixed venous PO2 an ESTIMATED cardiac output may imply (about 15-20 mmHg at
        VO2max, from memory).

    Returns
    -------
    OxygenCascade

    Raises
    ------
    InvalidParameter
        Out-of-range input, or a measured Q too small to carry the VO2peak.

    References
    ----------
    Wagner PD (1996). Determinants of maximal oxygen transport and utilization. Annu Rev
    Physiol 58:21-50 (from memory).
    Houstis NE, Eisman AS, Pappagianopoulos PP, et al. (2018). Exercise intolerance in heart
    failure with preserved ejection fraction: diagnosing and ranking its causes using
    personalized O2 pathway analysis. Circulation 137:148-161 (from memory).
    Stringer WW, Hansen JE, Wasserman K (1997). J Appl Physiol 82:908-912.
    """
    vo2 = _checks.scalar("vo2_ml_min", vo2_peak_ml_min)
    if vo2 <= 0:
        raise InvalidParameter("vo2_peak_ml_min", "above 0 mL/min", vo2_peak_ml_min)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    arterial = arterial.resolved(hb_g_dl=hb)
    capillary = capillary.resolved(hb_g_dl=hb)
    assert arterial.pco2_mmhg is not None
    gradient = _checks.scalar("aa_gradient_mmhg", aa_gradient_mmhg)
    notes: list[str] = []
    pb = _checks.scalar("pb_mmhg", pb_mmhg)
    f_i = _checks.scalar("fio2", fio2)
    r = _checks.scalar("rer", rer)
    if p50_standard_mmhg is not None:
        _checks.scalar("p50_mmhg", p50_standard_mmhg)
    if pao2_mmhg is not None:
        pao2 = _checks.scalar("po2_mmhg", pao2_mmhg)
        alv = alveolar_po2_mmhg(pb_mmhg=pb, fio2=f_i, paco2_mmhg=arterial.pco2_mmhg, rer=r)
        gradient = max(0.0, alv - pao2)
    inputs = CascadeInputs(
        q_l_min=1.0, hb_g_dl=hb, pb_mmhg=pb, fio2=f_i, paco2_mmhg=arterial.pco2_mmhg, rer=r,
        aa_gradient_mmhg=gradient, arterial=arterial, capillary=capillary, model=model,
        huefner_ml_g=_checks.scalar("huefner_ml_g", huefner_ml_g),
        cohb_fraction=_checks.scalar("cohb_fraction", cohb_fraction),
        methb_fraction=_checks.scalar("methb_fraction", methb_fraction),
        p50_standard_mmhg=p50_standard_mmhg,
    )
    if sao2 is not None:
        s_measured = float(sao2)
        if not 0.0 < s_measured <= 1.0:
            raise InvalidParameter("sao2", "a saturation fraction above 0 and at most 1", sao2)
        inputs = replace(inputs, sao2_offset=s_measured - _arterial(inputs)[2])
    cao2 = _arterial(inputs)[3]
    if q_l_min is not None:
        q, q_est, q_method = _checks.scalar("q_l_min", q_l_min), False, "measured"
    else:
        from analysis.oxygen.fick import stringer_cardiac_output_l_min

        q, q_est, q_method = stringer_cardiac_output_l_min(vo2_ml_min=vo2, pct_vo2_peak=100.0), True, "stringer1997"
        notes.append(
            "Peak cardiac output is an ESTIMATE (Stringer 1997, a-vO2 16.22 mL/dL at VO2peak), not a measurement; "
            "DmO2 and every prediction rest on it."
        )
        table = _capillary_table(inputs)
        c_floor = float(np.interp(min_pvo2_mmhg, table.po2, table.content))
        if cao2 - vo2 / (10.0 * q) < c_floor:
            q = vo2 / (10.0 * (cao2 - c_floor))
            q_method = "stringer1997_raised_to_venous_floor"
            notes.append(
                f"With this blood (CaO2 {cao2:.1f} mL/dL) the Stringer 1997 estimate would leave a mixed venous PO2 "
                f"below {min_pvo2_mmhg:g} mmHg, lower than found even at maximal exercise (from memory); the "
                f"cascade uses the least cardiac output that keeps it at {min_pvo2_mmhg:g} mmHg ({q:.1f} L/min). "
                "A measured cardiac output would replace this."
            )
    inputs = replace(inputs, q_l_min=q)
    dmo2, point = diffusing_capacity_ml_min_mmhg(inputs, vo2_ml_min=vo2)
    if pao2_mmhg is None and inputs.sao2_offset:
        notes.append(
            f"Arterial saturation at peak is the measured one ({100 * point.sao2:.1f} %); scenarios move it with "
            "the curve from there."
        )
    return OxygenCascade(
        vo2_peak_ml_min=vo2, inputs=inputs, dmo2_ml_min_mmhg=dmo2, point=point, q_estimated=q_est,
        q_method=q_method, notes=tuple(notes),
    )


#: What the chart's lines are, in words.
LINE_LABELS: dict[str, str] = {
    "convective": "Convective (Fick): 10 Q (CaO2 - CvO2)",
    "diffusive": "Diffusive: DmO2 x mean capillary PO2 (Bohr integration)",
    "venous_blood": CASCADE_VENOUS_BLOOD,
}


@dataclass(frozen=True)
class CascadeLines:
    """The two lines of the cascade chart against venous PO2 (mmHg), VO2 in mL/min."""

    pvo2_mmhg: tuple[float, ...] = described(unit="mmHg", description="venous (mixed venous) PO2 of each point")
    convective_vo2_ml_min: tuple[float, ...] = described(unit="mL/min", description="convective (Fick) line")
    diffusive_vo2_ml_min: tuple[float, ...] = described(unit="mL/min", description="diffusive line (Bohr integration)")
    meeting_pvo2_mmhg: float = described(unit="mmHg", description="venous PO2 where the lines meet")
    meeting_vo2_ml_min: float = described(unit="mL/min", description="VO2 where the lines meet")
    labels: dict[str, str] = described(description="what each line is, in words", default_factory=lambda: dict(LINE_LABELS))


def cascade_lines(inputs: CascadeInputs, *, dmo2_ml_min_mmhg: float, n: int = 60) -> CascadeLines:
    """Convective and diffusive lines for the chart, and their meeting point.

    For each venous PO2 Pv up to the capillary's entry PO2: convective VO2 = 10 Q (CaO2 - C(Pv));
    diffusive VO2 = DmO2 (CaO2 - C(Pv)) / (I(CaO2) - I(C(Pv))), the O2 that diffusion moves when
    the capillary ends at Pv (DmO2 times the mean capillary PO2 of that profile). They cross
    where the forward solution lies.

    References
    ----------
    Wagner PD (1996). Annu Rev Physiol 58:21-50 (from memory).
    """
    dmo2 = _checks.scalar("dmo2_ml_min_mmhg", dmo2_ml_min_mmhg)
    arterial = _arterial(inputs)
    cao2 = arterial[3]
    table = _capillary_table(inputs)
    p_entry = float(np.interp(cao2, table.content, table.po2))
    pv = np.linspace(1.0, max(2.0, p_entry * 0.98), n)
    cv = np.interp(pv, table.po2, table.content)
    i_a = float(np.interp(cao2, table.content, table.integral))
    i_v = np.interp(cv, table.content, table.integral)
    q_dl = 10.0 * inputs.q_l_min
    convective = q_dl * (cao2 - cv)
    diffusive = dmo2 * (cao2 - cv) / np.maximum(i_a - i_v, 1e-12)
    meet = solve_forward(inputs, dmo2_ml_min_mmhg=dmo2)
    return CascadeLines(
        pvo2_mmhg=tuple(float(x) for x in pv),
        convective_vo2_ml_min=tuple(float(x) for x in convective),
        diffusive_vo2_ml_min=tuple(float(x) for x in diffusive),
        meeting_pvo2_mmhg=meet.pvo2_mmhg,
        meeting_vo2_ml_min=meet.vo2_ml_min,
    )
