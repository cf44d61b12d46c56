"""A small, bounded, thread-safe cache of parsed sessions, keyed by test id and session hash.

Reading a stored session back (the strict session-file reader) is the slow part of a settings
save; the stored text of a test does not change, so the parsed session is kept per
``(test id, SHA-256 of the stored text)``. A different text gives a different key, so the cache
can never hand back a stale session; the least recently used entry is dropped when full.
Callers get their own copy (DataFrames are mutable), never the cached object.
"""

from __future__ import annotations

import copy
import hashlib
import threading
from collections import OrderedDict
from collections.abc import Callable

from analysis.errors import require
from analysis.session import Session

#: Sessions kept per store object (a 2,000-breath session is roughly 1 MB in memory).
DEFAULT_MAX_SESSIONS = 8


def text_digest(text: str) -> str:
    """SHA-256 (hex) of the stored session text."""
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def copy_session(session: Session) -> Session:
    """An independent copy: new frames and metadata, so a caller cannot alter the cached one."""
    return Session(
        meta=copy.deepcopy(session.meta),
        breaths=session.breaths.copy(),
        flags=session.flags.copy(),
        source_name=session.source_name,
    )


class SessionCache:
    """Least-recently-used cache ``(test_id, text digest) -> Session``.

    Parameters
    ----------
    max_entries : int
        Most sessions kept (at least 1).
    """

    def __init__(self, max_entries: int = DEFAULT_MAX_SESSIONS) -> None:
        require(isinstance(max_entries, int) and max_entries >= 1, "max_entries", "a whole number of at least 1",
                max_entries)
        self.max_entries = max_entries
        self._entries: OrderedDict[tuple[int, str], Session] = OrderedDict()
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    def __len__(self) -> int:
        return len(self._entries)

    def get(self, test_id: int, text: str, parse: Callable[[str], Session]) -> Session:
        """The parsed session of ``text`` (parsed with ``parse`` on a miss), as a fresh copy."""
        key = (int(test_id), text_digest(text))
        with self._lock:
            cached = self._entries.get(key)
            if cached is not None:
                self._entries.move_to_end(key)
                self.hits += 1
                return copy_session(cached)
            self.misses += 1
        parsed = parse(text)  # outside the lock: other tests' reads need not wait
        with self._lock:
            self._entries[key] = parsed
            self._entries.move_to_end(key)
            while len(self._entries) > self.max_entries:
                self._entries.popitem(last=False)
        return copy_session(parsed)

    def clear(self) -> None:
        with self._lock:
            self._entries.clear()
