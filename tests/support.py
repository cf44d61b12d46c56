"""Helpers shared by tests (import as ``from tests.support import ...``)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
ARTIFACTS = ROOT / "test-artifacts"


def skip_or_fail(reason: str, *, require_env: str) -> None:
    """Skip with ``reason``; fail instead when the environment variable ``require_env`` is set (CI)."""
    if os.environ.get(require_env):
        pytest.fail(f"{reason} (and {require_env} is set, so this must not be skipped)")
    pytest.skip(reason)
