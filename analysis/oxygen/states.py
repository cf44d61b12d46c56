"""Exercise states (rest, VT1, VT2, peak) and the blood conditions assumed at each.

The default conditions describe mixed venous blood, which is what the Fick a-vO2 difference
refers to. They are representative values recalled from the exercise-physiology literature
(from memory), to be edited when measured blood gases are available:

======  =====  =====  ==========  ====  ====  =============================================
state   T °C   pH     PCO2 mmHg   DPG   BE    basis
======  =====  =====  ==========  ====  ====  =============================================
rest    37.0   7.37   46          5.0   0     mixed venous at rest (common practice)
vt1     37.5   7.35   50          5.0   0     core temperature up ~0.5 °C, little lactate
vt2     38.3   7.28   56          5.0   -5    lactate accumulating (from memory)
peak    39.0   7.20   62          5.0   -10   hot, acid, CO2-rich blood (from memory)
======  =====  =====  ==========  ====  ====  =============================================

2,3-BPG does not change measurably within one test (it changes over hours to days, e.g. at
altitude), so it stays 5.0 mmol/L (from memory); edit it for blood with known BPG changes.
Arterial blood is taken at the standard conditions (37 °C, pH 7.40, PCO2 40, BE 0) unless
``arterial_conditions`` is given.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks
from analysis.oxygen.curves import MODEL_CONDITIONS, STANDARD

#: State names in test order.
STATE_NAMES: tuple[str, ...] = ("rest", "vt1", "vt2", "peak")


@dataclass(frozen=True)
class StateConditions:
    """Blood conditions for one curve: temperature (°C), pH (at 37 °C), PCO2 (mmHg),
    2,3-BPG (mmol/L) and base excess (mmol/L)."""

    temperature_c: float = 37.0
    ph: float = 7.40
    pco2_mmhg: float = 40.0
    dpg_mmol_l: float = 5.0
    base_excess_mmol_l: float = 0.0

    def __post_init__(self) -> None:
        for name, value in asdict(self).items():
            _checks.scalar(name, value)

    def curve_kwargs(self, model: str) -> dict[str, float]:
        """The conditions ``model`` applies, as keyword arguments for :func:`saturation`."""
        if model not in MODEL_CONDITIONS:
            raise InvalidParameter("model", "one of " + ", ".join(MODEL_CONDITIONS), model)
        return {name: float(getattr(self, name)) for name in MODEL_CONDITIONS[model]}

    def not_applied(self, model: str) -> list[str]:
        """Conditions with a non-standard value that ``model`` does not apply to the curve."""
        applied = MODEL_CONDITIONS[model]
        return [
            name
            for name, value in asdict(self).items()
            if name not in applied and abs(value - STANDARD[name]) > 1e-12
        ]


#: Standard arterial conditions (Severinghaus 1979 standard curve).
ARTERIAL_CONDITIONS = StateConditions()

#: Default mixed-venous conditions per state (see the module table; from memory / common practice).
DEFAULT_CONDITIONS: dict[str, StateConditions] = {
    "rest": StateConditions(temperature_c=37.0, ph=7.37, pco2_mmhg=46.0, dpg_mmol_l=5.0, base_excess_mmol_l=0.0),
    "vt1": StateConditions(temperature_c=37.5, ph=7.35, pco2_mmhg=50.0, dpg_mmol_l=5.0, base_excess_mmol_l=0.0),
    "vt2": StateConditions(temperature_c=38.3, ph=7.28, pco2_mmhg=56.0, dpg_mmol_l=5.0, base_excess_mmol_l=-5.0),
    "peak": StateConditions(temperature_c=39.0, ph=7.20, pco2_mmhg=62.0, dpg_mmol_l=5.0, base_excess_mmol_l=-10.0),
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
    """

    name: str
    vo2_ml_min: float
    hr_bpm: float | None = None
    pct_vo2_peak: float | None = None
    q_l_min: float | None = None
    spo2_pct: float | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise InvalidParameter("name", "a state name such as 'rest', 'vt1', 'vt2' or 'peak'", self.name)
        vo2 = _checks.scalar("vo2_ml_min", self.vo2_ml_min)
        if vo2 <= 0:
            raise InvalidParameter("vo2_ml_min", "above 0 mL/min", self.vo2_ml_min)
        for field in ("hr_bpm", "pct_vo2_peak", "q_l_min", "spo2_pct"):
            value = getattr(self, field)
            if value is not None:
                _checks.scalar(field, value)
