"""Reference values and functional classes of one test as records, and the step computing them."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from analysis.errors import TidemarkError
from analysis.records import described
from analysis.reference._validate import mode_code, number_in
from analysis.reference.classes import (
    VENTILATORY_CLASS_METHOD,
    WEBER_CLASS_METHOD,
    ventilatory_class,
    weber_class,
)
from analysis.reference.friend import FRIEND_METHOD, friend_vo2max_ml_kg_min, pct_predicted
from analysis.reference.heart_rate import TANAKA_METHOD, tanaka_hr_max_bpm
from analysis.subject import normalise_sex, reference_sex


@dataclass(frozen=True)
class ReferenceValues:
    """Predicted values and the share of them reached (population estimates)."""

    vo2max_friend_ml_kg_min: float | None = described(
        default=None, unit="mL/kg/min",
        description="FRIEND: 45.2 - 0.35·age - 10.9·sex(m 1, f 2) - 0.15·weight(lb) + 0.68·height(in) - "
        "0.46·mode(treadmill 1, cycle 2); SEE 6.6. Needs age, sex, mass, height and mode",
        method="de Souza e Silva et al. 2018",
    )
    pct_predicted_vo2max: float | None = described(
        default=None, unit="%", description="100 · `vo2_peak_ml_kg_min` / `vo2max_friend_ml_kg_min`"
    )
    hr_max_tanaka_bpm: float | None = described(
        default=None, unit="beats/min", description="208 - 0.7·age", method="Tanaka et al. 2001, from memory"
    )
    pct_predicted_hr_max: float | None = described(
        default=None, unit="%", description="100 · `hr_peak_bpm` / `hr_max_tanaka_bpm`"
    )


@dataclass(frozen=True)
class Classes:
    """Functional classes (population categories, not diagnoses)."""

    weber: str | None = described(
        default=None, description="A > 20, B 16–20, C 10 to < 16, D < 10 mL/kg/min (16 placed in B, 10 in C)",
        method="Weber & Janicki 1985, from memory",
    )
    ventilatory: str | None = described(
        default=None, description="I ≤ 29.9, II 30.0–35.9, III 36.0–44.9, IV ≥ 45.0, read from `ventilatory_slope`",
        method="Arena et al. 2007",
    )
    ventilatory_slope: float | None = described(
        default=None, description="the VE/VCO2 slope the ventilatory class was read from (show the class beside it)"
    )
    ventilatory_slope_span: str = described(
        default="whole_exercise",
        description="span of that slope: `whole_exercise` (Arena et al. 2007 computed the slope from all exercise data, "
        "from memory)",
    )


def _safe_class(fn: Callable[[float], str], x: float) -> str | None:
    try:
        return fn(x)
    except TidemarkError:
        return None


def reference_values(
    *,
    age_y: float | None,
    sex: str | None,
    body_mass_kg: float | None,
    height_cm: float | None,
    mode: str | None,
    vo2_peak_ml_kg_min: float | None,
    hr_peak_bpm: float | None,
    ve_vco2_slope_whole_exercise: float | None,
) -> tuple[ReferenceValues, Classes, tuple[str, ...]]:
    """Predicted VO2max (FRIEND) and maximal HR (Tanaka), % reached, and the Weber and ventilatory classes.

    Parameters
    ----------
    age_y, sex, body_mass_kg, height_cm, mode : keyword-only
        The subject's metadata (each may be missing: the values needing it are then ``None``).
    vo2_peak_ml_kg_min, hr_peak_bpm : float or None, keyword-only
        Peak values of the test.
    ve_vco2_slope_whole_exercise : float or None, keyword-only
        The slope the ventilatory class is read from (Arena et al. 2007 classed patients by the
        slope over all exercise data, from memory).

    Returns
    -------
    (ReferenceValues, Classes, tuple of str)
        The records and notes on what was not given and why.

    Raises
    ------
    InvalidParameter
        A value given but outside its plausible range (age 5-110 years, body mass 20-300 kg,
        height 100-250 cm, ...), an unknown spelling of sex or mode.

    References
    ----------
    de Souza e Silva CG, et al. Am J Cardiol 2018 (FRIEND). Tanaka H, et al. J Am Coll Cardiol
    2001. Weber KT, Janicki JS. Am J Cardiol 1985. Arena R, et al. Circulation 2007;115:2410-2417.
    """
    for name, value, low, high, unit in (
        ("age_y", age_y, 5, 110, "years"),
        ("body_mass_kg", body_mass_kg, 20, 300, "kg"),
        ("height_cm", height_cm, 100, 250, "cm"),
        ("vo2_peak_ml_kg_min", vo2_peak_ml_kg_min, 0, 120, "mL/kg/min"),
        ("hr_peak_bpm", hr_peak_bpm, 20, 260, "beats/min"),
        ("ve_vco2_slope_whole_exercise", ve_vco2_slope_whole_exercise, 0, 200, ""),
    ):
        if value is not None:
            number_in(name, value, low, high, unit)
    if sex is not None:
        normalise_sex(sex)
    if mode is not None:
        mode_code(mode)
    notes: list[str] = []
    friend = pct_vo2 = hr_pred = pct_hr = None
    missing = [
        n
        for n, v in (("age", age_y), ("sex", sex), ("body mass", body_mass_kg), ("height", height_cm), ("mode", mode))
        if v is None
    ]
    if not missing and age_y is not None and body_mass_kg is not None and height_cm is not None and mode is not None:
        try:
            friend = friend_vo2max_ml_kg_min(
                age_y=age_y, sex=reference_sex(sex), body_mass_kg=body_mass_kg, height_cm=height_cm, mode=mode
            )
            if vo2_peak_ml_kg_min is not None and friend > 0:
                pct_vo2 = pct_predicted(vo2_peak_ml_kg_min, friend)
        except TidemarkError as exc:
            friend = None
            notes.append(f"Predicted VO2max not given: {exc}")
    else:
        notes.append("Predicted VO2max (FRIEND) not given: missing " + ", ".join(missing) + ".")
    if age_y is not None:
        try:
            hr_pred = tanaka_hr_max_bpm(age_y=age_y)
            if hr_peak_bpm is not None:
                pct_hr = pct_predicted(hr_peak_bpm, hr_pred)
        except TidemarkError as exc:
            notes.append(f"Predicted maximal heart rate not given: {exc}")
    classes = Classes(
        weber=_safe_class(weber_class, vo2_peak_ml_kg_min) if vo2_peak_ml_kg_min is not None else None,
        ventilatory=(
            _safe_class(ventilatory_class, ve_vco2_slope_whole_exercise)
            if ve_vco2_slope_whole_exercise is not None
            else None
        ),
        ventilatory_slope=ve_vco2_slope_whole_exercise,
        ventilatory_slope_span="whole_exercise",
    )
    return ReferenceValues(friend, pct_vo2, hr_pred, pct_hr), classes, tuple(notes)


def reference_methods() -> dict[str, str]:
    """The reader-facing method sentences of this step (``methods`` entries)."""
    return {
        "predicted_vo2max": FRIEND_METHOD,
        "hr_max_predicted": TANAKA_METHOD,
        "weber_class": WEBER_CLASS_METHOD,
        "ventilatory_class": VENTILATORY_CLASS_METHOD,
    }
