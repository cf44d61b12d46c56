"""Blood acid-base state: any two of pH, PCO2 and base excess give the third (Van Slyke equation).

The project uses one relation between pH, PCO2 and base excess everywhere (the curve
conditions, the Haldane figure and the CO2 carriage split), so that all of them describe the
same blood:

    BE = (1 - 0.014 Hb) [(HCO3 - 24.8) + (1.43 Hb + 7.7)(pH - 7.4)],
    HCO3 = 0.0307 PCO2 10^(pH - 6.1)

(Van Slyke equation as given by Siggaard-Andersen 1977; Hb in g/dL, HCO3 in mmol/L; from
memory). Given pH and PCO2 it is explicit for BE; given pH and BE it is explicit for PCO2;
given PCO2 and BE it is solved for pH (BE rises monotonically with pH at fixed PCO2).
"""

from __future__ import annotations

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks

#: Plasma CO2 solubility at 37 °C used by the Van Slyke equation, mmol/L/mmHg (common practice).
VAN_SLYKE_SOLUBILITY = 0.0307
#: pK of plasma carbonic acid in the Van Slyke equation (common practice).
VAN_SLYKE_PK = 6.1


def bicarbonate_mmol_l(*, ph: float, pco2_mmhg: float) -> float:
    """Plasma bicarbonate (mmol/L) from pH and PCO2 (Henderson-Hasselbalch, pK 6.1, s 0.0307).

    References
    ----------
    Henderson-Hasselbalch equation (common practice).

    Examples
    --------
    >>> round(bicarbonate_mmol_l(ph=7.40, pco2_mmhg=40.0), 1)
    24.5
    """
    ph = _checks.scalar("ph", ph)
    pco2 = _checks.scalar("pco2_mmhg", pco2_mmhg)
    return VAN_SLYKE_SOLUBILITY * pco2 * 10.0 ** (ph - VAN_SLYKE_PK)


def base_excess_mmol_l(*, ph: float, pco2_mmhg: float, hb_g_dl: float) -> float:
    """Blood base excess (mmol/L) from pH, PCO2 and Hb (Van Slyke equation).

    Parameters
    ----------
    ph : float
        Plasma pH (measured at 37 °C).
    pco2_mmhg : float
        PCO2, mmHg.
    hb_g_dl : float
        Haemoglobin, g/dL.

    Returns
    -------
    float
        Base excess, mmol/L.

    References
    ----------
    Siggaard-Andersen O (1977). The Van Slyke equation. Scand J Clin Lab Invest 37(Suppl
    146):15-20 (from memory).

    Examples
    --------
    >>> round(base_excess_mmol_l(ph=7.20, pco2_mmhg=62.0, hb_g_dl=15.0), 2)
    -5.27
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    hco3 = bicarbonate_mmol_l(ph=ph, pco2_mmhg=pco2_mmhg)
    return (1.0 - 0.014 * hb) * ((hco3 - 24.8) + (1.43 * hb + 7.7) * (float(ph) - 7.4))


def pco2_from_ph_base_excess_mmhg(*, ph: float, base_excess_mmol_l: float, hb_g_dl: float) -> float:
    """PCO2 (mmHg) of blood with this pH, base excess and Hb (Van Slyke equation solved for PCO2).

    Raises
    ------
    InvalidParameter
        When no positive PCO2 gives this pH and base excess.

    References
    ----------
    Siggaard-Andersen O (1977). Scand J Clin Lab Invest 37(Suppl 146):15-20 (from memory).

    Examples
    --------
    >>> round(pco2_from_ph_base_excess_mmhg(ph=7.20, base_excess_mmol_l=-5.27, hb_g_dl=15.0), 1)
    62.0
    """
    ph = _checks.scalar("ph", ph)
    be = _checks.scalar("base_excess_mmol_l", base_excess_mmol_l)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    hco3 = be / (1.0 - 0.014 * hb) + 24.8 - (1.43 * hb + 7.7) * (ph - 7.4)
    if hco3 <= 0:
        raise InvalidParameter(
            "base_excess_mmol_l", f"a base excess that leaves positive bicarbonate at pH {ph:g}", base_excess_mmol_l
        )
    pco2 = hco3 / (VAN_SLYKE_SOLUBILITY * 10.0 ** (ph - VAN_SLYKE_PK))
    return _checks.scalar("pco2_mmhg", pco2)


def ph_from_pco2_base_excess(*, pco2_mmhg: float, base_excess_mmol_l: float, hb_g_dl: float) -> float:
    """Plasma pH of blood with this PCO2, base excess and Hb (Van Slyke equation solved for pH).

    Base excess rises monotonically with pH at fixed PCO2, so the equation is solved by bisection
    between pH 6.5 and 8.1.

    References
    ----------
    Siggaard-Andersen O (1977). Scand J Clin Lab Invest 37(Suppl 146):15-20 (from memory).

    Examples
    --------
    >>> round(ph_from_pco2_base_excess(pco2_mmhg=62.0, base_excess_mmol_l=-10.0, hb_g_dl=15.0), 3)
    7.125
    """
    pco2 = _checks.scalar("pco2_mmhg", pco2_mmhg)
    be = _checks.scalar("base_excess_mmol_l", base_excess_mmol_l)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)

    def base_excess_at(ph: float) -> float:
        hco3 = VAN_SLYKE_SOLUBILITY * pco2 * 10.0 ** (ph - VAN_SLYKE_PK)
        return (1.0 - 0.014 * hb) * ((hco3 - 24.8) + (1.43 * hb + 7.7) * (ph - 7.4))

    lo, hi = 6.5, 8.1
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if base_excess_at(mid) > be:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)


def complete_blood_gas(
    *,
    hb_g_dl: float,
    ph: float | None = None,
    pco2_mmhg: float | None = None,
    base_excess_mmol_l: float | None = None,
) -> tuple[float, float, float]:
    """Fill in the one missing value of (pH, PCO2, base excess) by the Van Slyke equation.

    Parameters
    ----------
    hb_g_dl : float
        Haemoglobin, g/dL.
    ph, pco2_mmhg, base_excess_mmol_l : float or None
        Give at least two. When all three are given they are returned as given (a measured
        blood gas); :func:`van_slyke_gap_ph` says how far they are from the relation.

    Returns
    -------
    (ph, pco2_mmhg, base_excess_mmol_l)

    Raises
    ------
    InvalidParameter
        Fewer than two values given.

    Examples
    --------
    >>> tuple(round(v, 3) for v in complete_blood_gas(hb_g_dl=15.0, pco2_mmhg=62.0, base_excess_mmol_l=-10.0))
    (7.125, 62.0, -10.0)
    """
    given = [v is not None for v in (ph, pco2_mmhg, base_excess_mmol_l)]
    if sum(given) < 2:
        raise InvalidParameter(
            "ph, pco2_mmhg, base_excess_mmol_l", "at least two of the three (the third follows from them)",
            (ph, pco2_mmhg, base_excess_mmol_l),
        )
    if ph is None:
        assert pco2_mmhg is not None and base_excess_mmol_l is not None
        ph = ph_from_pco2_base_excess(pco2_mmhg=pco2_mmhg, base_excess_mmol_l=base_excess_mmol_l, hb_g_dl=hb_g_dl)
    elif pco2_mmhg is None:
        assert base_excess_mmol_l is not None
        pco2_mmhg = pco2_from_ph_base_excess_mmhg(ph=ph, base_excess_mmol_l=base_excess_mmol_l, hb_g_dl=hb_g_dl)
    elif base_excess_mmol_l is None:
        base_excess_mmol_l = base_excess_mmol_l_checked(ph=ph, pco2_mmhg=pco2_mmhg, hb_g_dl=hb_g_dl)
    return float(ph), float(pco2_mmhg), float(base_excess_mmol_l)


def base_excess_mmol_l_checked(*, ph: float, pco2_mmhg: float, hb_g_dl: float) -> float:
    """:func:`base_excess_mmol_l`, refused when it falls outside the accepted -30 to 30 mmol/L."""
    return _checks.scalar("base_excess_mmol_l", base_excess_mmol_l(ph=ph, pco2_mmhg=pco2_mmhg, hb_g_dl=hb_g_dl))


def van_slyke_gap_ph(*, ph: float, pco2_mmhg: float, base_excess_mmol_l: float, hb_g_dl: float) -> float:
    """Given pH minus the pH that PCO2 and base excess imply (0 for a self-consistent blood gas)."""
    implied = ph_from_pco2_base_excess(pco2_mmhg=pco2_mmhg, base_excess_mmol_l=base_excess_mmol_l, hb_g_dl=hb_g_dl)
    return float(ph) - implied
