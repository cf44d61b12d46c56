"""End-tidal CO2, ventilatory efficiency at VT1 and dead space from an arterial PCO2."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import require
from analysis.interpretation.flags import Flag, flag
from analysis.records import described

#: The constant of the dead-space equation: VE (L/min BTPS) / VCO2 (L/min STPD) =
#: 863 / (PaCO2 × (1 - VD/VT)) (ATS/ACCP 2003, from memory).
K_VE_VCO2 = 863.0
#: VE/VCO2 slope from which Arena's class III–IV begins (Arena et al. 2007, checked).
VE_VCO2_SLOPE_HIGH = 36.0
#: Resting PETCO2 below this is low (Arena et al. 2008, heart failure; from memory).
PETCO2_REST_LOW_MMHG = 33.0
#: A rise of PETCO2 from rest to VT1 smaller than this is blunted (normal 3–8 mmHg; Hansen et
#: al. 2007, from memory).
PETCO2_RISE_LOW_MMHG = 3.0
#: Half-width of the window read at VT1, s (30-s means, common practice).
HALF_WINDOW_S = 15.0

GAS_EXCHANGE_METHOD = (
    "PETCO2 at rest (mean of the rest phase) and at VT1 (30-s mean); VE/VCO2 at VT1 as the ratio of 30-s means; "
    "VD/VT = 1 - 863 / (PaCO2 × VE/VCO2 at peak) when an arterial PCO2 is entered (ATS/ACCP 2003, from memory)"
)


@dataclass(frozen=True)
class GasExchange:
    """End-tidal CO2 at rest and VT1, VE/VCO2 at VT1 and dead space when PaCO2 is known."""

    petco2_rest_mmhg: float | None = described(unit="mmHg", description="mean PETCO2 of the rest phase")
    petco2_vt1_mmhg: float | None = described(unit="mmHg", description="PETCO2, 30-s mean at VT1")
    petco2_rise_mmhg: float | None = described(unit="mmHg", description="`petco2_vt1_mmhg - petco2_rest_mmhg`")
    ve_vco2_vt1: float | None = described(description="VE/VCO2 at VT1 (ratio of 30-s means; VE L/min, VCO2 L/min)")
    ve_vco2_peak: float | None = described(description="VE/VCO2 over the last 30 s of exercise")
    paco2_mmhg: float | None = described(unit="mmHg", description="arterial PCO2 entered (metadata `paco2_mmhg`, at peak)")
    vd_vt_peak: float | None = described(
        description="dead space to tidal volume at peak: 1 - 863 / (PaCO2 · VE/VCO2)", method="ATS/ACCP 2003, from memory"
    )


def vd_vt_from_ve_vco2(ve_vco2: float, *, paco2_mmhg: float) -> float:
    """Physiological dead-space fraction from the ventilatory equivalent and arterial PCO2.

    Parameters
    ----------
    ve_vco2 : float
        VE (L/min, BTPS) / VCO2 (L/min, STPD).
    paco2_mmhg : float, keyword-only
        Arterial PCO2, mmHg.

    Returns
    -------
    float
        ``VD/VT = 1 - 863 / (PaCO2 * VE/VCO2)``.

    Raises
    ------
    InvalidParameter
        A ratio or pressure out of range, or a pair that gives VD/VT outside 0–1.

    Notes
    -----
    From ``VE/VCO2 = 863 / (PaCO2 · (1 - VD/VT))``; 863 converts the units (VE BTPS, VCO2 STPD,
    PCO2 in mmHg) at 37 °C.

    References
    ----------
    ATS/ACCP Statement on cardiopulmonary exercise testing. Am J Respir Crit Care Med
    2003;167:211-277 (from memory).

    Examples
    --------
    >>> round(vd_vt_from_ve_vco2(863 / (40 * 0.8), paco2_mmhg=40), 3)
    0.2
    """
    require(np.isfinite(ve_vco2) and 5 <= ve_vco2 <= 200, "ve_vco2", "a ratio from 5 to 200", ve_vco2)
    require(np.isfinite(paco2_mmhg) and 10 <= paco2_mmhg <= 120, "paco2_mmhg", "a pressure from 10 to 120 mmHg", paco2_mmhg)
    vd_vt = 1.0 - K_VE_VCO2 / (paco2_mmhg * ve_vco2)
    require(0.0 <= vd_vt < 1.0, "ve_vco2", f"a ratio that gives a dead space from 0 to 1 with PaCO2 {paco2_mmhg:g} mmHg", ve_vco2)
    return float(vd_vt)


def ve_vco2_from_vd_vt(vd_vt: float, *, paco2_mmhg: float) -> float:
    """``863 / (PaCO2 · (1 - VD/VT))`` (ATS/ACCP 2003, from memory).

    Examples
    --------
    >>> round(ve_vco2_from_vd_vt(0.2, paco2_mmhg=40), 2)
    26.97
    """
    require(np.isfinite(vd_vt) and 0 <= vd_vt < 1, "vd_vt", "a fraction from 0 to below 1", vd_vt)
    require(np.isfinite(paco2_mmhg) and 10 <= paco2_mmhg <= 120, "paco2_mmhg", "a pressure from 10 to 120 mmHg", paco2_mmhg)
    return float(K_VE_VCO2 / (paco2_mmhg * (1.0 - vd_vt)))


def _mean(values: np.ndarray | None, rows: np.ndarray) -> float | None:
    if values is None or not rows.any():
        return None
    v = values[rows]
    v = v[np.isfinite(v)]
    return float(v.mean()) if v.size else None


def _ratio(ve_l_min: np.ndarray, vco2_ml_min: np.ndarray, rows: np.ndarray) -> float | None:
    if not rows.any():
        return None
    ve, vco2 = ve_l_min[rows], vco2_ml_min[rows]
    ok = np.isfinite(ve) & np.isfinite(vco2)
    return float(ve[ok].mean() / (vco2[ok].mean() / 1000.0)) if ok.any() and vco2[ok].mean() > 0 else None


def gas_exchange(
    avg: pd.DataFrame, *, phases_avg: np.ndarray, vt1_t_s: float | None, paco2_mmhg: float | None
) -> GasExchange:
    """PETCO2 at rest and VT1, VE/VCO2 at VT1 and peak, VD/VT at peak when PaCO2 is entered.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data with canonical columns.
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    vt1_t_s : float or None, keyword-only
        Time of VT1.
    paco2_mmhg : float or None, keyword-only
        Arterial PCO2 at peak exercise.

    Returns
    -------
    GasExchange

    References
    ----------
    ATS/ACCP 2003 (dead space, from memory); Hansen JE, Ulubay G, Chow BF, Sun XG, Wasserman K.
    Mixed-expired and end-tidal CO2 distinguish between ventilation and perfusion defects during
    exercise testing in patients with lung and heart diseases. Chest 2007;132:977-983 (from memory).
    """
    t = avg[C.T_S].to_numpy(dtype=float)
    ve = avg[C.VE_L_MIN].to_numpy(dtype=float)
    vco2 = avg[C.VCO2_ML_MIN].to_numpy(dtype=float)
    petco2 = avg[C.PETCO2_MMHG].to_numpy(dtype=float) if C.PETCO2_MMHG in avg else None
    ex = phases_avg == "exercise"
    # rows of the 30-s window at VT1 and of the last minute of exercise
    at_vt1 = ex & (np.abs(t - vt1_t_s) <= HALF_WINDOW_S) if vt1_t_s is not None else np.zeros(t.size, dtype=bool)
    end = ex & (t >= np.nanmax(t[ex]) - 2 * HALF_WINDOW_S) if ex.any() else ex
    p_rest = _mean(petco2, phases_avg == "rest")
    p_vt1 = _mean(petco2, at_vt1)
    ratio_peak = _ratio(ve, vco2, end)
    vd_vt = None
    if paco2_mmhg is not None and ratio_peak is not None:
        vd_vt = vd_vt_from_ve_vco2(ratio_peak, paco2_mmhg=paco2_mmhg)
    return GasExchange(
        petco2_rest_mmhg=p_rest,
        petco2_vt1_mmhg=p_vt1,
        petco2_rise_mmhg=p_vt1 - p_rest if p_vt1 is not None and p_rest is not None else None,
        ve_vco2_vt1=_ratio(ve, vco2, at_vt1),
        ve_vco2_peak=ratio_peak,
        paco2_mmhg=paco2_mmhg,
        vd_vt_peak=vd_vt,
    )


def gas_exchange_flags(gas: GasExchange, *, ve_vco2_slope: float | None) -> tuple[Flag, ...]:
    """``ve_vco2_slope_high``, ``petco2_low`` and ``petco2_rise_low`` where their limits are crossed."""
    out: list[Flag] = []
    if ve_vco2_slope is not None and ve_vco2_slope >= VE_VCO2_SLOPE_HIGH:
        out.append(flag(
            "ve_vco2_slope_high", severity="abnormal",
            text=f"VE/VCO2 slope {ve_vco2_slope:.1f}: ventilatory class III or IV.", value=ve_vco2_slope,
            limit=f"≥ {VE_VCO2_SLOPE_HIGH:.1f}", source="Arena et al. 2007",
        ))
    if gas.petco2_rest_mmhg is not None and gas.petco2_rest_mmhg < PETCO2_REST_LOW_MMHG:
        out.append(flag(
            "petco2_low", severity="abnormal", text=f"PETCO2 at rest {gas.petco2_rest_mmhg:.1f} mmHg.",
            value=gas.petco2_rest_mmhg, unit="mmHg", limit=f"< {PETCO2_REST_LOW_MMHG:g} mmHg at rest",
            source="Arena et al. 2008 (from memory)",
        ))
    if gas.petco2_rise_mmhg is not None and gas.petco2_rise_mmhg < PETCO2_RISE_LOW_MMHG:
        out.append(flag(
            "petco2_rise_low", severity="caution",
            text=f"PETCO2 changed {gas.petco2_rise_mmhg:+.1f} mmHg from rest to VT1 (normally it rises 3–8 mmHg).",
            value=gas.petco2_rise_mmhg, unit="mmHg", limit=f"rise < {PETCO2_RISE_LOW_MMHG:g} mmHg rest → VT1",
            source="Hansen et al. 2007 (from memory)",
        ))
    return tuple(out)
