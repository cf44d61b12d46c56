"""Helpers shared by the store tests (kept out of conftest so test modules can import them)."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

from store import Store, open_store
from store.passwords import ScryptParams
from tests.store.standin import StandInBridge

#: Password of every template account.
PASSWORD = "saltmarsh-tide-42"
#: Cheap parameters for test accounts only (production default: N=2**17).
CHEAP = ScryptParams(n=2**10, r=8, p=1)
ACCOUNTS = (("ada", "admin"), ("rhea", "reviewer"), ("remy", "reviewer"), ("vic", "viewer"))


class ManualClock:
    """A clock the test moves by hand (timezone-aware UTC)."""

    def __init__(self) -> None:
        self.now = datetime(2026, 3, 14, 9, 0, tzinfo=UTC)

    def __call__(self) -> datetime:
        return self.now

    def advance(self, **kwargs: float) -> None:
        self.now += timedelta(**kwargs)


def open_test_store(url: str, clock: ManualClock | None = None) -> Store:
    """A store on ``url`` with the analysis stand-in and cheap password hashing (real clock without ``clock``)."""
    store = open_store(url, clock=clock)
    store.analysis = StandInBridge()
    store.password_params = CHEAP
    return store
