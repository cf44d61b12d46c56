"""CO2 side of the exchange: how the arterio-venous CO2 difference is carried, and resting
hyperventilation.

Split of the venous-minus-arterial whole-blood CO2 content (Douglas et al. 1988, the model of
:mod:`analysis.oxygen.haldane`, with each blood's own pH, PCO2, saturation and temperature):

* **dissolved** CO2: 2.226 s PCO2 mL/dL (plasma solubility s of Kelman 1967 applied to whole
  blood; an approximation, red-cell water holds a little less);
* **carbamino** CO2 on haemoglobin: ctHb (a_ox S + a_deox (1 - S)) mmol/L with ctHb the haem
  concentration, a_ox = 0.11 and a_deox = 0.31 mol CO2 per mol haem (deoxyhaemoglobin binds
  about three times as much as oxyhaemoglobin; coefficients from memory, PCO2 dependence left
  out);
* **bicarbonate**: the rest of the content difference.

The **Haldane part** is the extra CO2 the venous blood holds at its own PCO2 because it is
desaturated (:func:`analysis.oxygen.haldane.haldane_extra_co2_ml_dl`).

Textbook figures (from memory): of the a-v CO2 difference at rest about 5-10 % is dissolved,
20-30 % carbamino and 60-70 % bicarbonate; the Haldane effect accounts for roughly a third to a
half of the CO2 exchanged.
"""

from __future__ import annotations

from dataclasses import dataclass

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.acid_base import complete_blood_gas
from analysis.oxygen.alveolar import FIO2_AIR, SEA_LEVEL_PB_MMHG, alveolar_po2_mmhg, arterial_po2_mmhg
from analysis.oxygen.content import DEFAULT_HUEFNER_ML_G, O2_SOLUBILITY_ML_DL_MMHG
from analysis.oxygen.curves import p50, saturation
from analysis.oxygen.haldane import (
    HB_MONOMER_G_MMOL,
    OXYLABILE_PROTON_RATIO,
    blood_co2_content_ml_dl,
    co2_solubility_mmol_l_mmhg,
    haldane_extra_co2_ml_dl,
)
from analysis.oxygen.states import StateConditions
from analysis.records import derived, described

#: Carbamino CO2 per haem, mol/mol, on oxy- and deoxyhaemoglobin (from memory).
CARBAMINO_OXY_MOL_MOL = 0.11
CARBAMINO_DEOXY_MOL_MOL = 0.31

#: mL of CO2 gas (STPD) per mmol, divided by 10 for mL/dL from mmol/L (22.26 mL/mmol).
ML_DL_PER_MMOL_L = 2.226


@dataclass(frozen=True)
class Co2Carriage:
    """Venous-minus-arterial CO2 content at one state and how it is carried (mL CO2/dL blood)."""

    state: str = described(description="rest, vt1, vt2 or peak")
    pco2_arterial_mmhg: float = described(unit="mmHg", description="arterial PCO2")
    pco2_venous_mmhg: float = described(unit="mmHg", description="mixed venous PCO2")
    avco2_ml_dl: float = described(unit="mL/dL", description="venous minus arterial whole-blood CO2 content",
                                   method="Douglas et al. 1988")
    dissolved_ml_dl: float = described(unit="mL/dL", description="part carried dissolved")
    carbamino_ml_dl: float = described(unit="mL/dL", description="part carried as carbamino CO2 on haemoglobin")
    bicarbonate_ml_dl: float = described(unit="mL/dL", description="part carried as bicarbonate")
    haldane_ml_dl: float = described(unit="mL/dL", description="Haldane part: extra CO2 held because venous blood is desaturated")

    def fraction(self, part: str) -> float:
        """Share of the a-v CO2 difference carried as ``part`` (dissolved, carbamino, bicarbonate, haldane)."""
        return float(getattr(self, f"{part}_ml_dl")) / self.avco2_ml_dl if self.avco2_ml_dl else float("nan")

    @derived(description="share of the a-v CO2 difference carried dissolved")
    def dissolved_fraction(self) -> float:
        return self.fraction("dissolved")

    @derived(description="share carried as carbamino CO2")
    def carbamino_fraction(self) -> float:
        return self.fraction("carbamino")

    @derived(description="share carried as bicarbonate")
    def bicarbonate_fraction(self) -> float:
        return self.fraction("bicarbonate")

    @derived(description="Haldane part as a share of the a-v CO2 difference")
    def haldane_fraction(self) -> float:
        return self.fraction("haldane")


def carbamino_ml_dl(*, hb_g_dl: float, so2: float) -> float:
    """Carbamino CO2 on haemoglobin, mL/dL (coefficients from memory; see the module notes).

    Examples
    --------
    >>> round(carbamino_ml_dl(hb_g_dl=15.0, so2=0.97), 2)
    2.4
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    s = float(so2)
    if not 0.0 <= s <= 1.0:
        raise InvalidParameter("so2", "a saturation fraction from 0 to 1", so2)
    ct_hb = hb * 10.0 / HB_MONOMER_G_MMOL
    return ML_DL_PER_MMOL_L * ct_hb * (CARBAMINO_OXY_MOL_MOL * s + CARBAMINO_DEOXY_MOL_MOL * (1.0 - s))


def co2_carriage(
    *,
    state: str,
    hb_g_dl: float,
    arterial: StateConditions,
    venous: StateConditions,
    sao2: float,
    svo2: float,
) -> Co2Carriage:
    """Split the venous-minus-arterial CO2 content into dissolved, carbamino and bicarbonate parts.

    Parameters
    ----------
    state : str
        State name (rest, vt1, vt2, peak).
    hb_g_dl : float
        Haemoglobin, g/dL.
    arterial, venous : StateConditions
        The two bloods (any two of pH, PCO2, base excess; the third by the Van Slyke equation).
    sao2, svo2 : float
        Arterial and venous O2 saturation (fraction of all haemoglobin that is oxygenated or
        otherwise not deoxygenated).

    Returns
    -------
    Co2Carriage

    References
    ----------
    Douglas AR, Jones NL, Reed JW (1988). J Appl Physiol 65:473-477.
    Loeppky JA, Luft UC, Fletcher ER (1983). Respir Physiol 51:167-181 (Haldane effect).
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    a = arterial.resolved(hb_g_dl=hb)
    v = venous.resolved(hb_g_dl=hb)
    assert a.ph is not None and a.pco2_mmhg is not None and v.ph is not None and v.pco2_mmhg is not None
    assert v.base_excess_mmol_l is not None
    cb_a = blood_co2_content_ml_dl(pco2_mmhg=a.pco2_mmhg, ph=a.ph, hb_g_dl=hb, so2=sao2, temperature_c=a.temperature_c)
    cb_v = blood_co2_content_ml_dl(pco2_mmhg=v.pco2_mmhg, ph=v.ph, hb_g_dl=hb, so2=svo2, temperature_c=v.temperature_c)
    dissolved = ML_DL_PER_MMOL_L * (
        co2_solubility_mmol_l_mmhg(temperature_c=v.temperature_c) * v.pco2_mmhg
        - co2_solubility_mmol_l_mmhg(temperature_c=a.temperature_c) * a.pco2_mmhg
    )
    carbamino = carbamino_ml_dl(hb_g_dl=hb, so2=svo2) - carbamino_ml_dl(hb_g_dl=hb, so2=sao2)
    total = cb_v - cb_a
    ct_hb = hb * 10.0 / HB_MONOMER_G_MMOL
    be_oxygenated = v.base_excess_mmol_l - OXYLABILE_PROTON_RATIO * (1.0 - svo2) * ct_hb
    haldane = (
        haldane_extra_co2_ml_dl(
            pco2_mmhg=v.pco2_mmhg, so2_arterial=sao2, so2_venous=svo2, hb_g_dl=hb,
            base_excess_oxygenated_mmol_l=max(-30.0, be_oxygenated), temperature_c=v.temperature_c,
        )
        if svo2 < sao2
        else 0.0
    )
    return Co2Carriage(
        state=state, pco2_arterial_mmhg=a.pco2_mmhg, pco2_venous_mmhg=v.pco2_mmhg, avco2_ml_dl=total,
        dissolved_ml_dl=dissolved, carbamino_ml_dl=carbamino, bicarbonate_ml_dl=total - dissolved - carbamino,
        haldane_ml_dl=haldane,
    )


@dataclass(frozen=True)
class Hyperventilation:
    """Resting hyperventilation: PaCO2 lowered at a constant base excess (acute respiratory alkalosis)."""

    paco2_before_mmhg: float = described(unit="mmHg", description="arterial PCO2 before")
    paco2_after_mmhg: float = described(unit="mmHg", description="arterial PCO2 while hyperventilating")
    ph_before: float = described(description="arterial pH before (Van Slyke equation)")
    ph_after: float = described(description="arterial pH while hyperventilating")
    pao2_alveolar_before_mmhg: float = described(unit="mmHg", description="alveolar PO2 before")
    pao2_alveolar_after_mmhg: float = described(unit="mmHg", description="alveolar PO2 while hyperventilating")
    pao2_before_mmhg: float = described(unit="mmHg", description="arterial PO2 before")
    pao2_after_mmhg: float = described(unit="mmHg", description="arterial PO2 while hyperventilating")
    sao2_before: float = described(description="arterial O2 saturation before")
    sao2_after: float = described(description="arterial O2 saturation while hyperventilating")
    cao2_before_ml_dl: float = described(unit="mL/dL", description="arterial O2 content before")
    cao2_after_ml_dl: float = described(unit="mL/dL", description="arterial O2 content while hyperventilating")
    p50_before_mmhg: float = described(unit="mmHg", description="P50 before")
    p50_after_mmhg: float = described(unit="mmHg", description="P50 while hyperventilating (left shift)")
    note: str = described(description="the scenario in words")

    @derived(unit="mL/dL", description="gain in arterial O2 content")
    def cao2_gain_ml_dl(self) -> float:
        return self.cao2_after_ml_dl - self.cao2_before_ml_dl


def resting_hyperventilation(
    *,
    hb_g_dl: float,
    paco2_before_mmhg: float = 40.0,
    paco2_after_mmhg: float = 30.0,
    pb_mmhg: float = SEA_LEVEL_PB_MMHG,
    fio2: float = FIO2_AIR,
    rer: float = 0.8,
    aa_gradient_mmhg: float = 10.0,
    base_excess_mmol_l: float = 0.0,
    model: str = "siggaard_andersen",
    huefner_ml_g: float = DEFAULT_HUEFNER_ML_G,
) -> Hyperventilation:
    """What breathing harder at rest does to arterial blood: a little more O2, a left-shifted curve.

    PAO2 rises by the alveolar gas equation as PaCO2 falls; pH rises (Van Slyke equation at an
    unchanged base excess), shifting the curve to the left (lower P50). Because arterial blood is
    already nearly saturated the O2 content gains only a few tenths of a mL/dL, while the left
    shift makes the blood hold on to its O2 more tightly in the tissues.

    Parameters
    ----------
    hb_g_dl : float
        Haemoglobin, g/dL.
    paco2_before_mmhg, paco2_after_mmhg : float, default 40 and 30
        Arterial PCO2 before and during hyperventilation.
    pb_mmhg, fio2, rer, aa_gradient_mmhg : float
        As in :func:`analysis.oxygen.alveolar.alveolar_po2_mmhg` and the A-a gradient.
    base_excess_mmol_l : float, default 0
        Base excess, unchanged in an acute respiratory alkalosis.
    model : str, default "siggaard_andersen"
        Curve model (pH and base excess applied at 37 °C).
    huefner_ml_g : float, default 1.34
        Hüfner factor.

    Returns
    -------
    Hyperventilation

    References
    ----------
    Alveolar gas equation (textbook). Siggaard-Andersen O et al. (1984). Clin Chem
    30:1646-1651. Siggaard-Andersen O (1977). Van Slyke equation (from memory).
    """
    hb = _checks.scalar("hb_g_dl", hb_g_dl)
    huefner = _checks.scalar("huefner_ml_g", huefner_ml_g)
    values = {}
    for when, paco2 in (("before", paco2_before_mmhg), ("after", paco2_after_mmhg)):
        ph, _, be = complete_blood_gas(hb_g_dl=hb, pco2_mmhg=paco2, base_excess_mmol_l=base_excess_mmol_l)
        alv = alveolar_po2_mmhg(pb_mmhg=pb_mmhg, fio2=fio2, paco2_mmhg=paco2, rer=rer)
        pao2 = arterial_po2_mmhg(pao2_alveolar_mmhg=alv, aa_gradient_mmhg=aa_gradient_mmhg)
        kwargs: dict[str, float] = {"ph": ph}
        if model == "siggaard_andersen":
            kwargs["base_excess_mmol_l"] = be
        else:
            kwargs["pco2_mmhg"] = float(paco2)
        s = float(saturation(pao2, model=model, **kwargs))
        values[when] = {
            "paco2": float(paco2), "ph": ph, "alv": alv, "pao2": pao2, "s": s,
            "c": huefner * hb * s + O2_SOLUBILITY_ML_DL_MMHG * pao2, "p50": p50(model=model, **kwargs),
        }
    b, a = values["before"], values["after"]
    note = (
        f"PaCO2 {b['paco2']:.0f} -> {a['paco2']:.0f} mmHg raises PAO2 by {a['alv'] - b['alv']:.1f} mmHg but arterial O2 "
        f"content only by {a['c'] - b['c']:.2f} mL/dL (blood already {100 * b['s']:.1f} % saturated); pH "
        f"{b['ph']:.2f} -> {a['ph']:.2f} moves P50 from {b['p50']:.1f} to {a['p50']:.1f} mmHg (left shift: O2 held "
        "more tightly in the tissues). Model estimate."
    )
    return Hyperventilation(
        paco2_before_mmhg=b["paco2"], paco2_after_mmhg=a["paco2"], ph_before=b["ph"], ph_after=a["ph"],
        pao2_alveolar_before_mmhg=b["alv"], pao2_alveolar_after_mmhg=a["alv"], pao2_before_mmhg=b["pao2"],
        pao2_after_mmhg=a["pao2"], sao2_before=b["s"], sao2_after=a["s"], cao2_before_ml_dl=b["c"],
        cao2_after_ml_dl=a["c"], p50_before_mmhg=b["p50"], p50_after_mmhg=a["p50"], note=note,
    )
