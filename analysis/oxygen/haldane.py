"""Whole-blood CO2 content and the Haldane effect (extra CO2 that desaturated blood carries).

Model
-----
1. Plasma CO2 content (Douglas et al. 1988, with Kelman's solubility and apparent pK):
   Cp = 2.226 s PCO2 (1 + 10^(pH - pK')), mL/dL, where
   s = 0.0307 + 0.00057 (37 - T) + 0.00002 (37 - T)^2 mmol/L/mmHg and
   pK' = 6.086 + 0.042 (7.4 - pH) + (38 - T)(0.00472 + 0.00139 (7.4 - pH)).
2. Whole blood (Douglas et al. 1988):
   Cb = Cp [1 - 0.0289 Hb / ((3.352 - 0.456 SO2)(8.142 - pH))], Hb in g/dL.
3. At a fixed PCO2 the plasma pH of blood follows its base excess (Van Slyke equation,
   Siggaard-Andersen 1977, from memory):
   BE = (1 - 0.014 Hb)[(HCO3 - 24.8) + (1.43 Hb + 7.7)(pH - 7.4)],
   HCO3 = 0.0307 PCO2 10^(pH - 6.1).
4. Deoxygenated haemoglobin binds about 0.3 mmol H+ per mmol O2 released, so at constant PCO2
   desaturated blood behaves as if its base excess were higher by 0.3 (1 - SO2) ctHb
   (ctHb in mmol/L of haem = Hb g/dL x 10 / 16.114) (oxygenation-dependent base excess,
   Siggaard-Andersen, from memory).

The extra CO2 is Cb(venous SO2) - Cb(arterial SO2) at the same PCO2 and the same
oxygenated base excess; the Haldane factor divides it by the bound O2 given up,
k Hb (SaO2 - SvO2).

Checks: Douglas' blood/plasma ratio and Kelman's plasma content reproduce an independent
implementation's test values (see tests); the resulting in vivo Haldane factor is tested
against Loeppky et al. (1983), 0.28 ± 0.03 vol% CO2 per vol% HbO2 in exercising subjects.
"""

from __future__ import annotations

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.acid_base import ph_from_pco2_base_excess
from analysis.oxygen.content import DEFAULT_HUEFNER_ML_G

#: Hb monomer (haem) molar mass, g/mmol (common practice: 16.114 mg/µmol).
HB_MONOMER_G_MMOL = 16.114
#: Oxylabile H+ bound per O2 released, mol/mol (Siggaard-Andersen, from memory).
OXYLABILE_PROTON_RATIO = 0.3


def _fraction(name: str, value: float) -> float:
    v = float(value)
    if not (0.0 <= v <= 1.0):
        raise InvalidParameter(name, "a saturation fraction from 0 to 1 (e.g. 0.97, not 97)", value)
    return v


def co2_solubility_mmol_l_mmhg(*, temperature_c: float = 37.0) -> float:
    """Plasma CO2 solubility (mmol/L/mmHg) at a temperature (Kelman 1967, from memory)."""
    dt = 37.0 - _checks.scalar("temperature_c", temperature_c)
    return 0.0307 + 0.00057 * dt + 0.00002 * dt * dt


def apparent_pk(*, ph: float, temperature_c: float = 37.0) -> float:
    """Apparent pK' of plasma carbonic acid (Kelman 1967, from memory)."""
    ph = _checks.scalar("ph", ph)
    t = _checks.scalar("temperature_c", temperature_c)
    return 6.086 + 0.042 * (7.4 - ph) + (38.0 - t) * (0.00472 + 0.00139 * (7.4 - ph))


def plasma_co2_content_ml_dl(*, pco2_mmhg: float, ph: float, temperature_c: float = 37.0) -> float:
    """Plasma CO2 content, mL/dL (Douglas et al. 1988 with Kelman's s and pK').

    References
    ----------
    Douglas AR, Jones NL, Reed JW (1988). Calculation of whole blood CO2 content. J Appl
    Physiol 65:473-477.
    Kelman GR (1967). Digital computer procedure for the conversion of PCO2 into blood CO2
    content. Respir Physiol 3:111-115 (from memory).
    """
    pco2 = _checks.scalar("pco2_mmhg", pco2_mmhg)
    s = co2_solubility_mmol_l_mmhg(temperature_c=temperature_c)
    pk = apparent_pk(ph=ph, temperature_c=temperature_c)
    return 2.226 * s * pco2 * (1.0 + 10.0 ** (ph - pk))


def blood_co2_content_ml_dl(
    *, pco2_mmhg: float, ph: float, hb_g_dl: float, so2: float, temperature_c: float = 37.0
) -> float:
    """Whole-blood CO2 content, mL/dL, at a plasma pH and O2 saturation (Douglas et al. 1988).

    Parameters
    ----------
    pco2_mmhg : float
        Plasma PCO2, mmHg.
    ph : float
        Plasma pH.
    hb_g_dl : float
        Haemoglobin, g/dL.
    so2 : float
        O2 saturation, fraction 0-1.
    temperature_c : float, default 37.0
        Blood temperature, °C.

    References
    ----------
    Douglas AR, Jones NL, Reed JW (1988). J Appl Physiol 65:473-477.
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    sat = _fraction("so2", so2)
    cp = plasma_co2_content_ml_dl(pco2_mmhg=pco2_mmhg, ph=ph, temperature_c=temperature_c)
    return cp * (1.0 - 0.0289 * hb / ((3.352 - 0.456 * sat) * (8.142 - ph)))


def blood_co2_content_at_base_excess_ml_dl(
    *,
    pco2_mmhg: float,
    so2: float,
    hb_g_dl: float,
    base_excess_oxygenated_mmol_l: float = 0.0,
    temperature_c: float = 37.0,
) -> float:
    """Whole-blood CO2 content (mL/dL) at a PCO2 and SO2, for blood of a given oxygenated base excess.

    The plasma pH follows from the Van Slyke equation with the base excess raised by the
    oxylabile protons that deoxygenated haemoglobin binds (0.3 per O2 released, from memory),
    then Douglas et al. (1988) gives the content.
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    sat = _fraction("so2", so2)
    ct_hb_mmol_l = hb * 10.0 / HB_MONOMER_G_MMOL
    be = float(base_excess_oxygenated_mmol_l) + OXYLABILE_PROTON_RATIO * (1.0 - sat) * ct_hb_mmol_l
    ph = ph_from_pco2_base_excess(pco2_mmhg=pco2_mmhg, base_excess_mmol_l=be, hb_g_dl=hb)
    return blood_co2_content_ml_dl(pco2_mmhg=pco2_mmhg, ph=ph, hb_g_dl=hb, so2=sat, temperature_c=temperature_c)


def haldane_extra_co2_ml_dl(
    *,
    pco2_mmhg: float,
    so2_arterial: float,
    so2_venous: float,
    hb_g_dl: float,
    base_excess_oxygenated_mmol_l: float = 0.0,
    temperature_c: float = 37.0,
) -> float:
    """Extra CO2 (mL/dL) venous blood carries at its PCO2 because it has given up oxygen.

    Cb(SvO2) - Cb(SaO2) at the same PCO2, temperature and oxygenated base excess (see the
    module notes for the model).

    References
    ----------
    Douglas AR, Jones NL, Reed JW (1988). J Appl Physiol 65:473-477.
    Loeppky JA, Luft UC, Fletcher ER (1983). Quantitative description of whole blood CO2
    dissociation curve and Haldane effect. Respir Physiol 51:167-181.

    Examples
    --------
    >>> round(haldane_extra_co2_ml_dl(pco2_mmhg=46.0, so2_arterial=0.97, so2_venous=0.75, hb_g_dl=15.0), 1)
    1.3
    """
    return _extra_co2(pco2_mmhg, so2_arterial, so2_venous, hb_g_dl, base_excess_oxygenated_mmol_l, temperature_c)


def _extra_co2(pco2_mmhg: float, sa: float, sv: float, hb_g_dl: float, be_mmol_l: float, temperature_c: float) -> float:
    """Cb(SvO2) - Cb(SaO2) at one PCO2 (the body of :func:`haldane_extra_co2_ml_dl`)."""
    common = {"pco2_mmhg": pco2_mmhg, "hb_g_dl": hb_g_dl, "base_excess_oxygenated_mmol_l": be_mmol_l, "temperature_c": temperature_c}
    venous = blood_co2_content_at_base_excess_ml_dl(so2=sv, **common)
    arterial = blood_co2_content_at_base_excess_ml_dl(so2=sa, **common)
    return venous - arterial


def haldane_factor(
    *,
    pco2_mmhg: float,
    so2_arterial: float,
    so2_venous: float,
    hb_g_dl: float,
    base_excess_oxygenated_mmol_l: float = 0.0,
    temperature_c: float = 37.0,
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
) -> float:
    """Haldane factor: extra CO2 content per unit of bound O2 given up (vol% per vol%).

    References
    ----------
    Loeppky JA, Luft UC, Fletcher ER (1983). Respir Physiol 51:167-181 (in vivo, exercising
    healthy subjects: 0.28 ± 0.03).
    """
    sa, sv = _fraction("so2_arterial", so2_arterial), _fraction("so2_venous", so2_venous)
    if not sa > sv:
        raise InvalidParameter("so2_venous", f"below the arterial saturation {sa:g}", so2_venous)
    k = _checks.scalar("huefner_ml_g", huefner_ml_g)
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    extra = _extra_co2(pco2_mmhg, sa, sv, hb, base_excess_oxygenated_mmol_l, temperature_c)
    return float(extra / (k * hb * (sa - sv)))


__all__ = [
    "apparent_pk",
    "blood_co2_content_at_base_excess_ml_dl",
    "blood_co2_content_ml_dl",
    "co2_solubility_mmol_l_mmhg",
    "haldane_extra_co2_ml_dl",
    "haldane_factor",
    "plasma_co2_content_ml_dl",
]
