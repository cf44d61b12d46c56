"""Canonical breath-table columns of a Tidemark session, declared once.

Every column carries its unit in its name. Plausible ranges are the limits beyond which a
value is physiologically impossible for a human exercise test (reject) or merely unusual
(flag). Limits are common practice for adult exercise testing, chosen generously.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ColumnSpec:
    name: str
    label: str
    unit: str
    required: bool = False
    reject_below: float | None = None
    reject_above: float | None = None
    flag_below: float | None = None
    flag_above: float | None = None


T_S = "t_s"
VO2_ML_MIN = "vo2_ml_min"
VCO2_ML_MIN = "vco2_ml_min"
VE_L_MIN = "ve_l_min"
HR_BPM = "hr_bpm"
WORK_W = "work_w"
SPEED_KMH = "speed_kmh"
GRADE_PCT = "grade_pct"
RF_BPM = "rf_bpm"
VT_L = "vt_l"
PETO2_MMHG = "peto2_mmhg"
PETCO2_MMHG = "petco2_mmhg"
SPO2_PCT = "spo2_pct"
PHASE = "phase"
MARKER = "marker"

#: Phase labels allowed in the ``phase`` column.
PHASES: tuple[str, ...] = ("rest", "warmup", "exercise", "recovery")

COLUMNS: dict[str, ColumnSpec] = {
    c.name: c
    for c in (
        ColumnSpec(T_S, "Time", "s", required=True, reject_below=-86400, reject_above=86400),
        ColumnSpec(VO2_ML_MIN, "VO2", "mL/min", True, 0, 10000, 50, 7000),
        ColumnSpec(VCO2_ML_MIN, "VCO2", "mL/min", True, 0, 12000, 40, 8000),
        ColumnSpec(VE_L_MIN, "VE", "L/min", True, 0, 400, 2, 250),
        ColumnSpec(HR_BPM, "Heart rate", "beats/min", False, 0, 260, 25, 230),
        ColumnSpec(WORK_W, "Work rate", "W", False, 0, 3000, None, 800),
        ColumnSpec(SPEED_KMH, "Speed", "km/h", False, 0, 50, None, 30),
        ColumnSpec(GRADE_PCT, "Grade", "%", False, -30, 50, None, 30),
        ColumnSpec(RF_BPM, "Breathing frequency", "breaths/min", False, 0, 150, 3, 80),
        ColumnSpec(VT_L, "Tidal volume", "L", False, 0, 8, 0.1, 5),
        ColumnSpec(PETO2_MMHG, "PETO2", "mmHg", False, 0, 200, 60, 140),
        ColumnSpec(PETCO2_MMHG, "PETCO2", "mmHg", False, 0, 100, 15, 65),
        ColumnSpec(SPO2_PCT, "SpO2", "%", False, 0, 100, 70, None),
        ColumnSpec(PHASE, "Phase", "", False),
        ColumnSpec(MARKER, "Marker", "", False),
    )
}

REQUIRED: tuple[str, ...] = tuple(n for n, c in COLUMNS.items() if c.required)
NUMERIC: tuple[str, ...] = tuple(n for n in COLUMNS if n not in (PHASE, MARKER))

#: Respiratory exchange ratio limits: above 3 is not a human breath (reject); outside
#: 0.6-1.6 is flagged as suspicious (common practice).
RER_REJECT_ABOVE = 3.0
RER_FLAG_BELOW = 0.6
RER_FLAG_ABOVE = 1.6
