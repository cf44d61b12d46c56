"""Shared test configuration. Fixtures specific to a domain live in that folder's conftest."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.support import ARTIFACTS


@pytest.fixture(scope="session")
def artifacts_dir() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
