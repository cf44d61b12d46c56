"""From inspired air to arterial blood: barometric pressure, alveolar PO2 and arterial PO2.

The alveolar gas equation gives the alveolar PO2 from the inspired O2 fraction, barometric
pressure, arterial PCO2 and the respiratory exchange ratio; the arterial PO2 is lower by the
alveolar-arterial (A-a) gradient. Barometric pressure at an altitude comes from the standard
atmosphere. Everything here is a model estimate for a person breathing steadily.
"""

from __future__ import annotations

import math

from analysis.errors import require
from analysis.oxygen import _checks

#: O2 fraction of dry air (common practice: 20.93 %).
FIO2_AIR = 0.2093

#: Water vapour pressure of saturated gas at 37 °C, mmHg (common practice).
PH2O_37C_MMHG = 47.0

#: Sea-level standard pressure, mmHg (U.S. Standard Atmosphere 1976: 101 325 Pa).
SEA_LEVEL_PB_MMHG = 760.0

#: Alveolar-arterial PO2 gradient by state, mmHg. About 5-15 mmHg at rest in young healthy
#: adults (common practice), widening with heavy exercise to 20-30 mmHg in fit subjects
#: (Dempsey & Wagner 1999, from memory); the defaults take the middle of those ranges.
DEFAULT_AA_GRADIENT_MMHG: dict[str, float] = {"rest": 10.0, "vt1": 10.0, "vt2": 15.0, "peak": 20.0}

#: A-a gradient used for a state not in :data:`DEFAULT_AA_GRADIENT_MMHG`, mmHg.
FALLBACK_AA_GRADIENT_MMHG = 10.0


def alveolar_po2_mmhg(
    *,
    pb_mmhg: float,
    fio2: float = FIO2_AIR,
    paco2_mmhg: float = 40.0,
    rer: float = 0.8,
    ph2o_mmhg: float = PH2O_37C_MMHG,
) -> float:
    """Alveolar PO2 (mmHg) by the alveolar gas equation, with the FIO2 correction term.

    Parameters
    ----------
    pb_mmhg : float
        Barometric pressure, mmHg (200-800).
    fio2 : float, default 0.2093
        Inspired O2 fraction (0.10-1.0; room air 0.2093).
    paco2_mmhg : float, default 40.0
        Arterial (taken as alveolar) PCO2, mmHg.
    rer : float, default 0.8
        Respiratory exchange ratio R (0.5-2.0).
    ph2o_mmhg : float, default 47.0
        Water vapour pressure at body temperature, mmHg.

    Returns
    -------
    float
        PAO2, mmHg (may be negative for impossible combinations; the caller decides).

    Notes
    -----
    PAO2 = FIO2 (PB - PH2O) - PaCO2 [FIO2 + (1 - FIO2) / R]. The bracket is the full form;
    the common short form PaCO2 / R leaves out the correction for the difference between
    inspired and expired volumes when R is not 1.

    References
    ----------
    Alveolar gas equation (textbook; e.g. West JB, Respiratory Physiology). Worked values:
    PB 760, PaCO2 40, R 0.8 -> 101.3 mmHg; PB 596 (about 2,000 m) -> 67.0 mmHg.

    Examples
    --------
    >>> round(alveolar_po2_mmhg(pb_mmhg=760.0), 1)
    101.3
    """
    pb = _checks.scalar("pb_mmhg", pb_mmhg)
    f = _checks.scalar("fio2", fio2)
    paco2 = _checks.scalar("pco2_mmhg", paco2_mmhg)
    r = _checks.scalar("rer", rer)
    ph2o = _checks.scalar("ph2o_mmhg", ph2o_mmhg)
    return f * (pb - ph2o) - paco2 * (f + (1.0 - f) / r)


def arterial_po2_mmhg(*, pao2_alveolar_mmhg: float, aa_gradient_mmhg: float) -> float:
    """Arterial PO2 (mmHg) = alveolar PO2 minus the alveolar-arterial gradient (at least 1 mmHg).

    References
    ----------
    Common practice (A-a gradient). Dempsey JA, Wagner PD (1999). Exercise-induced arterial
    hypoxemia. J Appl Physiol 87:1997-2006 (widening with exercise; from memory).

    Examples
    --------
    >>> arterial_po2_mmhg(pao2_alveolar_mmhg=101.3, aa_gradient_mmhg=10.0)
    91.3
    """
    gradient = _checks.scalar("aa_gradient_mmhg", aa_gradient_mmhg)
    alveolar = float(pao2_alveolar_mmhg)
    require(math.isfinite(alveolar) and alveolar >= 0, "pao2_alveolar_mmhg", "an alveolar PO2 of 0 mmHg or more", pao2_alveolar_mmhg)
    return max(1.0, alveolar - gradient)


def barometric_pressure_mmhg(*, altitude_m: float) -> float:
    """Barometric pressure (mmHg) at an altitude by the standard atmosphere.

    Parameters
    ----------
    altitude_m : float
        Altitude above sea level, m (-500 to 9000).

    Returns
    -------
    float
        PB = 760 (1 - 2.25577e-5 h)^5.25588 mmHg.

    Notes
    -----
    The troposphere formula of the U.S. Standard Atmosphere 1976 (identical to the ICAO
    standard atmosphere below 11 km): temperature falls 6.5 K/km from 288.15 K at sea level.
    Real pressure varies with latitude, season and weather by a few percent.

    References
    ----------
    U.S. Standard Atmosphere, 1976. NOAA/NASA/USAF, Washington DC (troposphere formula).

    Examples
    --------
    >>> round(barometric_pressure_mmhg(altitude_m=2000.0), 1)
    596.3
    """
    h = _checks.scalar("altitude_m", altitude_m)
    return SEA_LEVEL_PB_MMHG * (1.0 - 2.25577e-5 * h) ** 5.25588


def altitude_from_pressure_m(*, pb_mmhg: float) -> float:
    """Altitude (m) at which the standard atmosphere has this barometric pressure (inverse).

    Examples
    --------
    >>> round(altitude_from_pressure_m(pb_mmhg=barometric_pressure_mmhg(altitude_m=2000.0)))
    2000
    """
    pb = _checks.scalar("pb_mmhg", pb_mmhg)
    return (1.0 - (pb / SEA_LEVEL_PB_MMHG) ** (1.0 / 5.25588)) / 2.25577e-5
