"""Physiological simulator of breath-by-breath exercise tests with known ground truth.

Public API
----------
Inputs
    :class:`SubjectProfile`, :class:`ProtocolSpec`
Simulation
    :func:`simulate_session`, :func:`noise_free_course`
Hard kinds and suites (ground truth for threshold and interpretation checks)
    :class:`ModelExtras`, :class:`BreathEvents`, :data:`ALL_KINDS`, :data:`ORIGINAL_KINDS`,
    :data:`HARD_KINDS`, :func:`case_inputs`, :func:`simulate_case`, :func:`simulation_suite`,
    :class:`SimulatedCase`, :class:`CaseTruth`
Demo cast (fictional people of the Saltmarsh Exercise Lab)
    :data:`DEMO_TESTS`, :class:`DemoTest`, :func:`generate_demo`, and the named profiles and
    protocols (``TRAINED_CYCLIST``, ``RECREATIONAL_RUNNER``, ``REHAB_BASELINE``,
    ``REHAB_FOLLOWUP``, ``HEART_FAILURE``, ``SUBMAX_SCREEN``; ``CYCLE_RAMP_30``, ...)

The model is described with its equations in ``docs/simulation.md``.
"""

from analysis.simulation.cart_noise import CartNoise
from analysis.simulation.cast import (
    CYCLE_RAMP_8,
    CYCLE_RAMP_10,
    CYCLE_RAMP_12,
    CYCLE_RAMP_30,
    CYCLE_SUBMAX,
    DEMO_TESTS,
    HEART_FAILURE,
    RECREATIONAL_RUNNER,
    REHAB_BASELINE,
    REHAB_FOLLOWUP,
    SUBMAX_SCREEN,
    TRAINED_CYCLIST,
    TREADMILL_RAMP,
    DemoTest,
    generate_demo,
)
from analysis.simulation.extras import BreathEvents, ModelExtras
from analysis.simulation.kinds import ALL_KINDS, HARD_KINDS, ORIGINAL_KINDS, CaseInputs, case_inputs
from analysis.simulation.profiles import MODES, SEXES, STOP_RULES, ProtocolSpec, SubjectProfile
from analysis.simulation.simulate import LAB_NAME, noise_free_course, simulate_session
from analysis.simulation.suite import NOISE_LEVELS, CaseTruth, SimulatedCase, simulate_case, simulation_suite, truth_table

__all__ = [
    "SubjectProfile",
    "ProtocolSpec",
    "SEXES",
    "MODES",
    "STOP_RULES",
    "simulate_session",
    "noise_free_course",
    "ModelExtras",
    "BreathEvents",
    "CartNoise",
    "ALL_KINDS",
    "ORIGINAL_KINDS",
    "HARD_KINDS",
    "CaseInputs",
    "case_inputs",
    "simulate_case",
    "simulation_suite",
    "SimulatedCase",
    "CaseTruth",
    "NOISE_LEVELS",
    "truth_table",
    "DemoTest",
    "DEMO_TESTS",
    "generate_demo",
    "LAB_NAME",
    "TRAINED_CYCLIST",
    "RECREATIONAL_RUNNER",
    "REHAB_BASELINE",
    "REHAB_FOLLOWUP",
    "HEART_FAILURE",
    "SUBMAX_SCREEN",
    "CYCLE_RAMP_30",
    "CYCLE_RAMP_10",
    "CYCLE_RAMP_12",
    "CYCLE_RAMP_8",
    "CYCLE_SUBMAX",
    "TREADMILL_RAMP",
]
