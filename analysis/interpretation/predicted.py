"""Predicted peak VO2, peak HR and peak O2 pulse by the reference set chosen in the settings."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from analysis.errors import InvalidParameter, OutsideDerivationRange
from analysis.interpretation.flags import Flag, flag
from analysis.records import described
from analysis.reference._validate import mode_code, number_in
from analysis.reference.friend import FRIEND_METHOD, friend_vo2max_ml_kg_min
from analysis.reference.hansen1984 import HANSEN_METHOD, hansen1984_hr_max_bpm, hansen1984_vo2max_ml_min
from analysis.reference.heart_rate import tanaka_hr_max_bpm
from analysis.reference.jones1985 import JONES_METHOD, jones1985_hr_max_bpm, jones1985_vo2max_ml_min
from analysis.subject import normalise_sex

ReferenceSet = Literal["friend2018", "hansen1984", "jones1985"]

#: The reference sets a lab can choose (``AnalysisSettings.reference_set``) and their names.
REFERENCE_SETS: dict[str, str] = {
    "friend2018": "FRIEND 2018 (de Souza e Silva et al.) with Tanaka 2001 HRmax",
    "hansen1984": "Hansen, Sue & Wasserman 1984 (from memory)",
    "jones1985": "Jones et al. 1985 (from memory)",
}
#: Short names for tight places (the report's headline cell, the CLI summary).
REFERENCE_SHORT_NAMES: dict[str, str] = {"friend2018": "FRIEND 2018", "hansen1984": "Hansen 1984", "jones1985": "Jones 1985"}
REFERENCE_METHODS: dict[str, str] = {
    "friend2018": f"{FRIEND_METHOD}; HRmax 208 - 0.7·age (Tanaka et al. 2001)",
    "hansen1984": HANSEN_METHOD,
    "jones1985": JONES_METHOD,
}
#: Peak VO2 below this share of predicted is low (ATS/ACCP 2003, from memory: < 85 % predicted).
VO2PEAK_LOW_PCT = 85.0


@dataclass(frozen=True)
class PredictedPeak:
    """Predicted peak values by one named reference set, and the share of them reached."""

    reference_set: str = described(description="`friend2018`, `hansen1984` or `jones1985` (the setting used)")
    reference_name: str = described(description="the set's name, shown beside every % predicted")
    vo2_peak_ml_min: float | None = described(unit="mL/min", description="predicted peak VO2")
    pct_vo2_peak: float | None = described(unit="%", description="measured peak VO2 as % of predicted")
    hr_max_bpm: float | None = described(unit="beats/min", description="predicted peak HR")
    pct_hr_max: float | None = described(unit="%", description="measured peak HR as % of predicted")
    o2_pulse_ml_beat: float | None = described(unit="mL/beat", description="predicted peak O2 pulse = predicted VO2 / predicted HR")
    pct_o2_pulse: float | None = described(unit="%", description="measured O2 pulse at peak as % of predicted")
    note: str = described(default="", description="why a value is not given (age outside the derivation range, mode, missing data)")


def _vo2(reference_set: str, *, age_y: Any, sex: Any, body_mass_kg: Any, height_cm: Any, mode: Any) -> float:
    if reference_set == "hansen1984":
        return hansen1984_vo2max_ml_min(age_y=age_y, sex=sex, body_mass_kg=body_mass_kg, height_cm=height_cm, mode=mode)
    if reference_set == "jones1985":
        return jones1985_vo2max_ml_min(age_y=age_y, sex=sex, height_cm=height_cm, mode=mode)
    return friend_vo2max_ml_kg_min(age_y=age_y, sex=sex, body_mass_kg=body_mass_kg, height_cm=height_cm, mode=mode) * float(body_mass_kg)


def _hr(reference_set: str, *, age_y: Any) -> float:
    if reference_set == "hansen1984":
        return hansen1984_hr_max_bpm(age_y=age_y)
    if reference_set == "jones1985":
        return jones1985_hr_max_bpm(age_y=age_y)
    return tanaka_hr_max_bpm(age_y=age_y)


def predicted_peak(
    reference_set: str,
    *,
    age_y: float | None,
    sex: str | None,
    body_mass_kg: float | None,
    height_cm: float | None,
    mode: str | None,
    vo2_peak_ml_min: float,
    hr_peak_bpm: float | None,
    o2_pulse_peak_ml_beat: float | None,
) -> PredictedPeak:
    """Predicted peak VO2, HR and O2 pulse by ``reference_set``; refused values come with a note.

    Parameters
    ----------
    reference_set : {'friend2018', 'hansen1984', 'jones1985'}
    age_y, sex, body_mass_kg, height_cm, mode : keyword-only
        The subject and test; ``None`` when not recorded.
    vo2_peak_ml_min, hr_peak_bpm, o2_pulse_peak_ml_beat : keyword-only
        Measured peak values.

    Returns
    -------
    PredictedPeak
        Never extrapolated: an age outside an equation's derivation range gives ``None`` values
        and a note saying so.

    References
    ----------
    de Souza e Silva CG et al. Eur J Prev Cardiol 2018;25:742-750. Hansen JE, Sue DY, Wasserman K.
    Am Rev Respir Dis 1984;129:S49-S55 (from memory). Jones NL et al. Am Rev Respir Dis
    1985;131:700-708 (from memory). Tanaka H et al. J Am Coll Cardiol 2001;37:153-156 (from memory).
    """
    if reference_set not in REFERENCE_SETS:
        raise InvalidParameter("reference_set", f"one of {', '.join(REFERENCE_SETS)}", reference_set)
    # impossible inputs are refused; a person or test outside an equation's derivation is a note
    for name, v, low, high, unit in (("age_y", age_y, 5, 110, "years"), ("body_mass_kg", body_mass_kg, 20, 300, "kg"),
                                     ("height_cm", height_cm, 120, 230, "cm")):
        if v is not None:
            number_in(name, v, low, high, unit)
    number_in("vo2_peak_ml_min", vo2_peak_ml_min, 1, 10000, "mL/min")
    for name, v in (("hr_peak_bpm", hr_peak_bpm), ("o2_pulse_peak_ml_beat", o2_pulse_peak_ml_beat)):
        if v is not None:
            number_in(name, v, 0.1, 260, "")
    sex_code = normalise_sex(sex)
    if mode is not None:
        mode_code(mode)
    notes: list[str] = []
    vo2 = hr = None
    missing = [n for n, v in (("age", age_y), ("sex (male or female)", sex_code if sex_code != "other" else None),
                              ("height", height_cm), ("mode", mode)) if v is None]
    if reference_set != "jones1985" and body_mass_kg is None:
        missing.append("body mass")
    if missing:
        notes.append(f"Predicted peak VO2 not given: it needs {', '.join(missing)}.")
    else:
        try:
            vo2 = _vo2(reference_set, age_y=age_y, sex=sex, body_mass_kg=body_mass_kg, height_cm=height_cm, mode=mode)
        except OutsideDerivationRange as exc:
            notes.append(f"Predicted peak VO2 not given: {exc}")
    if age_y is None:
        notes.append("Predicted peak HR not given: it needs the age.")
    else:
        try:
            hr = _hr(reference_set, age_y=age_y)
        except OutsideDerivationRange as exc:
            notes.append(f"Predicted peak HR not given: {exc}")
    pulse = vo2 / hr if vo2 is not None and hr else None
    return PredictedPeak(
        reference_set=reference_set,
        reference_name=REFERENCE_SETS[reference_set],
        vo2_peak_ml_min=vo2,
        pct_vo2_peak=100.0 * vo2_peak_ml_min / vo2 if vo2 else None,
        hr_max_bpm=hr,
        pct_hr_max=100.0 * hr_peak_bpm / hr if hr and hr_peak_bpm else None,
        o2_pulse_ml_beat=pulse,
        pct_o2_pulse=100.0 * o2_pulse_peak_ml_beat / pulse if pulse and o2_pulse_peak_ml_beat else None,
        note=" ".join(notes),
    )


def vo2peak_flag(predicted: PredictedPeak) -> Flag | None:
    """``vo2peak_low`` when peak VO2 is below 85 % of the chosen set's prediction."""
    if predicted.pct_vo2_peak is None or predicted.pct_vo2_peak >= VO2PEAK_LOW_PCT:
        return None
    return flag(
        "vo2peak_low", severity="abnormal",
        text=f"Peak VO2 {predicted.pct_vo2_peak:.0f} % of predicted ({predicted.reference_name}).",
        value=predicted.pct_vo2_peak, unit="% predicted", limit=f"< {VO2PEAK_LOW_PCT:g} % predicted",
        source=f"ATS/ACCP 2003 (from memory); prediction {predicted.reference_name}",
    )
