"""The Examples sections of the oxygen modules run and give the values they show."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "curves", "content", "fick", "haldane", "decomposition", "unloading", "acid_base", "alveolar", "dyshaemoglobin", "co2_carriage", "scenarios",
]


@pytest.mark.parametrize("name", MODULES)
def test_examples(name):
    module = importlib.import_module(f"analysis.oxygen.{name}")
    result = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert result.attempted > 0
    assert result.failed == 0
