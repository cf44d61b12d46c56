"""Plain, immutable records returned by the store (no database objects leak out)."""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime
from typing import Any

#: Roles in increasing order of rights: a viewer reads; a reviewer also imports, edits,
#: signs off and shares; an admin also manages accounts and soft-deletes.
ROLE_ORDER: tuple[str, ...] = ("viewer", "reviewer", "admin")


@dataclass(frozen=True)
class User:
    """A staff account as seen by the application (never carries the password hash)."""

    id: int
    username: str
    role: str
    is_active: bool = True
    auth_source: str = "local"
    is_demo: bool = False

    def has_role(self, role: str) -> bool:
        """True when this account's role is ``role`` or above."""
        return ROLE_ORDER.index(self.role) >= ROLE_ORDER.index(role)


@dataclass(frozen=True)
class Operator:
    """The person at the command line, trusted because they already hold the store itself.

    Only :mod:`tidemark.commands.users` acts as the operator; the dashboard always passes a
    signed-in :class:`User`.
    """

    name: str = "command line"


#: The command-line operator (see :class:`Operator`).
LOCAL_OPERATOR = Operator()


@dataclass(frozen=True)
class ImportResult:
    """What :meth:`store.Store.import_test` did.

    ``duplicate`` is True when the same bytes were already stored; ``test_id`` then names the
    existing test and nothing new was written.
    """

    test_id: int
    person_id: int
    duplicate: bool
    version: int
    flags: list[dict[str, Any]] = field(default_factory=list)
    results_error: str | None = None


@dataclass(frozen=True)
class PersonSummary:
    id: int
    code: str
    display_name: str | None
    sex: str | None
    birth_year: int | None
    n_tests: int
    last_test_date: str | None


@dataclass(frozen=True)
class TestSummary:
    """One row of the test list, with headline numbers of the current analysis version."""

    __test__ = False  # not a pytest class

    id: int
    person_id: int
    person_code: str
    display_name: str | None
    test_date: str | None
    protocol: str | None
    file_name: str
    version: int
    vo2peak_ml_min: float | None
    vt1_vo2_ml_min: float | None
    ve_vco2_slope: float | None
    signed_version: int | None
    results_error: str | None
    imported_at: datetime


@dataclass(frozen=True)
class SignOffRecord:
    test_id: int
    version: int
    signed_by: str
    signed_at: datetime
    note: str


@dataclass(frozen=True)
class TestRecord:
    """Everything stored about one test except the raw bytes and the session text."""

    __test__ = False

    summary: TestSummary
    raw_sha256: str
    raw_size_bytes: int
    mapping: dict[str, Any] | None
    import_options: dict[str, Any]
    flags: list[dict[str, Any]]
    sign_offs: list[SignOffRecord]
    imported_by: str | None
    deleted_at: datetime | None

    @property
    def id(self) -> int:
        return self.summary.id

    @property
    def current_version_signed(self) -> bool:
        return any(s.version == self.summary.version for s in self.sign_offs)


@dataclass(frozen=True)
class AuditEntry:
    """One audit event; ``old_value``/``new_value`` are the decoded JSON values (or None)."""

    id: int
    at: datetime
    actor: str
    action: str
    test_id: int | None
    person_id: int | None
    field: str | None
    old_value: Any
    new_value: Any
    reason: str


@dataclass(frozen=True)
class ShareScope:
    """What a valid share link lets its holder see.

    ``test_ids`` are exactly the tests covered (soft-deleted tests removed). ``show_name``
    says whether the display name may be shown instead of the pseudonymous code.
    """

    share_id: int
    test_ids: tuple[int, ...]
    sections: tuple[str, ...]
    show_name: bool
    expires_at: datetime
    #: True for a link made for all tests of one person (the coach sees progress across them).
    for_person: bool = False


@dataclass(frozen=True)
class ShareInfo:
    id: int
    test_id: int | None
    person_id: int | None
    test_ids: tuple[int, ...]
    sections: tuple[str, ...]
    show_name: bool
    note: str
    created_by: str
    created_at: datetime
    expires_at: datetime
    revoked_at: datetime | None
    n_views: int
    last_viewed_at: datetime | None
    active: bool
