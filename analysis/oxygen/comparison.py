"""Side-by-side Fick extraction and dissociation-curve unloading at rest, VT1, VT2 and peak.

For each state:

1. Cardiac output Q: measured when given, else during exercise the Stringer (1997) ESTIMATE
   Q = VO2 / (5.72 + 0.105 x %VO2peak), and at rest a typical resting a-vO2 difference of
   5 mL/dL (common practice; Stringer's equation was derived during exercise). Stroke
   volume = Q / HR.
2. Fick a-vO2 difference = VO2 / Q (mL/dL).
3. Arterial PO2: measured when given; else alveolar PO2 by the alveolar gas equation (at the
   test's barometric pressure, the inspired O2 fraction, the state's arterial PCO2 and RER)
   minus the alveolar-arterial gradient. Arterial content CaO2 = k Hb (1 - FCOHb - FMetHb) SaO2
   + 0.0031 PaO2, with SaO2 from SpO2 when given (corrected for COHb, which oximeters read as
   oxyhaemoglobin), else from PaO2 on the state's ARTERIAL curve (exercise temperature and pH
   reach arterial blood too; Dempsey & Wagner 1999).
4. Implied venous content CvO2 = CaO2 - a-vO2 difference; the venous PO2 that gives this
   content is solved on the RESTING curve and on the state's EXERCISE curve.
5. Unloading decomposition at the exercise-curve venous PO2 (Pv):
   total = CaO2 - CvO2
         = [CaO2 - C_rest(Pv)]              fall in PO2 along the resting curve
         + [C_rest(Pv) - C_exercise(Pv)]    right shift of the curve,
   and the shift is split into temperature, acid-base (pH with PCO2 and base excess) and
   2,3-BPG parts by averaging each factor's effect over all six orders of applying them
   (Shapley values), so the parts add up exactly to the total.
6. Haldane: extra CO2 the venous blood carries at the state's PCO2 because it is desaturated.

Venous values are MIXED VENOUS blood (what the Fick a-vO2 difference refers to); the lowest
plausible mixed venous PO2 at maximal exercise is taken as 15 mmHg (about 15-20 mmHg at
VO2max, from memory). Femoral venous blood leaving working leg muscle goes lower (about
10 mmHg, from memory); that figure belongs to the muscle cascade, not to this comparison.

Everything here is a model estimate, not a measurement.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from functools import lru_cache
from typing import Any

import pandas as pd
from scipy.optimize import brentq

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.acid_base import van_slyke_gap_ph
from analysis.oxygen.alveolar import (
    DEFAULT_AA_GRADIENT_MMHG,
    FALLBACK_AA_GRADIENT_MMHG,
    FIO2_AIR,
    SEA_LEVEL_PB_MMHG,
    alveolar_po2_mmhg,
    arterial_po2_mmhg,
)
from analysis.oxygen.content import (
    DEFAULT_HUEFNER_ML_G,
    O2_SOLUBILITY_ML_DL_MMHG,
    free_haemoglobin_fraction,
    saturation_from_spo2,
    spo2_note,
)
from analysis.oxygen.curves import STANDARD, _Curve, _curve
from analysis.oxygen.decomposition import shapley_parts
from analysis.oxygen.dyshaemoglobin import _functional_saturation_at, co_share
from analysis.oxygen.fick import avo2_difference_ml_dl, stringer_cardiac_output_l_min, stroke_volume_ml
from analysis.oxygen.haldane import HB_MONOMER_G_MMOL, OXYLABILE_PROTON_RATIO, haldane_extra_co2_ml_dl
from analysis.oxygen.states import (
    ARTERIAL_CONDITIONS,
    DEFAULT_ARTERIAL_CONDITIONS,
    DEFAULT_CONDITIONS,
    StateConditions,
    StatePoint,
)
from analysis.records import derived, described

#: Models the comparison accepts (the Hill model has no conditions to shift).
COMPARISON_MODELS: tuple[str, ...] = ("siggaard_andersen", "severinghaus")

#: Lowest plausible MIXED VENOUS PO2 at maximal exercise, mmHg (about 15-20 mmHg at VO2max; from memory).
MIXED_VENOUS_PO2_FLOOR_MMHG = 15.0
#: Lowest FEMORAL VENOUS PO2 seen in working leg muscle at maximal exercise, mmHg (about 10; from memory).
FEMORAL_VENOUS_PO2_FLOOR_MMHG = 10.0
#: Floor used by the Fick comparison (mixed venous blood).
PVO2_FLOOR_MMHG = MIXED_VENOUS_PO2_FLOOR_MMHG
#: Which blood the comparison's venous figures describe.
VENOUS_BLOOD = "mixed venous"

#: Resting a-vO2 difference assumed when resting cardiac output is not measured, mL/dL
#: (common practice: VO2 250 mL/min with Q 5 L/min; about a quarter of arterial O2 extracted).
RESTING_AVO2_ML_DL = 5.0
#: Resting mixed venous saturation below this is flagged (normal about 0.65-0.80; from memory).
RESTING_SVO2_FLAG = 0.55

#: Curve-shift factors and the conditions each one moves.
SHIFT_FACTORS: dict[str, tuple[str, ...]] = {
    "temperature": ("temperature_c",),
    "acid_base": ("ph", "pco2_mmhg", "base_excess_mmol_l"),
    "dpg": ("dpg_mmol_l",),
}

#: Words the reader sees for the curve models, conditions and states named in notes.
MODEL_LABELS: dict[str, str] = {"siggaard_andersen": "Siggaard-Andersen 1984", "severinghaus": "Severinghaus 1979", "hill": "Hill"}
_CONDITION_WORDS = {
    "ph": "pH",
    "temperature_c": "temperature",
    "pco2_mmhg": "PCO2",
    "base_excess_mmol_l": "base excess",
    "dpg_mmol_l": "2,3-BPG",
}
_STATE_WORDS = {"arterial": "arterial blood", "rest": "rest", "vt1": "VT1", "vt2": "VT2", "peak": "peak"}

CAUTION = (
    "Model estimates, not measurements: venous values come from a published dissociation-curve "
    "model and assumed blood conditions, and cardiac output marked as estimated comes from a "
    "population equation. Tidemark is not a medical device. Clinical decisions follow measured "
    "values and licensed practice, interpreted by qualified staff under local protocols."
)


@dataclass(frozen=True)
class UnloadingParts:
    """Where the unloaded oxygen comes from, mL O2/dL (parts sum to ``total``)."""

    total: float
    po2_fall: float
    temperature: float
    acid_base: float
    dpg: float

    @property
    def curve_shift(self) -> float:
        return self.temperature + self.acid_base + self.dpg


@dataclass(frozen=True)
class StateOxygen:
    """Oxygen delivery and unloading at one state (venous figures: mixed venous blood)."""

    name: str
    vo2_ml_min: float
    hr_bpm: float | None
    pct_vo2_peak: float | None
    rer: float | None
    q_l_min: float
    q_estimated: bool
    q_method: str
    stroke_volume_ml: float | None
    avo2_ml_dl: float
    pao2_mmhg: float
    pao2_source: str
    pao2_alveolar_mmhg: float | None
    sao2: float
    sao2_source: str
    cao2_ml_dl: float
    cvo2_ml_dl: float
    svo2: float | None
    pvo2_exercise_curve_mmhg: float | None
    pvo2_resting_curve_mmhg: float | None
    max_avo2_by_curve_ml_dl: float
    unloading: UnloadingParts | None = described(
        key="unloading_ml_dl", unit="mL/dL", description="where the unloaded oxygen comes from (parts sum to the total)"
    )
    haldane_extra_co2_ml_dl: float | None = described(unit="mL/dL", description="extra CO2 carried by desaturated venous blood")
    conditions: StateConditions = described(description="blood conditions of the state's curve")
    arterial_conditions: StateConditions = described(description="arterial blood conditions of the state")
    venous_blood: str = VENOUS_BLOOD
    notes: list[str] = field(default_factory=list)

    @derived(description="true when the a-vO2 difference rests on an estimated cardiac output")
    def estimate(self) -> bool:
        """True when the a-vO2 difference rests on an estimated cardiac output."""
        return self.q_estimated

    @derived(description="same as `estimate`: the a-vO2 difference rests on an estimated cardiac output")
    def avo2_estimated(self) -> bool:
        return self.q_estimated

    @derived(description="always true: venous values are model estimates")
    def venous_values_estimated(self) -> bool:
        return True


@dataclass(frozen=True)
class OxygenComparison:
    """Per-state Fick and curve comparison, with the inputs that produced it."""

    states: list[StateOxygen]
    hb_g_dl: float
    pao2_mmhg: float | None
    model: str
    huefner_ml_g: float
    resting_conditions: StateConditions
    pb_mmhg: float
    fio2: float
    cohb_fraction: float = 0.0
    methb_fraction: float = 0.0
    notes: list[str] = field(default_factory=list)
    caution: str = CAUTION

    def state(self, name: str) -> StateOxygen:
        for s in self.states:
            if s.name == name:
                return s
        raise KeyError(name)

    @derived(description="true when PaO2 was given (else it comes from the alveolar gas equation)")
    def pao2_measured(self) -> bool:
        return self.pao2_mmhg is not None

    @derived(description="state -> arterial blood conditions")
    def arterial_conditions(self) -> dict[str, StateConditions]:
        return {s.name: s.arterial_conditions for s in self.states}

    @derived(description="which venous blood the venous values describe")
    def venous_blood(self) -> str:
        return VENOUS_BLOOD

    @derived(unit="mmHg", description="venous PO2 below which the blood is implausible")
    def pvo2_floor_mmhg(self) -> float:
        return PVO2_FLOOR_MMHG

    @derived(description="the blood the venous floor applies to, in words")
    def pvo2_floor_blood(self) -> str:
        return (
            f"{VENOUS_BLOOD} (about 15-20 mmHg at maximal exercise; femoral venous blood goes to about "
            f"{FEMORAL_VENOUS_PO2_FLOOR_MMHG:g} mmHg)"
        )

    @derived(description="how the unloading is split into its parts")
    def decomposition_method(self) -> str:
        return (
            "fall in PO2 along the resting curve plus curve shift at the exercise-curve venous PO2; "
            "shift split into temperature, pH/CO2 and 2,3-BPG parts by averaging over every order of "
            "applying them (Shapley values)"
        )

    @derived(description="always true: the comparison is a model estimate")
    def estimate(self) -> bool:
        return True

    def to_frame(self) -> pd.DataFrame:
        """One row per state, units in column names (for the dashboard table)."""
        rows = []
        for s in self.states:
            parts = s.unloading
            rows.append(
                {
                    "state": s.name,
                    "vo2_ml_min": s.vo2_ml_min,
                    "hr_bpm": s.hr_bpm,
                    "q_l_min": s.q_l_min,
                    "q_estimated": s.q_estimated,
                    "stroke_volume_ml": s.stroke_volume_ml,
                    "avo2_ml_dl": s.avo2_ml_dl,
                    "pao2_mmhg": s.pao2_mmhg,
                    "cao2_ml_dl": s.cao2_ml_dl,
                    "cvo2_ml_dl": s.cvo2_ml_dl,
                    "sao2_pct": 100.0 * s.sao2,
                    "svo2_pct": None if s.svo2 is None else 100.0 * s.svo2,
                    "pvo2_exercise_curve_mmhg": s.pvo2_exercise_curve_mmhg,
                    "pvo2_resting_curve_mmhg": s.pvo2_resting_curve_mmhg,
                    "max_avo2_by_curve_ml_dl": s.max_avo2_by_curve_ml_dl,
                    "unloading_po2_fall_ml_dl": None if parts is None else parts.po2_fall,
                    "unloading_temperature_ml_dl": None if parts is None else parts.temperature,
                    "unloading_acid_base_ml_dl": None if parts is None else parts.acid_base,
                    "unloading_dpg_ml_dl": None if parts is None else parts.dpg,
                    "haldane_extra_co2_ml_dl": s.haldane_extra_co2_ml_dl,
                    "notes": " ".join(s.notes),
                }
            )
        return pd.DataFrame(rows)


@lru_cache(maxsize=256)
def _curve_for(conds: StateConditions, model: str) -> _Curve:
    """The validated curve of ``conds`` under ``model``, built once per condition set.

    Every curve evaluation of a comparison (root finding, Shapley orders) reuses it, so the
    conditions are checked once instead of at every evaluation.
    """
    return _curve(**{**STANDARD, **conds.curve_kwargs(model)}, model=model, p50_mmhg=None, hill_n=None)


@lru_cache(maxsize=1024)
def _mixed(rest: StateConditions, exercise: StateConditions, on: frozenset[str]) -> StateConditions:
    changes = {name: getattr(exercise, name) for factor in on for name in SHIFT_FACTORS[factor]}
    return replace(rest, **changes)


@dataclass(frozen=True)
class _Blood:
    """Haemoglobin of the person: Hb (g/dL), Hüfner factor, share free to carry O2, CO share."""

    hb: float
    k: float
    free: float = 1.0
    share: float = 0.0


def _saturation_on(po2: float, conds: StateConditions, *, model: str, blood: _Blood) -> float:
    """Functional saturation at ``po2`` on the curve of ``conds`` (CO left shift included)."""
    return _functional_saturation_at(float(po2), _curve_for(conds, model), blood.share)


def _content_on_curve(po2: float, conds: StateConditions, *, model: str, blood: _Blood) -> float:
    """O2 content (mL/dL) at ``po2`` on the curve of ``conds``: k Hb free S + 0.0031 PO2.

    The same arithmetic as :func:`o2_content_ml_dl` on :func:`saturation`, without re-checking
    the (already validated) inputs at every call: the root finder calls it many times.
    """
    if not (0.0 <= po2 <= _checks.LIMITS["po2_mmhg"].high):
        raise InvalidParameter("po2_mmhg", _checks.LIMITS["po2_mmhg"].describe(), po2)
    sat = _saturation_on(po2, conds, model=model, blood=blood)
    return blood.k * blood.hb * blood.free * sat + O2_SOLUBILITY_ML_DL_MMHG * po2


def _venous_po2(cvo2: float, conds: StateConditions, *, model: str, blood: _Blood) -> float | None:
    """PO2 at which blood under ``conds`` holds ``cvo2`` mL/dL (None when no PO2 can)."""
    if cvo2 <= 0.0:
        return None
    hi = 2000.0

    def gap(p: float) -> float:
        return _content_on_curve(p, conds, model=model, blood=blood) - cvo2

    if gap(hi) < 0:
        return None
    return float(brentq(gap, 0.0, hi, xtol=1e-6, rtol=1e-10))


def _po2_at_functional_saturation(sat: float, conds: StateConditions, *, model: str, blood: _Blood) -> float:
    """PO2 (mmHg) at which the curve of ``conds`` reaches functional saturation ``sat``."""
    return float(brentq(lambda p: _saturation_on(p, conds, model=model, blood=blood) - sat, 1e-3, 2000.0, xtol=1e-8))


def _per_state(value: Any, name: str, defaults: Mapping[str, Any], fallback: Any) -> Any:
    """``value`` when it is one value for every state, its entry for ``name`` when a mapping."""
    if value is None:
        return defaults.get(name, fallback)
    if isinstance(value, Mapping):
        return value.get(name, defaults.get(name, fallback))
    return value


def oxygen_comparison(
    states: Sequence[StatePoint],
    *,
    hb_g_dl: float,
    pao2_mmhg: float | None = None,
    spo2_pct: float | None = None,
    conditions: Mapping[str, StateConditions] | None = None,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
    arterial_conditions: StateConditions | Mapping[str, StateConditions] | None = None,
    pb_mmhg: float = SEA_LEVEL_PB_MMHG,
    fio2: float = FIO2_AIR,
    aa_gradient_mmhg: float | Mapping[str, float] | None = None,
    cohb_fraction: float = 0.0,
    methb_fraction: float = 0.0,
) -> OxygenComparison:
    """Compare Fick extraction with dissociation-curve unloading at each state.

    Parameters
    ----------
    states : sequence of StatePoint
        Gas exchange at rest / VT1 / VT2 / peak (any subset, any order).
    hb_g_dl : float
        Haemoglobin, g/dL (session metadata ``hb_g_dl``).
    pao2_mmhg : float, optional
        MEASURED arterial PO2, mmHg, used for every state. When left out, each state's PaO2 is
        the alveolar PO2 (alveolar gas equation at ``pb_mmhg``, ``fio2``, the state's arterial
        PCO2 and RER) minus the alveolar-arterial gradient.
    spo2_pct : float, optional
        Pulse-oximeter saturation (%) used for every state that has none of its own; below
        90 % adds a note. The oximeter reads COHb as oxyhaemoglobin, so with
        ``cohb_fraction`` the functional saturation is (SpO2 - FCOHb) / (1 - FCOHb - FMetHb).
    conditions : mapping of str to StateConditions, optional
        Mixed venous blood conditions per state; missing states take :data:`DEFAULT_CONDITIONS`.
        Any two of pH, PCO2 and base excess are enough (the third follows from the Van Slyke
        equation). The ``"rest"`` entry is also the RESTING curve every state is compared with.
    model : {"siggaard_andersen", "severinghaus"}, default "siggaard_andersen"
        Curve model. Siggaard-Andersen is the default here because it applies base excess and
        2,3-BPG, which change with exercise and between people; Severinghaus applies PCO2 instead.
    huefner_ml_g : float, default 1.34
        Hüfner factor, mL O2 per g Hb (common practice).
    arterial_conditions : StateConditions or mapping of str to StateConditions, optional
        Arterial blood conditions, one for every state or per state (default
        :data:`DEFAULT_ARTERIAL_CONDITIONS`: exercise temperature and acidosis at VT2 and peak).
    pb_mmhg : float, default 760
        Barometric pressure, mmHg (session metadata ``barometric_mmhg``).
    fio2 : float, default 0.2093
        Inspired O2 fraction.
    aa_gradient_mmhg : float or mapping of str to float, optional
        Alveolar-arterial PO2 gradient, one value or per state (default
        :data:`DEFAULT_AA_GRADIENT_MMHG`: 10 mmHg at rest widening to 20 at peak).
    cohb_fraction, methb_fraction : float, default 0.0
        Carboxy- and methaemoglobin as fractions of total Hb (capacity lost; CO also shifts the
        remaining haemoglobin's curve to the left).

    Returns
    -------
    OxygenComparison

    Raises
    ------
    InvalidParameter
        Out-of-range input, an exercise state without measured Q and without ``pct_vo2_peak``,
        an unknown state name, or an unsupported model.

    Notes
    -----
    See the module docstring for the steps and the decomposition. Conditions a model does not
    apply (PCO2 for Siggaard-Andersen; 2,3-BPG and base excess for Severinghaus) are listed in
    the notes; PCO2 is still used for the Haldane calculation. A blood gas given with all three
    of pH, PCO2 and base excess is used as given; a note says when the three disagree with the
    Van Slyke equation by more than 0.03 pH.

    References
    ----------
    Stringer WW, Hansen JE, Wasserman K (1997). J Appl Physiol 82:908-912.
    Severinghaus JW (1979). J Appl Physiol 46:599-602.
    Siggaard-Andersen O et al. (1984). Clin Chem 30:1646-1651.
    Douglas AR, Jones NL, Reed JW (1988). J Appl Physiol 65:473-477.
    Dempsey JA, Wagner PD (1999). Exercise-induced arterial hypoxemia. J Appl Physiol
    87:1997-2006 (from memory).
    Shapley LS (1953). Annals of Mathematics Studies 28:307-317.
    """
    if model not in COMPARISON_MODELS:
        raise InvalidParameter("model", "one of " + ", ".join(repr(m) for m in COMPARISON_MODELS), model)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    pao2 = None if pao2_mmhg is None else _checks.scalar("po2_mmhg", pao2_mmhg)
    k = _checks.scalar("huefner_ml_g", huefner_ml_g)
    pb = _checks.scalar("pb_mmhg", pb_mmhg)
    f_i = _checks.scalar("fio2", fio2)
    free = free_haemoglobin_fraction(cohb_fraction=cohb_fraction, methb_fraction=methb_fraction)
    blood = _Blood(hb=hb, k=k, free=free, share=co_share(cohb_fraction=cohb_fraction, methb_fraction=methb_fraction))
    if not states:
        raise InvalidParameter("states", "at least one StatePoint (rest, vt1, vt2 or peak)", list(states))
    table: dict[str, StateConditions] = dict(DEFAULT_CONDITIONS)
    if conditions:
        table.update(conditions)
    notes: list[str] = []
    resolved = {name: _resolve(conds, hb, name, "mixed venous", notes) for name, conds in table.items()}
    rest_conds = resolved["rest"]
    arterial_of: dict[str, StateConditions] = {}
    for p in states:
        given = _per_state(arterial_conditions, p.name, DEFAULT_ARTERIAL_CONDITIONS, ARTERIAL_CONDITIONS)
        arterial_of[p.name] = _resolve(given, hb, p.name, "arterial", notes)

    skipped_by: dict[tuple[str, ...], list[str]] = {}
    for name, conds in [("arterial", c) for c in arterial_of.values()] + [("rest", rest_conds)] + [
        (p.name, resolved[p.name]) for p in states if p.name in resolved
    ]:
        skipped = tuple(conds.not_applied(model))
        if skipped and name not in skipped_by.setdefault(skipped, []):
            skipped_by[skipped].append(name)
    for skipped, names in skipped_by.items():
        why = (
            "this curve takes the CO2 effect through base excess at the given pH; PCO2 is still used for the Haldane figure"
            if skipped == ("pco2_mmhg",)
            else "choose the " + " or ".join(MODEL_LABELS[m] for m in COMPARISON_MODELS if m != model) + " curve to apply it"
        )
        words = ", ".join(_CONDITION_WORDS.get(c, c) for c in skipped)
        where = ", ".join(_STATE_WORDS.get(n, n) for n in names)
        notes.append(f"{words} not applied to the {MODEL_LABELS.get(model, model)} curve for {where} ({why}).")
    if blood.share > 0 or methb_fraction:
        notes.append(
            f"Dyshaemoglobins: COHb {100 * float(cohb_fraction):g} %, MetHb {100 * float(methb_fraction):g} % carry no O2; "
            "carbon monoxide also shifts the remaining haemoglobin's curve to the left (Roughton & Darling 1944)."
        )

    context = _Context(
        table=resolved, rest=rest_conds, arterial=arterial_of, blood=blood, pao2=pao2, spo2_pct=spo2_pct,
        model=model, pb=pb, fio2=f_i, aa_gradient=aa_gradient_mmhg,
        cohb=float(cohb_fraction), methb=float(methb_fraction),
    )
    results = [_one_state(point, context) for point in states]
    return OxygenComparison(
        states=results,
        hb_g_dl=hb,
        pao2_mmhg=pao2,
        model=model,
        huefner_ml_g=k,
        resting_conditions=rest_conds,
        pb_mmhg=pb,
        fio2=f_i,
        cohb_fraction=float(cohb_fraction),
        methb_fraction=float(methb_fraction),
        notes=notes,
    )


def _resolve(conds: StateConditions, hb: float, name: str, blood_words: str, notes: list[str]) -> StateConditions:
    """Complete a state's conditions by the Van Slyke equation; note a measured gas that disagrees."""
    if not isinstance(conds, StateConditions):
        raise InvalidParameter("conditions", "StateConditions records", conds)
    if conds.complete:
        assert conds.ph is not None and conds.pco2_mmhg is not None and conds.base_excess_mmol_l is not None
        gap = van_slyke_gap_ph(ph=conds.ph, pco2_mmhg=conds.pco2_mmhg, base_excess_mmol_l=conds.base_excess_mmol_l, hb_g_dl=hb)
        if abs(gap) > VAN_SLYKE_TOLERANCE_PH:
            notes.append(
                f"The {blood_words} blood gas given for {_STATE_WORDS.get(name, name)} (pH {conds.ph:.2f}, PCO2 "
                f"{conds.pco2_mmhg:.0f} mmHg, base excess {conds.base_excess_mmol_l:+.1f} mmol/L) is not self-consistent: "
                f"PCO2 and base excess imply pH {conds.ph - gap:.3f} (Van Slyke equation, Hb {hb:g} g/dL). "
                "It is used as given; leave one of the three out to have it derived."
            )
        return conds
    return conds.resolved(hb_g_dl=hb)


#: A complete blood gas whose pH is further than this from the Van Slyke relation gets a note.
VAN_SLYKE_TOLERANCE_PH = 0.03


@dataclass(frozen=True)
class _Context:
    table: Mapping[str, StateConditions]
    rest: StateConditions
    arterial: Mapping[str, StateConditions]
    blood: _Blood
    pao2: float | None
    spo2_pct: float | None
    model: str
    pb: float
    fio2: float
    aa_gradient: float | Mapping[str, float] | None
    cohb: float
    methb: float


def _cardiac_output(point: StatePoint, notes: list[str]) -> tuple[float, bool, str]:
    """Q (L/min), whether it is estimated, and the method name."""
    if point.q_l_min is not None:
        return float(point.q_l_min), False, "measured"
    if point.name == "rest":
        notes.append(
            f"Cardiac output at rest is not measured: a typical resting a-vO2 difference of {RESTING_AVO2_ML_DL:g} mL/dL "
            "is ASSUMED (common practice), so the resting venous values show what that assumption means for this "
            "blood. The Stringer 1997 equation is not used at rest (it was derived during exercise)."
        )
        return point.vo2_ml_min / (10.0 * RESTING_AVO2_ML_DL), True, "resting_typical_avo2"
    if point.pct_vo2_peak is None:
        raise InvalidParameter(
            "pct_vo2_peak",
            f"a percentage of peak VO2 for state '{point.name}' (needed to estimate cardiac output "
            "when no measured q_l_min is given)",
            None,
        )
    notes.append(
        "Cardiac output is an ESTIMATE from the Stringer 1997 population equation, so the a-vO2 "
        "difference is that equation's value, not a measurement of this person."
    )
    return stringer_cardiac_output_l_min(vo2_ml_min=point.vo2_ml_min, pct_vo2_peak=point.pct_vo2_peak), True, "stringer1997"


def _arterial(point: StatePoint, ctx: _Context, arterial: StateConditions, notes: list[str]) -> tuple[float, str, float | None, float, str]:
    """(PaO2, its source, alveolar PO2 or None, functional SaO2, its source) for one state."""
    blood, model = ctx.blood, ctx.model
    alveolar = None
    if ctx.pao2 is not None:
        pao2, pao2_source = ctx.pao2, "measured"
    else:
        assert arterial.pco2_mmhg is not None
        alveolar = alveolar_po2_mmhg(
            pb_mmhg=ctx.pb, fio2=ctx.fio2, paco2_mmhg=arterial.pco2_mmhg, rer=point.rer if point.rer is not None else 0.8
        )
        gradient = _per_state(ctx.aa_gradient, point.name, DEFAULT_AA_GRADIENT_MMHG, FALLBACK_AA_GRADIENT_MMHG)
        pao2 = arterial_po2_mmhg(pao2_alveolar_mmhg=alveolar, aa_gradient_mmhg=gradient)
        pao2_source = "alveolar gas equation"
    spo2 = point.spo2_pct if point.spo2_pct is not None else ctx.spo2_pct
    if spo2 is None:
        return pao2, pao2_source, alveolar, _saturation_on(pao2, arterial, model=model, blood=blood), "curve"
    reading = saturation_from_spo2(spo2)
    low = spo2_note(spo2)
    if low:
        notes.append(low)
    sao2 = min(1.0, max(0.0, (reading - ctx.cohb) / (1.0 - ctx.cohb - ctx.methb)))
    if ctx.cohb > 0:
        notes.append(
            "Pulse oximeters read carboxyhaemoglobin as oxyhaemoglobin (common practice): the saturation used is "
            f"SpO2 less COHb, {100 * sao2:.1f} % of the haemoglobin free to carry O2."
        )
    if ctx.pao2 is None and 0.0 < sao2 < 1.0:
        from_curve = _po2_at_functional_saturation(min(sao2, 0.995), arterial, model=model, blood=blood)
        pao2, pao2_source = min(pao2, from_curve), "SpO2 on the arterial curve (at most the alveolar gas equation's value)"
    return pao2, pao2_source, alveolar, sao2, "spo2"


def _one_state(point: StatePoint, ctx: _Context) -> StateOxygen:
    if point.name not in ctx.table:
        raise InvalidParameter(
            "states", f"state names among {', '.join(sorted(ctx.table))} (or give conditions for it)", point.name
        )
    conds, rest, blood, model = ctx.table[point.name], ctx.rest, ctx.blood, ctx.model
    arterial = ctx.arterial[point.name]
    notes: list[str] = []

    # 1-2. Cardiac output and the Fick a-vO2 difference.
    q, q_est, q_method = _cardiac_output(point, notes)
    avo2 = avo2_difference_ml_dl(vo2_ml_min=point.vo2_ml_min, q_l_min=q)
    sv = None if point.hr_bpm is None else stroke_volume_ml(q_l_min=q, hr_bpm=point.hr_bpm)

    # 3. Arterial PO2, saturation and content.
    pao2, pao2_source, alveolar, sao2, sao2_source = _arterial(point, ctx, arterial, notes)
    cao2 = blood.k * blood.hb * blood.free * sao2 + O2_SOLUBILITY_ML_DL_MMHG * pao2

    # 4. Implied venous values (mixed venous blood).
    cvo2 = cao2 - avo2
    pv_ex = _venous_po2(cvo2, conds, model=model, blood=blood)
    pv_rest = _venous_po2(cvo2, rest, model=model, blood=blood)
    svo2 = None if pv_ex is None else _saturation_on(pv_ex, conds, model=model, blood=blood)
    max_avo2 = cao2 - _content_on_curve(PVO2_FLOOR_MMHG, conds, model=model, blood=blood)

    # 5. Decomposition at the exercise-curve venous PO2.
    parts = None
    if pv_ex is not None:
        c_rest = _content_on_curve(pv_ex, rest, model=model, blood=blood)
        shift = shapley_parts(
            lambda on: c_rest - _content_on_curve(pv_ex, _mixed(rest, conds, on), model=model, blood=blood),
            list(SHIFT_FACTORS),
        )
        po2_fall = cao2 - c_rest
        parts = UnloadingParts(
            total=po2_fall + sum(shift.values()),
            po2_fall=po2_fall,
            temperature=shift["temperature"],
            acid_base=shift["acid_base"],
            dpg=shift["dpg"],
        )

    # 6. Haldane, for the venous blood as described: its oxygenated base excess is the given
    # base excess less the oxylabile protons its deoxygenated haemoglobin holds.
    haldane = None
    if svo2 is not None and svo2 < sao2:
        sa_total = 1.0 - blood.free * (1.0 - sao2)  # share of all haem not deoxygenated
        sv_total = 1.0 - blood.free * (1.0 - svo2)
        assert conds.base_excess_mmol_l is not None and conds.pco2_mmhg is not None
        ct_hb = blood.hb * 10.0 / HB_MONOMER_G_MMOL
        be_oxygenated = conds.base_excess_mmol_l - OXYLABILE_PROTON_RATIO * (1.0 - sv_total) * ct_hb
        haldane = haldane_extra_co2_ml_dl(
            pco2_mmhg=conds.pco2_mmhg,
            so2_arterial=sa_total,
            so2_venous=sv_total,
            hb_g_dl=blood.hb,
            base_excess_oxygenated_mmol_l=max(-30.0, be_oxygenated),
            temperature_c=conds.temperature_c,
        )

    _plausibility_notes(point, notes, q_est=q_est, hb=blood.hb, avo2=avo2, cao2=cao2, cvo2=cvo2, max_avo2=max_avo2,
                        pv_ex=pv_ex, pv_rest=pv_rest, svo2=svo2)
    return StateOxygen(
        name=point.name,
        vo2_ml_min=float(point.vo2_ml_min),
        hr_bpm=None if point.hr_bpm is None else float(point.hr_bpm),
        pct_vo2_peak=None if point.pct_vo2_peak is None else float(point.pct_vo2_peak),
        rer=None if point.rer is None else float(point.rer),
        q_l_min=q,
        q_estimated=q_est,
        q_method=q_method,
        stroke_volume_ml=sv,
        avo2_ml_dl=avo2,
        pao2_mmhg=pao2,
        pao2_source=pao2_source,
        pao2_alveolar_mmhg=alveolar,
        sao2=sao2,
        sao2_source=sao2_source,
        cao2_ml_dl=cao2,
        cvo2_ml_dl=cvo2,
        svo2=svo2,
        pvo2_exercise_curve_mmhg=pv_ex,
        pvo2_resting_curve_mmhg=pv_rest,
        max_avo2_by_curve_ml_dl=max_avo2,
        unloading=parts,
        haldane_extra_co2_ml_dl=haldane,
        conditions=conds,
        arterial_conditions=arterial,
        notes=notes,
    )


def _plausibility_notes(
    point: StatePoint, notes: list[str], *, q_est: bool, hb: float, avo2: float, cao2: float, cvo2: float,
    max_avo2: float, pv_ex: float | None, pv_rest: float | None, svo2: float | None,
) -> None:
    """Plain-language notes on an impossible or implausible extraction (mixed venous blood)."""
    cause = (
        "The Stringer 1997 estimate was derived in healthy people with normal haemoglobin and does not "
        f"fit this blood (Hb {hb:g} g/dL); cardiac output would need to be measured."
        if q_est and point.name != "rest"
        else "Check VO2, the measured cardiac output and haemoglobin."
        if not q_est
        else "Check VO2 and haemoglobin; resting cardiac output would need to be measured."
    )
    if cvo2 <= 0:
        notes.append(
            f"The a-vO2 difference ({avo2:.1f} mL/dL) is at least the whole arterial content "
            f"({cao2:.1f} mL/dL), which is impossible. {cause}"
        )
    elif avo2 > max_avo2:
        notes.append(
            f"Extraction {avo2:.1f} mL/dL exceeds what the curve allows down to a mixed venous PO2 of "
            f"{PVO2_FLOOR_MMHG:g} mmHg ({max_avo2:.1f} mL/dL). {cause}"
        )
    if pv_ex is not None and pv_ex < PVO2_FLOOR_MMHG:
        notes.append(
            f"Implied mixed venous PO2 {pv_ex:.1f} mmHg is below about {PVO2_FLOOR_MMHG:g} mmHg, lower than mixed "
            "venous blood is usually found even at maximal exercise (about 15-20 mmHg; femoral venous blood "
            f"from working leg muscle goes to about {FEMORAL_VENOUS_PO2_FLOOR_MMHG:g} mmHg): implausible."
        )
    elif pv_ex is not None and (pv_rest is None or pv_rest < PVO2_FLOOR_MMHG):
        notes.append(
            "This extraction is plausible only because exercise conditions shift the curve to the right "
            "(on the resting curve the venous PO2 would be implausibly low)."
        )
    if point.name == "rest" and svo2 is not None and svo2 < RESTING_SVO2_FLAG:
        notes.append(
            f"Resting mixed venous saturation {svo2:.2f} is below about {RESTING_SVO2_FLAG:g} (normally about "
            "0.65-0.80 at rest, from memory). Consistent with a low resting cardiac output or low haemoglobin when "
            "the inputs are right; check the cardiac output used and Hb before reading more into it."
        )
