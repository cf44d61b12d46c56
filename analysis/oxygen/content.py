"""Blood oxygen content: oxygen bound to haemoglobin plus oxygen dissolved in plasma."""

from __future__ import annotations

import warnings

import numpy as np

from analysis.errors import DataQualityWarning, InvalidParameter
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
) -> float | np.ndarray:
    """Oxygen content of blood in mL O2 per dL.

    Parameters
    ----------
    saturation : float or array_like
        Haemoglobin oxygen saturation, fraction 0-1.
    po2_mmhg : float or array_like
        Oxygen partial pressure in mmHg (for the dissolved part).
    hb_g_dl : float
        Haemoglobin concentration in g/dL (3-25).
    huefner_ml_g : float, default 1.34
        Oxygen bound per gram of fully saturated haemoglobin, mL/g (1.30-1.40).

    Returns
    -------
    float or numpy.ndarray
        C = k * Hb * S + 0.0031 * PO2, mL O2/dL.

    Raises
    ------
    InvalidParameter
        Saturation outside 0-1, negative PO2, Hb or Hüfner factor out of range.

    References
    ----------
    Common practice (physiology textbooks): CaO2 = k Hb SaO2 + 0.0031 PaO2, k 1.34-1.39 mL/g.

    Examples
    --------
    >>> round(o2_content_ml_dl(saturation=0.98, po2_mmhg=95.0, hb_g_dl=15.0), 2)
    19.99
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    k = _checks.scalar("huefner_ml_g", huefner_ml_g)
    sat = np.asarray(saturation, dtype=float)
    if np.any(~np.isfinite(sat) | (sat < 0.0) | (sat > 1.0)):
        raise InvalidParameter("saturation", "a fraction from 0 to 1 (e.g. 0.97, not 97)", saturation)
    po2 = _checks.array("po2_mmhg", po2_mmhg)
    out = k * hb * sat + O2_SOLUBILITY_ML_DL_MMHG * po2
    if np.ndim(saturation) == 0 and np.ndim(po2_mmhg) == 0:
        return float(out)
    return out


def saturation_from_spo2(spo2_pct: float) -> float:
    """Arterial saturation fraction from a pulse-oximeter reading in percent.

    Warns with :class:`~analysis.errors.DataQualityWarning` below 90 % (common practice: a
    reading below 90 % is a concern and needs checking against arterial blood).

    Raises
    ------
    InvalidParameter
        SpO2 outside 50-100 % (a fraction such as 0.97 is refused: give percent).
    """
    value = _checks.scalar("spo2_pct", spo2_pct)
    if value < SPO2_CONCERN_PCT:
        warnings.warn(
            f"SpO2 {value:g} % is below {SPO2_CONCERN_PCT:g} %: arterial desaturation or a poor "
            "oximeter signal; check probe position and, where available, arterial blood.",
            DataQualityWarning,
            stacklevel=2,
        )
    return value / 100.0
