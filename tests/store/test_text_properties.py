"""Property tests: any text a lab may type is stored and read back unchanged; the settings diff
records exactly what changed."""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from store.review import changed_fields
from tests.store.standin import csv_bytes

# Any Unicode text without NUL (refused by design) or surrogates, trimmed as the store trims.
free_text = st.text(
    alphabet=st.characters(blacklist_categories=("Cs",), blacklist_characters="\x00"), min_size=1, max_size=200
).map(str.strip).filter(bool)


@pytest.mark.parametrize("store_url", ["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)], indirect=True)
@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(name=free_text, reason=st.text(max_size=300).filter(lambda t: "\x00" not in t))
def test_display_names_and_reasons_round_trip(store, users, name, reason):
    # Parameterised queries keep text verbatim (common practice; OWASP SQL Injection Prevention).
    person_id = _one_person(store, users)
    before = store.get_person(person_id).display_name
    store.update_person(person_id, actor=users["rhea"], display_name=name, reason=reason)
    assert store.get_person(person_id).display_name == name
    if before != name:
        entry = store.audit_log(person_id=person_id)[-1]
        assert (entry.action, entry.old_value, entry.new_value, entry.reason) == ("person_edit", before, name, reason)


def _one_person(store, users) -> int:
    people = store.list_people()
    if people:
        return people[0].id
    return store.import_test(csv_bytes(3000.0, subject="SEL-500"), file_name="p.csv", actor=users["rhea"]).person_id


json_leaf = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6), st.text(max_size=8),
                      st.lists(st.integers(0, 500), max_size=4))
settings_tree = st.recursive(json_leaf, lambda kids: st.dictionaries(st.text("abcxyz", min_size=1, max_size=3), kids,
                                                                      max_size=4), max_leaves=12)


def _apply(old, changes):
    """Rebuild ``new`` from ``old`` and the reported changes (None where a key disappeared)."""
    import copy

    out = copy.deepcopy(old) if isinstance(old, dict) else {}
    for path, _, new in changes:
        if path == "":
            return new
        node = out
        parts = path.split(".")
        for part in parts[:-1]:
            if not isinstance(node.get(part), dict):
                node[part] = {}
            node = node[part]
        node[parts[-1]] = new
    return out


def _drop_none(value):
    if isinstance(value, dict):
        return {k: _drop_none(v) for k, v in value.items() if v is not None}
    return value


@settings(max_examples=200, deadline=None)
@given(old=st.dictionaries(st.text("abcxyz", min_size=1, max_size=3), settings_tree, max_size=5),
       new=st.dictionaries(st.text("abcxyz", min_size=1, max_size=3), settings_tree, max_size=5))
def test_settings_diff_is_complete_and_minimal(old, new):
    changes = changed_fields(old, new)
    # Complete: applying the changes to old gives new (absent and None count as the same).
    assert _drop_none(_apply(old, changes)) == _drop_none(new)
    # Minimal: every reported change really differs; none reported for identical settings.
    assert all(before != after for _, before, after in changes)
    assert changed_fields(new, new) == []


def test_json_of_stored_values_has_no_nan_and_plain_numbers():
    # JSON (RFC 8259) has no NaN or Infinity; results may carry them from NumPy.
    import json

    import numpy as np

    from store.core import to_json

    text = to_json({"vo2": np.float64(3012.5), "missing": float("nan"), "rows": (np.int64(4), float("inf"))})
    assert json.loads(text) == {"missing": None, "rows": [4, None], "vo2": 3012.5}
