"""Exercise states (rest, VT1, VT2, peak) and the blood conditions assumed at each.

Two kinds of blood are described per state: MIXED VENOUS blood (pulmonary artery), which is
what the Fick a-vO2 difference refers to, and ARTERIAL blood. The defaults are representative
values recalled from the exercise-physiology literature (from memory), to be replaced with
measured blood gases when available. Each is given as PCO2 and base excess; the pH follows
from the Van Slyke equation (:mod:`analysis.oxygen.acid_base`) at the person's Hb, so that the
curve, the Haldane figure and the CO2 split describe the same blood:

Mixed venous
======  =====  ==========  =====  ====  ===========================================
state   T °C   PCO2 mmHg   BE     DPG   basis
======  =====  ==========  =====  ====  ===========================================
rest    37.0   46          0      5.0   mixed venous at rest (common practice)
vt1     37.5   50          -1     5.0   core temperature up ~0.5 °C, little lactate
vt2     38.3   56          -5     5.0   lactate accumulating (from memory)
peak    39.0   62          -10    5.0   hot, acid, CO2-rich blood (from memory)
======  =====  ==========  =====  ====  ===========================================

Arterial (exercise temperature and metabolic acidosis reach arterial blood too, and
hyperventilation lowers PaCO2 above VT2: Dempsey & Wagner 1999, from memory)
======  =====  ==========  =====  ====
state   T °C   PCO2 mmHg   BE     DPG
======  =====  ==========  =====  ====
rest    37.0   40          0      5.0
vt1     37.5   40          -1     5.0
vt2     38.3   37          -5     5.0
peak    39.0   33          -10    5.0
======  =====  ==========  =====  ====

With Hb 15 g/dL the Van Slyke equation gives mixed venous pH 7.363 / 7.324 / 7.233 / 7.125 and
arterial pH 7.403 / 7.389 / 7.346 / 7.285 at rest / VT1 / VT2 / peak.

2,3-BPG does not change measurably within one test (it changes over hours to days, e.g. at
altitude), so it stays 5.0 mmol/L (from memory); edit it for blood with known BPG changes.

A measured blood gas is given with all three of pH, PCO2 and base excess; any two of them are
enough (the missing one is derived). A :class:`StateConditions` with a missing value is
completed with :meth:`StateConditions.resolved`.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, replace

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.curves import MODEL_CONDITIONS, STANDARD

#: State names in test order.
STATE_NAMES: tuple[str, ...] = ("rest", "vt1", "vt2", "peak")


#: The three acid-base fields, any two of which determine the third.
ACID_BASE_FIELDS: tuple[str, ...] = ("ph", "pco2_mmhg", "base_excess_mmol_l")


@dataclass(frozen=True)
class StateConditions:
    """Blood conditions for one curve: temperature (°C), pH (at 37 °C), PCO2 (mmHg),
    2,3-BPG (mmol/L) and base excess (mmol/L).

    At most one of ``ph``, ``pco2_mmhg`` and ``base_excess_mmol_l`` may be ``None``: it is
    derived from the other two by the Van Slyke equation in :meth:`resolved` (which needs Hb).
    """

    temperature_c: float = 37.0
    ph: float | None = 7.40
    pco2_mmhg: float | None = 40.0
    dpg_mmol_l: float = 5.0
    base_excess_mmol_l: float | None = 0.0

    def __post_init__(self) -> None:
        missing = [name for name in ACID_BASE_FIELDS if getattr(self, name) is None]
        if len(missing) > 1:
            raise InvalidParameter(
                ", ".join(missing), "left out one at a time: give at least two of pH, PCO2 and base excess", None
            )
        for name, value in asdict(self).items():
            if value is not None:
                _checks.scalar(name, value)

    @property
    def complete(self) -> bool:
        """True when pH, PCO2 and base excess are all set."""
        return all(getattr(self, name) is not None for name in ACID_BASE_FIELDS)

    @property
    def derived_field(self) -> str | None:
        """The acid-base field left for the Van Slyke equation to fill (``None`` when complete)."""
        for name in ACID_BASE_FIELDS:
            if getattr(self, name) is None:
                return name
        return None

    def resolved(self, *, hb_g_dl: float) -> StateConditions:
        """These conditions with the missing acid-base value derived (Van Slyke equation).

        References
        ----------
        Siggaard-Andersen O (1977). The Van Slyke equation. Scand J Clin Lab Invest 37(Suppl
        146):15-20 (from memory).
        """
        if self.complete:
            return self
        from analysis.oxygen.acid_base import complete_blood_gas

        ph, pco2, be = complete_blood_gas(
            hb_g_dl=hb_g_dl, ph=self.ph, pco2_mmhg=self.pco2_mmhg, base_excess_mmol_l=self.base_excess_mmol_l
        )
        return replace(self, ph=ph, pco2_mmhg=pco2, base_excess_mmol_l=be)

    def _require_complete(self) -> None:
        if not self.complete:
            raise InvalidParameter(
                str(self.derived_field),
                "filled in first: call resolved(hb_g_dl=...) to derive it from the other two",
                None,
            )

    def curve_kwargs(self, model: str) -> dict[str, float]:
        """The conditions ``model`` applies, as keyword arguments for :func:`saturation`."""
        if model not in MODEL_CONDITIONS:
            raise InvalidParameter("model", "one of " + ", ".join(MODEL_CONDITIONS), model)
        self._require_complete()
        return {name: float(getattr(self, name)) for name in MODEL_CONDITIONS[model]}

    def not_applied(self, model: str) -> list[str]:
        """Conditions with a non-standard value that ``model`` does not apply to the curve."""
        self._require_complete()
        applied = MODEL_CONDITIONS[model]
        return [
            name
            for name, value in asdict(self).items()
            if name not in applied and abs(value - STANDARD[name]) > 1e-12
        ]


#: Standard arterial conditions (Severinghaus 1979 standard curve).
ARTERIAL_CONDITIONS = StateConditions()

#: Default mixed-venous conditions per state (see the module table; pH from the Van Slyke equation).
DEFAULT_CONDITIONS: dict[str, StateConditions] = {
    "rest": StateConditions(temperature_c=37.0, ph=None, pco2_mmhg=46.0, dpg_mmol_l=5.0, base_excess_mmol_l=0.0),
    "vt1": StateConditions(temperature_c=37.5, ph=None, pco2_mmhg=50.0, dpg_mmol_l=5.0, base_excess_mmol_l=-1.0),
    "vt2": StateConditions(temperature_c=38.3, ph=None, pco2_mmhg=56.0, dpg_mmol_l=5.0, base_excess_mmol_l=-5.0),
    "peak": StateConditions(temperature_c=39.0, ph=None, pco2_mmhg=62.0, dpg_mmol_l=5.0, base_excess_mmol_l=-10.0),
}

#: Default arterial conditions per state (see the module table; Dempsey & Wagner 1999, from memory).
DEFAULT_ARTERIAL_CONDITIONS: dict[str, StateConditions] = {
    "rest": StateConditions(temperature_c=37.0, ph=None, pco2_mmhg=40.0, dpg_mmol_l=5.0, base_excess_mmol_l=0.0),
    "vt1": StateConditions(temperature_c=37.5, ph=None, pco2_mmhg=40.0, dpg_mmol_l=5.0, base_excess_mmol_l=-1.0),
    "vt2": StateConditions(temperature_c=38.3, ph=None, pco2_mmhg=37.0, dpg_mmol_l=5.0, base_excess_mmol_l=-5.0),
    "peak": StateConditions(temperature_c=39.0, ph=None, pco2_mmhg=33.0, dpg_mmol_l=5.0, base_excess_mmol_l=-10.0),
}


@dataclass(frozen=True)
class StatePoint:
    """Gas exchange at one state of the test.

    Attributes
    ----------
    name : str
        ``"rest"``, ``"vt1"``, ``"vt2"`` or ``"peak"`` (or any name present in the conditions).
    vo2_ml_min : float
        Oxygen uptake, mL/min.
    hr_bpm : float or None
        Heart rate, beats/min (for stroke volume).
    pct_vo2_peak : float or None
        VO2 as a percentage of peak VO2 (needed when cardiac output is estimated).
    q_l_min : float or None
        Measured cardiac output, L/min; ``None`` -> Stringer (1997) ESTIMATE.
    spo2_pct : float or None
        Pulse-oximeter saturation at this state, %.
    rer : float or None
        Respiratory exchange ratio at this state (for the alveolar gas equation; 0.8 when
        ``None``).
    """

    name: str
    vo2_ml_min: float
    hr_bpm: float | None = None
    pct_vo2_peak: float | None = None
    q_l_min: float | None = None
    spo2_pct: float | None = None
    rer: float | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise InvalidParameter("name", "a state name such as 'rest', 'vt1', 'vt2' or 'peak'", self.name)
        vo2 = _checks.scalar("vo2_ml_min", self.vo2_ml_min)
        if vo2 <= 0:
            raise InvalidParameter("vo2_ml_min", "above 0 mL/min", self.vo2_ml_min)
        for field in ("hr_bpm", "pct_vo2_peak", "q_l_min", "spo2_pct", "rer"):
            value = getattr(self, field)
            if value is not None:
                _checks.scalar(field, value)
