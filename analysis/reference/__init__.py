"""Reference (predicted) values and functional classes.

Public API
----------
:func:`friend_vo2max_ml_kg_min`, :func:`pct_predicted`, :func:`tanaka_hr_max_bpm`,
:func:`weber_class`, :func:`ventilatory_class`, plus the description tables
:data:`WEBER_DESCRIPTIONS` and :data:`VENTILATORY_DESCRIPTIONS`.
"""

from analysis.reference._validate import mode_code
from analysis.reference.classes import (
    VENTILATORY_DESCRIPTIONS,
    WEBER_DESCRIPTIONS,
    ventilatory_class,
    weber_class,
)
from analysis.reference.friend import friend_vo2max_ml_kg_min, pct_predicted
from analysis.reference.heart_rate import brawner_hr_max_bpm, tanaka_hr_max_bpm
from analysis.reference.summary import Classes, ReferenceValues, reference_values

__all__ = [
    "Classes",
    "ReferenceValues",
    "brawner_hr_max_bpm",
    "reference_values",
    "VENTILATORY_DESCRIPTIONS",
    "WEBER_DESCRIPTIONS",
    "friend_vo2max_ml_kg_min",
    "mode_code",
    "pct_predicted",
    "tanaka_hr_max_bpm",
    "ventilatory_class",
    "weber_class",
]
