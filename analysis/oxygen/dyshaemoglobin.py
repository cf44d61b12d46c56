"""Carbon monoxide and methaemoglobin: lost O2 capacity and the left shift of what remains.

Model (Haldane's second law with the Roughton-Darling treatment; the same idea underlies
Siggaard-Andersen's oxygen status algorithm, 1990 — from memory):

* Methaemoglobin carries neither O2 nor CO; the binding haem is the fraction 1 - FMetHb.
* Of the binding haem, a share f = FCOHb / (1 - FMetHb) holds CO. CO and O2 compete for the
  same sites, and the TOTAL occupancy y = yO2 + yCO follows the ordinary dissociation curve
  at an effective pressure PO2 + M PCO. Because yCO / yO2 = M PCO / PO2 at equilibrium, the
  effective pressure is PO2 y / (y - f), and y solves

      y = S(PO2 y / (y - f))

  where S is the person's curve under the blood's conditions.
* The functional saturation of the haemoglobin free to carry O2 is (y - f) / (1 - f).

Bound CO occupies sites that already count as "liganded", so the remaining haem binds O2
more tightly (the curve shifts left): at a low capillary PO2 CO-poisoned blood gives up less of
the O2 it still carries. Methaemoglobin's own left shift is not modelled (its capacity loss
is).

Pulse oximeters read COHb as oxyhaemoglobin (common practice): with COHb present SpO2
overstates the O2 that blood carries.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from analysis.oxygen import _checks
from analysis.oxygen.content import free_haemoglobin_fraction
from analysis.oxygen.curves import _Curve, _curve_of, _saturation, _saturation_at


def co_share(*, cohb_fraction: float, methb_fraction: float = 0.0) -> float:
    """Share of the binding (non-Met) haem that holds CO: FCOHb / (1 - FMetHb).

    Examples
    --------
    >>> co_share(cohb_fraction=0.10)
    0.1
    """
    free_haemoglobin_fraction(cohb_fraction=cohb_fraction, methb_fraction=methb_fraction)
    return float(cohb_fraction) / (1.0 - float(methb_fraction))


def _functional_saturation_at(po2: float, curve: _Curve, share: float, scale: float = 1.0) -> float:
    """Functional SO2 at one PO2 on a validated curve with a CO share and an affinity scale.

    ``scale`` multiplies the PO2 before the curve is read (a virtual PO2): 26.8 / P50 turns
    the standard curve into one with that standard P50, keeping its shifts.
    """
    p = float(po2) * scale
    if p <= 0.0:
        return 0.0
    if share <= 0.0:
        return _saturation_at(p, curve)

    def gap(y: float) -> float:
        # effective pressure PO2 y / (y - f), capped where every curve is saturated (keeps it finite)
        return y - _saturation_at(min(p * y / (y - share), 1e5), curve)

    lo = share + 1e-12
    if gap(1.0) <= 0.0:
        return 1.0
    y = float(brentq(gap, lo, 1.0, xtol=1e-13, rtol=1e-13))
    return (y - share) / (1.0 - share)


def functional_saturation(
    po2_mmhg: float | np.ndarray,
    *,
    cohb_fraction: float = 0.0,
    methb_fraction: float = 0.0,
    ph: float = 7.40,
    temperature_c: float = 37.0,
    pco2_mmhg: float = 40.0,
    dpg_mmol_l: float = 5.0,
    base_excess_mmol_l: float = 0.0,
    model: str = "severinghaus",
    p50_mmhg: float | None = None,
    hill_n: float | None = None,
) -> float | np.ndarray:
    """Functional O2 saturation of the haemoglobin free to carry O2, with CO on the rest.

    Parameters
    ----------
    po2_mmhg : float or array_like
        PO2, mmHg.
    cohb_fraction, methb_fraction : float, default 0.0
        Carboxy- and methaemoglobin as fractions of total Hb.
    ph, temperature_c, pco2_mmhg, dpg_mmol_l, base_excess_mmol_l, model, p50_mmhg, hill_n
        The curve, as in :func:`analysis.oxygen.saturation`.

    Returns
    -------
    float or numpy.ndarray
        O2Hb / (Hb - COHb - MetHb), fraction 0-1. Equals :func:`analysis.oxygen.saturation`
        when both fractions are 0.

    Notes
    -----
    See the module notes: total occupancy y = S(PO2 y / (y - f)), f = FCOHb / (1 - FMetHb),
    functional saturation (y - f) / (1 - f).

    References
    ----------
    Roughton FJW, Darling RC (1944). The effect of carbon monoxide on the oxyhemoglobin
    dissociation curve. Am J Physiol 141:17-31 (from memory).
    Siggaard-Andersen O, Wimberley PD, Fogh-Andersen N, Gøthgen IH (1990). Oxygen status
    algorithm. Scand J Clin Lab Invest 50(Suppl 203) (from memory).

    Examples
    --------
    >>> round(functional_saturation(40.0), 3)
    0.749
    >>> round(functional_saturation(40.0, cohb_fraction=0.2), 3)
    0.83
    """
    curve = _curve_of(locals())
    share = co_share(cohb_fraction=cohb_fraction, methb_fraction=methb_fraction)
    po2 = np.atleast_1d(_checks.array("po2_mmhg", po2_mmhg)).astype(float)
    exact = [_functional_saturation_at(p, curve, share) for p in po2.ravel()] if share else None
    out = _saturation(po2, curve) if exact is None else np.array(exact)
    return _checks.as_output(out.reshape(np.shape(po2_mmhg)), po2_mmhg)


def curve_table(
    curve: _Curve, *, share: float, scale: float = 1.0, p_low_mmhg: float = 0.5, p_high_mmhg: float = 800.0, n: int = 3000
) -> tuple[np.ndarray, np.ndarray]:
    """PO2 grid (mmHg) and functional saturation on it, vectorised and exact at the grid points.

    With CO the grid is built on the effective pressure: for each effective PO2 the total
    occupancy y = S(effective) is read once, and the real PO2 = effective (y - f) / y follows
    directly (no root finding); points with y <= f are dropped. Returns increasing arrays.
    """
    eff = np.geomspace(p_low_mmhg, p_high_mmhg * (1.0 + 4.0 * share), n)
    y = _saturation(eff * scale, curve)
    if share <= 0.0:
        return eff, y
    keep = y > share + 1e-9
    eff, y = eff[keep], y[keep]
    po2 = eff * (y - share) / y
    sat = (y - share) / (1.0 - share)
    keep = po2 >= p_low_mmhg * 0.5
    return po2[keep], sat[keep]
