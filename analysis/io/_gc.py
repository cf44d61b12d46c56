"""Pausing Python's cyclic garbage collector while a file is split into cells."""

from __future__ import annotations

import functools
import gc
from collections.abc import Callable
from typing import ParamSpec, TypeVar

P = ParamSpec("P")
R = TypeVar("R")


def gc_paused(fn: Callable[P, R]) -> Callable[P, R]:
    """Run ``fn`` with the cyclic garbage collector paused, and restore it afterwards.

    Splitting a file allocates one list per line. With many long-lived objects in the process
    (pandas, numpy, the dashboard), the collector's passes over all of them cost about as much
    as the parse itself (measured: about 10 ms of 30 ms for a 2,000-breath session file, see
    docs/benchmarks.md). Reference counting still frees every object at once; only reference
    cycles wait for the next collection after the call. The collector is switched back on only
    when it was on at entry, so a caller that turned it off keeps it off.
    """

    @functools.wraps(fn)
    def paused(*args: P.args, **kwargs: P.kwargs) -> R:
        was_enabled = gc.isenabled()
        if was_enabled:
            gc.disable()
        try:
            return fn(*args, **kwargs)
        finally:
            if was_enabled:
                gc.enable()

    return paused
