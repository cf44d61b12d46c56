"""Oxygen delivery and unloading: dissociation curves, O2 content, Fick, Haldane.

Public API
----------
Curves (:mod:`analysis.oxygen.curves`)
    :func:`saturation`, :func:`po2_at_saturation`, :func:`p50`, :data:`MODELS`,
    :data:`MODEL_CONDITIONS`, :data:`STANDARD`
Content (:mod:`analysis.oxygen.content`)
    :func:`o2_content_ml_dl`, :func:`saturation_from_spo2`, :data:`DEFAULT_HUEFNER_ML_G`
Fick (:mod:`analysis.oxygen.fick`)
    :func:`avo2_difference_ml_dl`, :func:`cardiac_output_l_min`,
    :func:`stringer_avo2_difference_ml_dl`, :func:`stringer_cardiac_output_l_min`,
    :func:`stroke_volume_ml`
States and comparison (:mod:`analysis.oxygen.states`, :mod:`analysis.oxygen.comparison`)
    :class:`StatePoint`, :class:`StateConditions`, :data:`DEFAULT_CONDITIONS`,
    :func:`oxygen_comparison`, :class:`OxygenComparison`, :class:`StateOxygen`
Unloading (:mod:`analysis.oxygen.unloading`)
    :func:`arterial_content_ml_dl`, :func:`curve_unloading_ml_dl`
Haldane (:mod:`analysis.oxygen.haldane`)
    :func:`blood_co2_content_ml_dl`, :func:`haldane_extra_co2_ml_dl`, :func:`haldane_factor`
Inspired to arterial (:mod:`analysis.oxygen.alveolar`), acid-base (:mod:`analysis.oxygen.acid_base`)
    :func:`alveolar_po2_mmhg`, :func:`arterial_po2_mmhg`, :func:`barometric_pressure_mmhg`,
    :func:`complete_blood_gas`
Dyshaemoglobins (:mod:`analysis.oxygen.dyshaemoglobin`)
    :func:`functional_saturation`
The cascade at peak (:mod:`analysis.oxygen.cascade`, :mod:`analysis.oxygen.scenarios`,
:mod:`analysis.oxygen.co2_carriage`, :mod:`analysis.oxygen.pathway`)
    :func:`oxygen_cascade`, :func:`solve_forward`, :func:`what_if`, :func:`sensitivity`,
    :func:`co2_carriage`, :func:`resting_hyperventilation`, :func:`oxygen_pathway`,
    :class:`OxygenPathway`, :data:`SCENARIO_CODES`
"""

from analysis.oxygen.acid_base import complete_blood_gas
from analysis.oxygen.alveolar import alveolar_po2_mmhg, arterial_po2_mmhg, barometric_pressure_mmhg
from analysis.oxygen.cascade import OxygenCascade, oxygen_cascade, solve_forward
from analysis.oxygen.co2_carriage import Co2Carriage, Hyperventilation, co2_carriage, resting_hyperventilation
from analysis.oxygen.comparison import (
    CAUTION,
    PVO2_FLOOR_MMHG,
    OxygenComparison,
    StateOxygen,
    UnloadingParts,
    oxygen_comparison,
)
from analysis.oxygen.content import (
    DEFAULT_HUEFNER_ML_G,
    O2_SOLUBILITY_ML_DL_MMHG,
    o2_content_ml_dl,
    saturation_from_spo2,
    spo2_note,
)
from analysis.oxygen.curves import MODEL_CONDITIONS, MODELS, STANDARD, p50, po2_at_saturation, saturation
from analysis.oxygen.dyshaemoglobin import functional_saturation
from analysis.oxygen.fick import (
    avo2_difference_ml_dl,
    cardiac_output_l_min,
    stringer_avo2_difference_ml_dl,
    stringer_cardiac_output_l_min,
    stroke_volume_ml,
)
from analysis.oxygen.haldane import (
    blood_co2_content_at_base_excess_ml_dl,
    blood_co2_content_ml_dl,
    haldane_extra_co2_ml_dl,
    haldane_factor,
)
from analysis.oxygen.pathway import OxygenPathway, explore, oxygen_pathway
from analysis.oxygen.scenarios import SCENARIO_CODES, Sensitivity, WhatIf, sensitivity, what_if
from analysis.oxygen.states import (
    ARTERIAL_CONDITIONS,
    DEFAULT_ARTERIAL_CONDITIONS,
    DEFAULT_CONDITIONS,
    STATE_NAMES,
    StateConditions,
    StatePoint,
)
from analysis.oxygen.unloading import arterial_content_ml_dl, curve_unloading_ml_dl

__all__ = [
    "DEFAULT_ARTERIAL_CONDITIONS",
    "SCENARIO_CODES",
    "Co2Carriage",
    "Hyperventilation",
    "OxygenCascade",
    "OxygenPathway",
    "Sensitivity",
    "WhatIf",
    "alveolar_po2_mmhg",
    "arterial_po2_mmhg",
    "barometric_pressure_mmhg",
    "co2_carriage",
    "complete_blood_gas",
    "explore",
    "functional_saturation",
    "oxygen_cascade",
    "oxygen_pathway",
    "resting_hyperventilation",
    "sensitivity",
    "solve_forward",
    "what_if",
    "ARTERIAL_CONDITIONS",
    "CAUTION",
    "DEFAULT_CONDITIONS",
    "DEFAULT_HUEFNER_ML_G",
    "MODELS",
    "MODEL_CONDITIONS",
    "O2_SOLUBILITY_ML_DL_MMHG",
    "PVO2_FLOOR_MMHG",
    "STANDARD",
    "STATE_NAMES",
    "OxygenComparison",
    "StateConditions",
    "StateOxygen",
    "StatePoint",
    "UnloadingParts",
    "avo2_difference_ml_dl",
    "blood_co2_content_at_base_excess_ml_dl",
    "blood_co2_content_ml_dl",
    "arterial_content_ml_dl",
    "cardiac_output_l_min",
    "curve_unloading_ml_dl",
    "haldane_extra_co2_ml_dl",
    "haldane_factor",
    "o2_content_ml_dl",
    "oxygen_comparison",
    "p50",
    "po2_at_saturation",
    "saturation",
    "saturation_from_spo2",
    "spo2_note",
    "stringer_avo2_difference_ml_dl",
    "stringer_cardiac_output_l_min",
    "stroke_volume_ml",
]
