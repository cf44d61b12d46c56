"""Helpers shared by tests (import as ``from tests.support import ...``)."""

from __future__ import annotations

import functools
import os
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

if TYPE_CHECKING:
    from analysis.results import TestResults

ROOT = Path(__file__).resolve().parents[1]
ARTIFACTS = ROOT / "test-artifacts"


def skip_or_fail(reason: str, *, require_env: str) -> None:
    """Skip with ``reason``; fail instead when the environment variable ``require_env`` is set (CI)."""
    if os.environ.get(require_env):
        pytest.fail(f"{reason} (and {require_env} is set, so this must not be skipped)")
    pytest.skip(reason)


#: The cycling demo session (a complete maximal test with both thresholds found).
CYCLE_DEMO = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"


@functools.cache
def demo_result(path: Path = CYCLE_DEMO, *, with_oxygen: bool = False) -> TestResults:
    """The typed result of a demo session under the default settings (computed once per run)."""
    from analysis.io import read_session
    from analysis.pipeline import analyze_session

    return analyze_session(read_session(path.read_bytes(), file_name=path.name), with_oxygen=with_oxygen)


def result_with(
    *,
    vo2_peak_ml_min: float,
    vt1_vo2_ml_min: float | None = None,
    ve_vco2_slope_whole_exercise: float | None = None,
    o2_pulse_peak_ml_beat: float | None = None,
    body_mass_kg: float = 70.0,
) -> TestResults:
    """The cycling demo's result with the values Progress follows set by hand (for tables whose
    changes are known exactly); VO2peak per kg follows from ``body_mass_kg``."""
    import dataclasses

    r = demo_result()
    vt1 = None if vt1_vo2_ml_min is None or r.vt1 is None else dataclasses.replace(r.vt1, vo2_ml_min=vt1_vo2_ml_min)
    return dataclasses.replace(
        r,
        peak=dataclasses.replace(r.peak, vo2_ml_min=vo2_peak_ml_min, vo2_ml_kg_min=vo2_peak_ml_min / body_mass_kg),
        vt1=vt1,
        indices=dataclasses.replace(
            r.indices, ve_vco2_slope_whole_exercise=ve_vco2_slope_whole_exercise, o2_pulse_peak_ml_beat=o2_pulse_peak_ml_beat
        ),
    )
