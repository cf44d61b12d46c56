"""Simulated sessions shared by the pipeline tests (cached per test session: simulation is the
slow part)."""

from __future__ import annotations

import functools

import pytest

from analysis.simulation import simulate_session


@functools.lru_cache(maxsize=None)
def simulated(profile_name: str, protocol_name: str, seed: int, noise: float = 1.0):
    import analysis.simulation as sim

    return simulate_session(getattr(sim, profile_name), getattr(sim, protocol_name), seed=seed, noise=noise)


@pytest.fixture(scope="session")
def cyclist():
    return simulated("TRAINED_CYCLIST", "CYCLE_RAMP_30", 1107)
