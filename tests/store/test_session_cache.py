"""The parsed-session cache of the store: keyed by test and text hash, bounded, copies out."""

from __future__ import annotations

import pandas as pd
import pytest

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.session import Session
from store.session_cache import SessionCache, text_digest
from tests.store.standin import StandInBridge, csv_bytes


class CountingBridge(StandInBridge):
    """The stand-in that counts how often stored session text is parsed."""

    def __init__(self) -> None:
        self.reads = 0

    def read_session_text(self, text: str, *, source_name: str) -> Session:
        self.reads += 1
        return super().read_session_text(text, source_name=source_name)


def _session(v: float) -> Session:
    return Session(meta={"subject_id": "SEL-9"}, breaths=pd.DataFrame({C.T_S: [0.0, 5.0], C.VO2_ML_MIN: [v, v]}))


def test_cache_parses_once_per_text_and_hands_out_copies():
    cache = SessionCache(max_entries=2)
    parsed: list[str] = []

    def parse(text: str) -> Session:
        parsed.append(text)
        return _session(float(len(text)))

    a = cache.get(1, "aaa", parse)
    a.breaths.loc[0, C.VO2_ML_MIN] = -1.0  # a caller changing its copy
    a.meta["subject_id"] = "changed"
    b = cache.get(1, "aaa", parse)
    assert parsed == ["aaa"] and (cache.hits, cache.misses) == (1, 1)
    assert b.breaths[C.VO2_ML_MIN].tolist() == [3.0, 3.0] and b.meta["subject_id"] == "SEL-9"
    cache.get(1, "aaaa", parse)  # another text for the same test: a new key, parsed again
    assert parsed == ["aaa", "aaaa"]
    cache.get(2, "bb", parse)  # third entry: the least recently used ("aaa") is dropped
    assert len(cache) == 2
    cache.get(1, "aaa", parse)
    assert parsed[-1] == "aaa" and len(parsed) == 4
    assert text_digest("aaa") != text_digest("aaaa")
    with pytest.raises(InvalidParameter, match="max_entries"):
        SessionCache(max_entries=0)


def test_repeated_saves_parse_the_stored_session_once(store, users):
    bridge = CountingBridge()
    store.analysis = bridge
    tid = store.import_test(csv_bytes(2500.0, subject="SEL-0420"), file_name="t.csv", actor=users["rhea"]).test_id
    settings, version = store.get_settings(tid)
    for window in (20, 25, 35):
        settings["smoothing"]["window_s"] = window
        version = store.save_settings(tid, settings, actor=users["rhea"], reason="averaging", expected_version=version)
    assert version == 4 and bridge.reads == 1
    assert store.get_results(tid)["window_s"] == 35 and store.get_results(tid)["vo2peak_ml_min"] == pytest.approx(2500.0)
    first = store.load_session(tid)
    first.breaths[C.VO2_ML_MIN] = 0.0  # the caller's copy only
    again = store.load_session(tid)
    assert bridge.reads == 1
    assert again.breaths[C.VO2_ML_MIN].max() == pytest.approx(2500.0)
    assert again.meta["subject_id"] == "SEL-0420"
