"""Gas volumes under the three measurement conditions, and the gas-law factors between them.

Ventilation (VE, tidal volume) is reported at BTPS and gas exchange (VO2, VCO2) at STPD
(ATS/ACCP Statement on cardiopulmonary exercise testing, Am J Respir Crit Care Med
2003;167:211-277):

* **BTPS** — body temperature (37 °C), ambient barometric pressure, saturated with water
  vapour (PH2O 47 mmHg, the conventional value at 37 °C);
* **STPD** — standard temperature (0 °C = 273.15 K) and pressure (760 mmHg), dry;
* **ATPS** — ambient (room) temperature and barometric pressure, saturated with water vapour
  at room temperature (a volume measured by a spirometer or flow sensor at room conditions).

A volume moves between conditions by Boyle's and Charles's laws applied to the dry gas:
``V_to = V_from * (T_to / T_from) * (P_dry_from / P_dry_to)`` with absolute temperatures and
``P_dry = PB - PH2O``. The water-vapour pressure at room temperature comes from Buck's
saturation-vapour-pressure equation over water (Buck 1981).
"""

from __future__ import annotations

import math
from typing import Literal, get_args

from analysis.errors import InvalidParameter, require

GasCondition = Literal["btps", "stpd", "atps"]
#: The conditions a gas volume may be stated in.
GAS_CONDITIONS: tuple[GasCondition, ...] = get_args(GasCondition)

#: 0 °C in kelvin (SI definition).
ZERO_C_K = 273.15
#: Body temperature of BTPS, °C (ATS/ACCP 2003).
BODY_TEMPERATURE_C = 37.0
#: Water-vapour pressure of BTPS, mmHg: the conventional value at 37 °C (ATS/ACCP 2003; the
#: tabulated factors use it). Buck's equation gives 47.10 mmHg at 37 °C, which would change the
#: BTPS/STPD factor in its fourth decimal only.
BODY_PH2O_MMHG = 47.0
#: Standard pressure of STPD, mmHg (1 atm).
STANDARD_PRESSURE_MMHG = 760.0
#: 1 hPa in mmHg (1 mmHg = 133.322387415 Pa).
MMHG_PER_HPA = 100.0 / 133.322387415

#: Room temperatures accepted, °C (Buck 1981 fits water between -20 and 50 °C; a lab is 10-40 °C).
AMBIENT_C_RANGE = (0.0, 45.0)
#: Barometric pressures accepted, mmHg (about 5,000 m altitude to a deep-low-lying lab).
BAROMETRIC_MMHG_RANGE = (400.0, 820.0)


def saturation_vapour_pressure_mmhg(temperature_c: float) -> float:
    """Saturation pressure of water vapour over liquid water (mmHg) at ``temperature_c``.

    Parameters
    ----------
    temperature_c : float
        Temperature, °C, from 0 to 45.

    Returns
    -------
    float
        Water-vapour pressure at saturation, mmHg.

    Notes
    -----
    Buck (1981), equation for saturation vapour pressure over water (his ``e_w``):
    ``e = 6.1121 * exp(17.502 * T / (240.97 + T))`` hPa with ``T`` in °C, converted with
    1 mmHg = 133.322387415 Pa. Within about 0.1 % of the tabulated values between 0 and 50 °C.

    References
    ----------
    Buck AL. New equations for computing vapor pressure and enhancement factor. J Appl Meteorol
    1981;20:1527-1532.

    Examples
    --------
    >>> round(saturation_vapour_pressure_mmhg(22.0), 2)
    19.82
    """
    t = _temperature(temperature_c)
    return 6.1121 * math.exp(17.502 * t / (240.97 + t)) * MMHG_PER_HPA


def _temperature(value: object) -> float:
    low, high = AMBIENT_C_RANGE
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        raise InvalidParameter("temperature_c", f"a room temperature from {low:g} to {high:g} °C", value)
    t = float(value)
    require(math.isfinite(t) and low <= t <= high, "temperature_c", f"a room temperature from {low:g} to {high:g} °C", value)
    return t


def _pressure(value: object) -> float:
    low, high = BAROMETRIC_MMHG_RANGE
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        raise InvalidParameter("barometric_mmhg", f"a barometric pressure from {low:g} to {high:g} mmHg", value)
    p = float(value)
    require(
        math.isfinite(p) and low <= p <= high, "barometric_mmhg", f"a barometric pressure from {low:g} to {high:g} mmHg", value
    )
    return p


def _state(condition: GasCondition, *, barometric_mmhg: float, ambient_c: float | None) -> tuple[float, float]:
    """Absolute temperature (K) and pressure of the dry gas (mmHg) of one condition."""
    if condition == "stpd":
        return ZERO_C_K, STANDARD_PRESSURE_MMHG
    if condition == "btps":
        return ZERO_C_K + BODY_TEMPERATURE_C, barometric_mmhg - BODY_PH2O_MMHG
    if ambient_c is None:
        raise InvalidParameter("ambient_c", "the room temperature (°C) for a volume at ATPS", None)
    t = _temperature(ambient_c)
    return ZERO_C_K + t, barometric_mmhg - saturation_vapour_pressure_mmhg(t)


def volume_factor(
    from_condition: str, to_condition: str, *, barometric_mmhg: float, ambient_c: float | None = None
) -> float:
    """The factor that turns a gas volume (or flow) stated at ``from_condition`` into ``to_condition``.

    Parameters
    ----------
    from_condition, to_condition : {"btps", "stpd", "atps"}
        Conditions of the volume as measured and as wanted.
    barometric_mmhg : float, keyword-only
        Barometric pressure during the test, mmHg (400 to 820).
    ambient_c : float, optional, keyword-only
        Room temperature, °C (0 to 45); needed when either condition is ATPS.

    Returns
    -------
    float
        Multiply the volume by it.

    Raises
    ------
    InvalidParameter
        An unknown condition, a pressure or temperature outside the ranges, or ATPS without a
        room temperature.

    Notes
    -----
    ``V_to = V_from * (T_to / T_from) * (P_dry_from / P_dry_to)`` (Boyle's and Charles's laws on
    the dry gas), with STPD at 273.15 K and 760 mmHg dry, BTPS at 310.15 K and ``PB - 47`` mmHg,
    ATPS at the room temperature and ``PB - PH2O(room)`` (Buck 1981 for PH2O).

    References
    ----------
    American Thoracic Society / American College of Chest Physicians. ATS/ACCP Statement on
    cardiopulmonary exercise testing. Am J Respir Crit Care Med 2003;167:211-277.
    Buck AL. J Appl Meteorol 1981;20:1527-1532.

    Examples
    --------
    >>> round(volume_factor("stpd", "btps", barometric_mmhg=760.0), 4)
    1.2103
    >>> round(volume_factor("atps", "btps", barometric_mmhg=760.0, ambient_c=22.0), 4)
    1.0909
    """
    source, target = gas_condition(from_condition, name="from_condition"), gas_condition(to_condition, name="to_condition")
    pb = _pressure(barometric_mmhg)
    if ambient_c is not None:
        _temperature(ambient_c)
    t_from, p_from = _state(source, barometric_mmhg=pb, ambient_c=ambient_c)
    t_to, p_to = _state(target, barometric_mmhg=pb, ambient_c=ambient_c)
    return (t_to / t_from) * (p_from / p_to)


def gas_condition(value: object, *, name: str = "condition") -> GasCondition:
    """``"btps"``, ``"stpd"`` or ``"atps"`` from its name in any case (``"BTPS"``, `` stpd ``).

    Raises
    ------
    InvalidParameter
        Anything else.
    """
    text = value.strip().lower() if isinstance(value, str) else value
    for condition in GAS_CONDITIONS:
        if text == condition:
            return condition
    raise InvalidParameter(name, "BTPS, STPD or ATPS", value)
