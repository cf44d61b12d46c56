"""The Examples sections of the import package's docstrings run and give what they show."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = ["analysis.io.importer", "analysis.io.session_file", "analysis.io.mapping", "analysis.io._units"]


@pytest.mark.parametrize("name", MODULES)
def test_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
