"""Simulated sessions of a chosen length for the benchmarks (ground truth is not needed here).

A long simulated cycle test (rest, warm-up, slow ramp, recovery) is repeated end to end, each
copy shifted in time, and cut at the wanted number of breaths: the test's duration, and so the
number of averaged points, grows in proportion to the breaths (a realistic 2.9 s per breath, so
an averaged 10-s point holds about 3.5 breaths at every length and the cost per point measures
the code). Beyond about 30,000 breaths the session is longer than the 24 h a session file may
hold (the time column's limit): such sessions are analysed as built, never written to a file.
"""

from __future__ import annotations

import functools

import numpy as np
import pandas as pd


@functools.lru_cache(maxsize=1)
def _one_test():
    from analysis.simulation import TRAINED_CYCLIST, ProtocolSpec, simulate_session

    protocol = ProtocolSpec(
        mode="cycle", rest_s=1200, warmup_s=1200, warmup_w=120, ramp_w_per_min=9, recovery_s=1200, recovery_w=30
    )
    return simulate_session(TRAINED_CYCLIST, protocol, seed=2000)


def session_of(n_breaths: int):
    """A :class:`analysis.session.Session` of exactly ``n_breaths`` breaths (the first 2,000 are
    the plain simulated test of ``bench_analysis.long_session``)."""
    from analysis.session import Session

    one = _one_test()
    b = one.breaths
    copies = -(-n_breaths // len(b))
    span = float(b["t_s"].iloc[-1]) + float(np.median(np.diff(b["t_s"].to_numpy())))
    parts = []
    for k in range(copies):
        part = b.copy()
        part["t_s"] = part["t_s"] + k * span
        parts.append(part)
    breaths = pd.concat(parts, ignore_index=True).iloc[:n_breaths].reset_index(drop=True)
    breaths["source_row"] = np.arange(len(breaths), dtype=np.int64) + 2
    return Session(dict(one.meta), breaths, source_name=f"bench-{n_breaths}.session.csv")


def session_text(n_breaths: int) -> bytes:
    """The session file bytes of :func:`session_of` (up to about 30,000 breaths: a file holds 24 h)."""
    from analysis.io.session_file import session_to_text

    return session_to_text(session_of(n_breaths)).encode()
