"""Blood oxygen content: oxygen bound to haemoglobin plus oxygen dissolved in plasma."""

from __future__ import annotations

import numpy as np

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks

#: Hüfner factor used by default, mL O2 per g Hb (common practice: 1.34; sources use 1.34-1.39).
DEFAULT_HUEFNER_ML_G = 1.34

#: Dissolved oxygen, mL O2 per dL blood per mmHg (common practice, 0.0031 at 37 °C).
O2_SOLUBILITY_ML_DL_MMHG = 0.0031

#: SpO2 below this (%) is a concern (common practice).
SPO2_CONCERN_PCT = 90.0


def o2_content_ml_dl(
    *,
    saturation: float | np.ndarray,
    po2_mmhg: float | np.ndarray,
    hb_g_dl: float,
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
    cohb_fraction: float = 0.0,
    methb_fraction: float = 0.0,
) -> float | np.ndarray:
    """Oxygen content of blood in mL O2 per dL.

    Parameters
    ----------
    saturation : float or array_like
        FUNCTIONAL O2 saturation of the haemoglobin free to carry O2 (neither bound to carbon
        monoxide nor oxidised to methaemoglobin), fraction 0-1. Without dyshaemoglobins this
        is the ordinary SO2.
    po2_mmhg : float or array_like
        Oxygen partial pressure in mmHg (for the dissolved part).
    hb_g_dl : float
        Haemoglobin concentration in g/dL (3-25).
    huefner_ml_g : float, default 1.34
        Oxygen bound per gram of fully saturated haemoglobin, mL/g (1.30-1.40).
    cohb_fraction, methb_fraction : float, default 0.0
        Carboxyhaemoglobin and methaemoglobin as fractions of total Hb (0-0.6 each, e.g. 0.10
        for 10 %). They carry no O2. Their left shift of the remaining haemoglobin's curve is
        a matter of the saturation passed in (see
        :func:`analysis.oxygen.dyshaemoglobin.functional_saturation`).

    Returns
    -------
    float or numpy.ndarray
        C = k Hb (1 - FCOHb - FMetHb) S + 0.0031 PO2, mL O2/dL.

    Raises
    ------
    InvalidParameter
        Saturation outside 0-1, negative PO2, Hb or Hüfner factor out of range, dyshaemoglobin
        fractions out of range or adding up to 1 or more.

    References
    ----------
    Common practice (physiology textbooks): CaO2 = k Hb SaO2 + 0.0031 PaO2, k 1.34-1.39 mL/g.
    Siggaard-Andersen O, Wimberley PD, Fogh-Andersen N, Gøthgen IH (1990). Oxygen status
    algorithm. Scand J Clin Lab Invest 50(Suppl 203) (functional saturation and
    dyshaemoglobins; from memory).

    Examples
    --------
    >>> round(o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0), 2)
    19.99
    >>> round(o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0, cohb_fraction=0.20), 2)
    16.05
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    k = _checks.scalar("huefner_ml_g", huefner_ml_g)
    free = free_haemoglobin_fraction(cohb_fraction=cohb_fraction, methb_fraction=methb_fraction)
    sat = np.asarray(saturation, dtype=float)
    if np.any(~np.isfinite(sat) | (sat < 0.0) | (sat > 1.0)):
        raise InvalidParameter("saturation", "a fraction from 0 to 1 (e.g. 0.97, not 97)", saturation)
    po2 = _checks.array("po2_mmhg", po2_mmhg)
    out = k * hb * free * sat + O2_SOLUBILITY_ML_DL_MMHG * po2
    if np.ndim(saturation) == 0 and np.ndim(po2_mmhg) == 0:
        return float(out)
    return out


def free_haemoglobin_fraction(*, cohb_fraction: float = 0.0, methb_fraction: float = 0.0) -> float:
    """Fraction of total haemoglobin free to carry O2: 1 - FCOHb - FMetHb (validated).

    Examples
    --------
    >>> free_haemoglobin_fraction(cohb_fraction=0.1, methb_fraction=0.02)
    0.88
    """
    co = _checks.scalar("cohb_fraction", cohb_fraction)
    met = _checks.scalar("methb_fraction", methb_fraction)
    if co + met >= 0.95:
        raise InvalidParameter(
            "cohb_fraction + methb_fraction", "below 0.95 together (some haemoglobin must carry O2)", co + met
        )
    return round(1.0 - co - met, 12)


def saturation_from_spo2(spo2_pct: float) -> float:
    """Arterial saturation fraction from a pulse-oximeter reading in percent.

    A reading below 90 % is a concern (common practice): :func:`spo2_note` gives the note to
    return beside the result.

    Raises
    ------
    InvalidParameter
        SpO2 outside 50-100 % (a fraction such as 0.97 is refused: give percent).

    Examples
    --------
    >>> saturation_from_spo2(97.0)
    0.97
    """
    return _checks.scalar("spo2_pct", spo2_pct) / 100.0


def spo2_note(spo2_pct: float) -> str | None:
    """The note on a low pulse-oximeter reading (below 90 %, common practice), else ``None``.

    Examples
    --------
    >>> spo2_note(97.0) is None
    True
    >>> spo2_note(86.0).startswith("SpO2 86 % is below 90 %")
    True
    """
    value = _checks.scalar("spo2_pct", spo2_pct)
    if value >= SPO2_CONCERN_PCT:
        return None
    return (
        f"SpO2 {value:g} % is below {SPO2_CONCERN_PCT:g} %: a concern (arterial desaturation or a poor oximeter "
        "signal); check the probe and, where available, arterial blood."
    )
