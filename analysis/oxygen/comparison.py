"""Side-by-side Fick extraction and dissociation-curve unloading at rest, VT1, VT2 and peak.

For each state:

1. Cardiac output Q: measured when given, else the Stringer (1997) ESTIMATE
   Q = VO2 / (5.72 + 0.105 x %VO2peak). Stroke volume = Q / HR.
2. Fick a-vO2 difference = VO2 / Q (mL/dL).
3. Arterial content CaO2 = k Hb SaO2 + 0.0031 PaO2, with SaO2 from SpO2 when given, else
   from PaO2 on the curve at arterial conditions.
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

Everything here is a model estimate, not a measurement.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import asdict, dataclass, field, fields, replace
from functools import lru_cache
from typing import Any

import pandas as pd
from scipy.optimize import brentq

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.content import DEFAULT_HUEFNER_ML_G, O2_SOLUBILITY_ML_DL_MMHG
from analysis.oxygen.curves import STANDARD, _Curve, _curve, _saturation_at, saturation
from analysis.oxygen.decomposition import shapley_parts
from analysis.oxygen.fick import avo2_difference_ml_dl, stringer_cardiac_output_l_min, stroke_volume_ml
from analysis.oxygen.haldane import haldane_extra_co2_ml_dl
from analysis.oxygen.states import ARTERIAL_CONDITIONS, DEFAULT_CONDITIONS, StateConditions, StatePoint
from analysis.oxygen.unloading import arterial_content_ml_dl

#: Models the comparison accepts (the Hill model has no conditions to shift).
COMPARISON_MODELS: tuple[str, ...] = ("siggaard_andersen", "severinghaus")

#: Venous PO2 below which blood leaving working muscle is implausible (about 10 mmHg; from memory).
PVO2_FLOOR_MMHG = 10.0

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
    """Oxygen delivery and unloading at one state."""

    name: str
    vo2_ml_min: float
    hr_bpm: float | None
    pct_vo2_peak: float | None
    q_l_min: float
    q_estimated: bool
    q_method: str
    stroke_volume_ml: float | None
    avo2_ml_dl: float
    sao2: float
    sao2_source: str
    cao2_ml_dl: float
    cvo2_ml_dl: float
    svo2: float | None
    pvo2_exercise_curve_mmhg: float | None
    pvo2_resting_curve_mmhg: float | None
    max_avo2_by_curve_ml_dl: float
    unloading: UnloadingParts | None
    haldane_extra_co2_ml_dl: float | None
    conditions: StateConditions
    notes: list[str] = field(default_factory=list)

    @property
    def estimate(self) -> bool:
        """True when the a-vO2 difference rests on an estimated cardiac output."""
        return self.q_estimated


@dataclass(frozen=True)
class OxygenComparison:
    """Per-state Fick and curve comparison, with the inputs that produced it."""

    states: list[StateOxygen]
    hb_g_dl: float
    pao2_mmhg: float
    model: str
    huefner_ml_g: float
    arterial_conditions: StateConditions
    resting_conditions: StateConditions
    notes: list[str] = field(default_factory=list)
    caution: str = CAUTION

    def state(self, name: str) -> StateOxygen:
        for s in self.states:
            if s.name == name:
                return s
        raise KeyError(name)

    def to_json_dict(self) -> dict[str, Any]:
        """JSON-safe dictionary (NaN/inf become ``None``) with estimate flags and the caution."""
        return _json_safe(
            {
                "model": self.model,
                "hb_g_dl": self.hb_g_dl,
                "pao2_mmhg": self.pao2_mmhg,
                "huefner_ml_g": self.huefner_ml_g,
                "arterial_conditions": asdict(self.arterial_conditions),
                "resting_conditions": asdict(self.resting_conditions),
                "pvo2_floor_mmhg": PVO2_FLOOR_MMHG,
                "decomposition_method": (
                    "fall in PO2 along the resting curve plus curve shift at the exercise-curve venous PO2; "
                    "shift split into temperature, pH/CO2 and 2,3-BPG parts by averaging over every order of "
                    "applying them (Shapley values)"
                ),
                "estimate": True,
                "caution": self.caution,
                "notes": list(self.notes),
                "states": [_state_json(s) for s in self.states],
            }
        )

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


def _json_safe(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {str(k): _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_json_safe(v) for v in obj]
    if isinstance(obj, bool) or obj is None or isinstance(obj, str):
        return obj
    if isinstance(obj, (int, float)):
        value = float(obj)
        return value if math.isfinite(value) else None
    return str(obj)


def _state_json(s: StateOxygen) -> dict[str, Any]:
    # field by field (asdict would deep-copy the two nested dataclasses only to drop them)
    out = {
        f.name: list(v) if isinstance(v := getattr(s, f.name), list) else v
        for f in fields(s)
        if f.name not in ("unloading", "conditions")
    }
    out["estimate"] = s.estimate
    out["avo2_estimated"] = s.q_estimated
    out["venous_values_estimated"] = True
    out["conditions"] = asdict(s.conditions)
    out["unloading_ml_dl"] = None if s.unloading is None else asdict(s.unloading)
    return out


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


def _content_on_curve(po2: float, conds: StateConditions, *, model: str, hb: float, k: float) -> float:
    """O2 content (mL/dL) at ``po2`` on the curve of ``conds``: k Hb S + 0.0031 PO2.

    The same arithmetic as :func:`o2_content_ml_dl` on :func:`saturation`, without re-checking
    the (already validated) inputs at every call: the root finder calls it many times.
    """
    if not (0.0 <= po2 <= _checks.LIMITS["po2_mmhg"].high):
        raise InvalidParameter("po2_mmhg", _checks.LIMITS["po2_mmhg"].describe(), po2)
    sat = _saturation_at(float(po2), _curve_for(conds, model))
    return k * hb * sat + O2_SOLUBILITY_ML_DL_MMHG * po2


def _venous_po2(cvo2: float, conds: StateConditions, *, model: str, hb: float, k: float) -> float | None:
    """PO2 at which blood under ``conds`` holds ``cvo2`` mL/dL (None when no PO2 can)."""
    if cvo2 <= 0.0:
        return None
    hi = 2000.0

    def gap(p: float) -> float:
        return _content_on_curve(p, conds, model=model, hb=hb, k=k) - cvo2

    if gap(hi) < 0:
        return None
    return float(brentq(gap, 0.0, hi, xtol=1e-6, rtol=1e-10))


def oxygen_comparison(
    states: Sequence[StatePoint],
    *,
    hb_g_dl: float,
    pao2_mmhg: float = 95.0,
    spo2_pct: float | None = None,
    conditions: Mapping[str, StateConditions] | None = None,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
    arterial_conditions: StateConditions = ARTERIAL_CONDITIONS,
) -> OxygenComparison:
    """Compare Fick extraction with dissociation-curve unloading at each state.

    Parameters
    ----------
    states : sequence of StatePoint
        Gas exchange at rest / VT1 / VT2 / peak (any subset, any order).
    hb_g_dl : float
        Haemoglobin, g/dL (session metadata ``hb_g_dl``).
    pao2_mmhg : float, default 95.0
        Arterial PO2, mmHg (common practice for a healthy adult at sea level).
    spo2_pct : float, optional
        Pulse-oximeter saturation (%) used for every state that has none of its own; below
        90 % adds a warning.
    conditions : mapping of str to StateConditions, optional
        Venous blood conditions per state; missing states take :data:`DEFAULT_CONDITIONS`.
        The ``"rest"`` entry is also the RESTING curve every state is compared with.
    model : {"siggaard_andersen", "severinghaus"}, default "siggaard_andersen"
        Curve model. Siggaard-Andersen is the default here because it applies base excess and
        2,3-BPG, which change with exercise and between people; Severinghaus applies PCO2 instead.
    huefner_ml_g : float, default 1.34
        Hüfner factor, mL O2 per g Hb (common practice).
    arterial_conditions : StateConditions, optional
        Conditions of arterial blood (default: standard, 37 °C, pH 7.40, PCO2 40).

    Returns
    -------
    OxygenComparison

    Raises
    ------
    InvalidParameter
        Out-of-range input, a state without measured Q and without ``pct_vo2_peak``, an unknown
        state name, or an unsupported model.

    Notes
    -----
    See the module docstring for the steps and the decomposition. Conditions a model does not
    apply (PCO2 for Siggaard-Andersen; 2,3-BPG and base excess for Severinghaus) are listed in
    the notes; PCO2 is still used for the Haldane calculation.

    References
    ----------
    Stringer WW, Hansen JE, Wasserman K (1997). J Appl Physiol 82:908-912.
    Severinghaus JW (1979). J Appl Physiol 46:599-602.
    Siggaard-Andersen O et al. (1984). Clin Chem 30:1646-1651.
    Douglas AR, Jones NL, Reed JW (1988). J Appl Physiol 65:473-477.
    Shapley LS (1953). Annals of Mathematics Studies 28:307-317.
    """
    if model not in COMPARISON_MODELS:
        raise InvalidParameter("model", "one of " + ", ".join(repr(m) for m in COMPARISON_MODELS), model)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    pao2 = _checks.scalar("po2_mmhg", pao2_mmhg)
    k = _checks.scalar("huefner_ml_g", huefner_ml_g)
    if not states:
        raise InvalidParameter("states", "at least one StatePoint (rest, vt1, vt2 or peak)", list(states))
    table: dict[str, StateConditions] = dict(DEFAULT_CONDITIONS)
    if conditions:
        table.update(conditions)
    rest_conds = table["rest"]

    skipped_by: dict[tuple[str, ...], list[str]] = {}
    for name, conds in [("arterial", arterial_conditions), ("rest", rest_conds)] + [
        (p.name, table[p.name]) for p in states if p.name in table
    ]:
        skipped = tuple(conds.not_applied(model))
        if skipped and name not in skipped_by.setdefault(skipped, []):
            skipped_by[skipped].append(name)
    notes: list[str] = []
    for skipped, names in skipped_by.items():
        why = (
            "this curve takes the CO2 effect through base excess at the given pH; PCO2 is still used for the Haldane figure"
            if skipped == ("pco2_mmhg",)
            else "choose the " + " or ".join(MODEL_LABELS[m] for m in COMPARISON_MODELS if m != model) + " curve to apply it"
        )
        words = ", ".join(_CONDITION_WORDS.get(c, c) for c in skipped)
        where = ", ".join(_STATE_WORDS.get(n, n) for n in names)
        notes.append(f"{words} not applied to the {MODEL_LABELS.get(model, model)} curve for {where} ({why}).")

    results = [
        _one_state(point, table, rest_conds, arterial_conditions, hb=hb, pao2=pao2, spo2_pct=spo2_pct, model=model, k=k)
        for point in states
    ]
    return OxygenComparison(
        states=results,
        hb_g_dl=hb,
        pao2_mmhg=pao2,
        model=model,
        huefner_ml_g=k,
        arterial_conditions=arterial_conditions,
        resting_conditions=rest_conds,
        notes=notes,
    )


def _one_state(
    point: StatePoint,
    table: Mapping[str, StateConditions],
    rest: StateConditions,
    arterial: StateConditions,
    *,
    hb: float,
    pao2: float,
    spo2_pct: float | None,
    model: str,
    k: float,
) -> StateOxygen:
    if point.name not in table:
        raise InvalidParameter(
            "states", f"state names among {', '.join(sorted(table))} (or give conditions for it)", point.name
        )
    conds = table[point.name]
    notes: list[str] = []

    # 1-2. Cardiac output and the Fick a-vO2 difference.
    if point.q_l_min is not None:
        q, q_est, q_method = float(point.q_l_min), False, "measured"
    else:
        if point.pct_vo2_peak is None:
            raise InvalidParameter(
                "pct_vo2_peak",
                f"a percentage of peak VO2 for state '{point.name}' (needed to estimate cardiac output "
                "when no measured q_l_min is given)",
                None,
            )
        q = stringer_cardiac_output_l_min(vo2_ml_min=point.vo2_ml_min, pct_vo2_peak=point.pct_vo2_peak)
        q_est, q_method = True, "stringer1997"
        notes.append(
            "Cardiac output is an ESTIMATE from the Stringer 1997 population equation, so the a-vO2 "
            "difference is that equation's value, not a measurement of this person."
        )
    avo2 = avo2_difference_ml_dl(vo2_ml_min=point.vo2_ml_min, q_l_min=q)
    sv = None if point.hr_bpm is None else stroke_volume_ml(q_l_min=q, hr_bpm=point.hr_bpm)

    # 3. Arterial content.
    spo2 = point.spo2_pct if point.spo2_pct is not None else spo2_pct
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        cao2, sao2, sao2_source = arterial_content_ml_dl(
            hb_g_dl=hb, pao2_mmhg=pao2, spo2_pct=spo2, arterial_conditions=arterial, model=model, huefner_ml_g=k
        )
    for w in caught:
        warnings.warn(w.message, w.category, stacklevel=3)
        notes.append(f"SpO2 {spo2:g} % is below 90 %: a concern; check the probe and arterial blood.")

    # 4. Implied venous values.
    cvo2 = cao2 - avo2
    pv_ex = _venous_po2(cvo2, conds, model=model, hb=hb, k=k)
    pv_rest = _venous_po2(cvo2, rest, model=model, hb=hb, k=k)
    svo2 = None if pv_ex is None else float(saturation(pv_ex, **conds.curve_kwargs(model), model=model))
    max_avo2 = cao2 - _content_on_curve(PVO2_FLOOR_MMHG, conds, model=model, hb=hb, k=k)

    # 5. Decomposition at the exercise-curve venous PO2.
    parts = None
    if pv_ex is not None:
        c_rest = _content_on_curve(pv_ex, rest, model=model, hb=hb, k=k)
        shift = shapley_parts(
            lambda on: c_rest - _content_on_curve(pv_ex, _mixed(rest, conds, on), model=model, hb=hb, k=k),
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

    # 6. Haldane.
    haldane = None
    if svo2 is not None and svo2 < sao2:
        haldane = haldane_extra_co2_ml_dl(
            pco2_mmhg=conds.pco2_mmhg,
            so2_arterial=sao2,
            so2_venous=svo2,
            hb_g_dl=hb,
            base_excess_oxygenated_mmol_l=conds.base_excess_mmol_l,
            temperature_c=conds.temperature_c,
        )

    # Plain-language plausibility notes.
    cause = (
        "The Stringer 1997 estimate was derived in healthy people with normal haemoglobin and does not "
        f"fit this blood (Hb {hb:g} g/dL); cardiac output would need to be measured."
        if q_est
        else "Check VO2, the measured cardiac output and haemoglobin."
    )
    if cvo2 <= 0:
        notes.append(
            f"The a-vO2 difference ({avo2:.1f} mL/dL) is at least the whole arterial content "
            f"({cao2:.1f} mL/dL), which is impossible. {cause}"
        )
    elif avo2 > max_avo2:
        notes.append(
            f"Extraction {avo2:.1f} mL/dL exceeds what the curve allows down to a venous PO2 of "
            f"{PVO2_FLOOR_MMHG:g} mmHg ({max_avo2:.1f} mL/dL). {cause}"
        )
    if pv_ex is not None and pv_ex < PVO2_FLOOR_MMHG:
        notes.append(
            f"Implied venous PO2 {pv_ex:.1f} mmHg is below about {PVO2_FLOOR_MMHG:g} mmHg, lower than "
            "venous blood is usually found even at maximal exercise: implausible."
        )
    elif pv_ex is not None and (pv_rest is None or pv_rest < PVO2_FLOOR_MMHG):
        notes.append(
            "This extraction is plausible only because exercise conditions shift the curve to the right "
            "(on the resting curve the venous PO2 would be implausibly low)."
        )

    return StateOxygen(
        name=point.name,
        vo2_ml_min=float(point.vo2_ml_min),
        hr_bpm=None if point.hr_bpm is None else float(point.hr_bpm),
        pct_vo2_peak=None if point.pct_vo2_peak is None else float(point.pct_vo2_peak),
        q_l_min=q,
        q_estimated=q_est,
        q_method=q_method,
        stroke_volume_ml=sv,
        avo2_ml_dl=avo2,
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
        notes=notes,
    )
