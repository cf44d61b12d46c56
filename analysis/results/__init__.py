"""The typed result of an analysis and its JSON form.

Public API
----------
:class:`TestResults` (composed of part records), :data:`CAUTIONS`, :data:`RESULTS_SCHEMA_VERSION`,
:func:`to_json` / :func:`from_json` (the one codec, :mod:`analysis.records`), and
:func:`results_from_json` (``from_json(TestResults, data)``).
"""

from typing import Any

from analysis.records import from_json, record_fields, to_json
from analysis.results.session_parts import AveragingUsed, BreathCounts, Subject
from analysis.results.test_results import CAUTIONS, RESULTS_SCHEMA_VERSION, TestResults


def results_from_json(data: dict[str, Any]) -> TestResults:
    """:class:`TestResults` read back from its JSON form (``to_json(results)``)."""
    return from_json(TestResults, data)


#: Stable top-level keys of the JSON form, in order (tests assert that they are always present).
TOP_LEVEL_KEYS: tuple[str, ...] = ("schema_version", *(i.key for i in record_fields(TestResults)))

__all__ = [
    "AveragingUsed",
    "BreathCounts",
    "CAUTIONS",
    "RESULTS_SCHEMA_VERSION",
    "Subject",
    "TOP_LEVEL_KEYS",
    "TestResults",
    "from_json",
    "results_from_json",
    "to_json",
]
