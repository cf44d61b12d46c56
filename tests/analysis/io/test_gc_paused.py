"""The readers pause the cyclic garbage collector only while they run."""

from __future__ import annotations

import gc

import pytest

from analysis.errors import ImportRejected
from analysis.io import read_session
from analysis.io._gc import gc_paused

SESSION = b"t_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n3,310,255,10.5\n"


def test_collector_is_off_inside_and_back_on_after():
    seen = []
    probe = gc_paused(lambda: seen.append(gc.isenabled()) or 42)
    assert gc.isenabled()
    assert probe() == 42
    assert seen == [False] and gc.isenabled()


def test_collector_back_on_after_an_error():
    assert gc.isenabled()
    with pytest.raises(ImportRejected):
        read_session(b"t_s,vo2_ml_min\n0,300\n", file_name="short.session.csv")
    assert gc.isenabled()


def test_a_caller_that_turned_it_off_keeps_it_off():
    gc.disable()
    try:
        s = read_session(SESSION, file_name="x.session.csv")
        assert not gc.isenabled()
    finally:
        gc.enable()
    assert s.breaths["vo2_ml_min"].tolist() == [300.0, 310.0]


def test_wrapped_readers_keep_their_names_and_documentation():
    from analysis.io import import_bytes

    assert read_session.__name__ == "read_session" and "Examples" in (read_session.__doc__ or "")
    assert import_bytes.__name__ == "import_bytes" and "Parameters" in (import_bytes.__doc__ or "")
