"""Units a source column may be in, and the factor to the canonical unit.

Conversion factors are SI definitions (common practice): 1 L = 1000 mL; 1 min = 60 s;
1 m/s = 3.6 km/h; 1 mile = 1.609344 km (international mile, 1959);
1 mmHg = 133.322387415 Pa, so 1 kPa = 7.5006158 mmHg.
"""

from __future__ import annotations

import re

from analysis import columns as C

#: Unit codes (as used in mapping profiles) -> readable label.
UNIT_LABELS: dict[str, str] = {
    "ml_min": "mL/min",
    "l_min": "L/min",
    "s": "s",
    "min": "min",
    "ms": "ms",
    "mm:ss": "mm:ss",
    "h:mm:ss": "h:mm:ss",
    "per_min": "1/min",
    "w": "W",
    "km_h": "km/h",
    "m_s": "m/s",
    "mph": "mph",
    "pct": "%",
    "l": "L",
    "ml": "mL",
    "mmhg": "mmHg",
    "kpa": "kPa",
    "per_kg": "per kg",
}

_KPA_TO_MMHG = 1000.0 / 133.322387415

#: canonical column -> {unit code: factor to the canonical unit}. The first code is canonical.
UNIT_FACTORS: dict[str, dict[str, float]] = {
    C.T_S: {"s": 1.0, "min": 60.0, "ms": 0.001, "mm:ss": 1.0, "h:mm:ss": 1.0},
    C.VO2_ML_MIN: {"ml_min": 1.0, "l_min": 1000.0},
    C.VCO2_ML_MIN: {"ml_min": 1.0, "l_min": 1000.0},
    C.VE_L_MIN: {"l_min": 1.0, "ml_min": 0.001},
    C.HR_BPM: {"per_min": 1.0},
    C.WORK_W: {"w": 1.0},
    C.SPEED_KMH: {"km_h": 1.0, "m_s": 3.6, "mph": 1.609344},
    C.GRADE_PCT: {"pct": 1.0},
    C.RF_BPM: {"per_min": 1.0},
    C.VT_L: {"l": 1.0, "ml": 0.001},
    C.PETO2_MMHG: {"mmhg": 1.0, "kpa": _KPA_TO_MMHG},
    C.PETCO2_MMHG: {"mmhg": 1.0, "kpa": _KPA_TO_MMHG},
    C.SPO2_PCT: {"pct": 1.0},
}

#: Canonical unit code of each numeric column.
CANONICAL_UNIT: dict[str, str] = {name: next(iter(units)) for name, units in UNIT_FACTORS.items()}

# Patterns are tried in order on the lower-cased unit text with spaces removed.
_UNIT_PATTERNS: tuple[tuple[str, re.Pattern[str]], ...] = tuple(
    (code, re.compile(pattern))
    for code, pattern in (
        ("per_kg", r".*(/kg|kg-1|kg\^-1|perkg|·kg|\.kg|kg/).*"),
        ("ml_min", r"ml(/|·|\.|\*)?min(-1|\^-1)?|ml/m"),
        ("l_min", r"l(/|·|\.|\*)?min(-1|\^-1)?|lpm|l/m"),
        ("km_h", r"km/h|kmh|kph|km/hr|km(·|\.)?h(-1|\^-1)"),
        ("m_s", r"m/s|m(·|\.)s(-1|\^-1)"),
        ("mph", r"mph|mi/h"),
        ("mmhg", r"mmhg|torr"),
        ("kpa", r"kpa"),
        ("per_min", r"bpm|1/min|/min|b/min|br/min|beats/min|breaths/min|min(-1|\^-1)"),
        ("pct", r"%|pct|percent"),
        ("w", r"w|watts?"),
        ("ms", r"ms|msec"),
        ("s", r"s|sec|secs|seconds?"),
        ("min", r"min|mins|minutes?"),
        ("h:mm:ss", r"h{1,2}:mm:ss(\.s+)?"),
        ("mm:ss", r"m{1,2}:ss(\.s+)?|min:s|min:sec"),
        ("ml", r"ml"),
        ("l", r"l|litres?|liters?"),
    )
)

#: Words describing measurement conditions, not units; ignored in unit text and headers.
CONDITION_WORDS: tuple[str, ...] = ("btps", "stpd", "atps")


def unit_code(text: str) -> str | None:
    """The unit code written in ``text`` (``'L/min'`` -> ``'l_min'``), or ``None``.

    Examples
    --------
    >>> unit_code("mL/min"), unit_code("L/min, STPD"), unit_code("ml/kg/min"), unit_code("beats")
    ('ml_min', 'l_min', 'per_kg', None)
    """
    t = text.strip().lower().replace(" ", "").replace("\u00b7", "·").replace("⁻¹", "-1")
    t = t.strip("()[]{}")
    for word in CONDITION_WORDS:
        t = t.replace(word, "")
    t = t.strip(",;")
    if not t:
        return None
    for code, pattern in _UNIT_PATTERNS:
        if pattern.fullmatch(t):
            return code
    return None


def factor(canonical: str, code: str) -> float:
    """Multiplier from ``code`` to the canonical unit of ``canonical``."""
    return UNIT_FACTORS[canonical][code]


def allowed_units(canonical: str) -> tuple[str, ...]:
    """Unit codes a column mapped to ``canonical`` may be in (empty for text columns)."""
    return tuple(UNIT_FACTORS.get(canonical, {}))
