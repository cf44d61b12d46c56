"""The Examples in the docstrings of this area run and give what they show."""

import doctest
import importlib

import pytest

MODULES = [
    "analysis.indices.ventilatory_efficiency",
    "analysis.indices.oues",
    "analysis.indices.o2_pulse",
    "analysis.indices.mets",
    "analysis.indices.heart_rate",
    "analysis.indices.breathing_reserve",
    "analysis.indices.substrate",
    "analysis.reference.friend",
    "analysis.reference.classes",
    "analysis.reference.heart_rate",
    "analysis.exports",
]


@pytest.mark.parametrize("name", MODULES)
def test_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
