"""Oxygen the dissociation curve lets blood give up between arterial blood and a venous PO2."""

from __future__ import annotations

import numpy as np

from analysis.oxygen import _checks
from analysis.oxygen.content import DEFAULT_HUEFNER_ML_G, o2_content_ml_dl, saturation_from_spo2, spo2_note
from analysis.oxygen.curves import saturation
from analysis.oxygen.states import ARTERIAL_CONDITIONS, StateConditions


def arterial_content_ml_dl(
    *,
    hb_g_dl: float,
    pao2_mmhg: float = 95.0,
    spo2_pct: float | None = None,
    arterial_conditions: StateConditions = ARTERIAL_CONDITIONS,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
) -> tuple[float, float, str, tuple[str, ...]]:
    """Arterial O2 content (mL/dL), the saturation used, where it came from, and notes.

    SaO2 comes from ``spo2_pct`` when given (a note below 90 %), else from ``pao2_mmhg`` on the
    curve at ``arterial_conditions``.

    Returns
    -------
    (cao2_ml_dl, sao2, source, notes)
        ``source`` is ``"spo2"`` or ``"curve"``.
    """
    pao2 = _checks.scalar("po2_mmhg", pao2_mmhg)
    notes: tuple[str, ...] = ()
    if spo2_pct is not None:
        sao2, source = saturation_from_spo2(spo2_pct), "spo2"
        low = spo2_note(spo2_pct)
        notes = (low,) if low else ()
    else:
        arterial = arterial_conditions.resolved(hb_g_dl=hb_g_dl)
        sao2 = float(saturation(pao2, **arterial.curve_kwargs(model), model=model))
        source = "curve"
    cao2 = float(o2_content_ml_dl(saturation=sao2, po2_mmhg=pao2, hb_g_dl=hb_g_dl, huefner_ml_g=huefner_ml_g))
    return cao2, sao2, source, notes


def curve_unloading_ml_dl(
    pvo2_mmhg: float | np.ndarray,
    *,
    conditions: StateConditions,
    hb_g_dl: float,
    pao2_mmhg: float = 95.0,
    spo2_pct: float | None = None,
    arterial_conditions: StateConditions = ARTERIAL_CONDITIONS,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
) -> float | np.ndarray:
    """Arterial minus venous O2 content (mL/dL) when venous blood under ``conditions`` is at ``pvo2_mmhg``.

    Call it with the resting conditions and with a state's exercise conditions to see how much
    more oxygen the right-shifted curve releases at the same venous PO2.

    Parameters
    ----------
    pvo2_mmhg : float or array_like
        Venous PO2, mmHg (vectorised).
    conditions : StateConditions
        Venous blood conditions (e.g. ``DEFAULT_CONDITIONS["peak"]``).
    hb_g_dl, pao2_mmhg, spo2_pct, arterial_conditions, model, huefner_ml_g
        As in :func:`analysis.oxygen.oxygen_comparison`.

    Returns
    -------
    float or numpy.ndarray
        CaO2 - CvO2, mL O2/dL (a model estimate).

    References
    ----------
    Severinghaus JW (1979). J Appl Physiol 46:599-602.
    Siggaard-Andersen O et al. (1984). Clin Chem 30:1646-1651.

    Examples
    --------
    >>> from analysis.oxygen import DEFAULT_CONDITIONS
    >>> round(curve_unloading_ml_dl(40.0, conditions=DEFAULT_CONDITIONS["rest"], hb_g_dl=15.0), 1)
    5.1
    """
    cao2, _, _, _ = arterial_content_ml_dl(
        hb_g_dl=hb_g_dl,
        pao2_mmhg=pao2_mmhg,
        spo2_pct=spo2_pct,
        arterial_conditions=arterial_conditions,
        model=model,
        huefner_ml_g=huefner_ml_g,
    )
    venous = conditions.resolved(hb_g_dl=hb_g_dl)  # any two of pH, PCO2, base excess given
    sv = saturation(pvo2_mmhg, **venous.curve_kwargs(model), model=model)
    cv = o2_content_ml_dl(saturation=sv, po2_mmhg=pvo2_mmhg, hb_g_dl=hb_g_dl, huefner_ml_g=huefner_ml_g)
    out = cao2 - np.asarray(cv)
    return float(out) if np.ndim(pvo2_mmhg) == 0 else out
