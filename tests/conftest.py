"""Shared test configuration. Fixtures specific to a domain live in that folder's conftest."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.support import ARTIFACTS


@pytest.fixture(scope="session")
def artifacts_dir() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS


# Property-based tests explore new inputs on developer machines; on CI (CI=true) they replay a
# fixed, derandomised sequence so that a red build always means a change in the code.
from hypothesis import settings as _hypothesis_settings  # noqa: E402
import os as _os  # noqa: E402

_hypothesis_settings.register_profile("ci", derandomize=True, print_blob=True)
_hypothesis_settings.register_profile("dev", print_blob=True)
_hypothesis_settings.load_profile("ci" if _os.environ.get("CI") else "dev")
