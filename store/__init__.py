"""Tidemark store: people, tests, versioned analyses, audit trail, accounts and share links.

Public API (see ``docs/store.md``)::

    store = open_store()                      # $TIDEMARK_STORE or ~/.tidemark/tidemark.sqlite
    user = store.authenticate("ana", pw)      # -> User (roles: viewer < reviewer < admin)
    res = store.import_test(data, file_name="t.csv", actor=user)   # -> ImportResult
    settings, v = store.get_settings(res.test_id)
    v2 = store.save_settings(res.test_id, changed, actor=user, reason="...", expected_version=v)
    token, share_id = store.create_share(actor=user, test_id=res.test_id, expires_in_days=30)
    scope = store.resolve_share(token)        # -> ShareScope | None
"""

from store.errors import (
    AccountLocked,
    EditConflict,
    LoginRefused,
    NotFound,
    PermissionDenied,
    StoreError,
)
from store.lab import PUBLIC_URL_ENV, LabIdentity, public_base_url
from store.records import (
    LOCAL_OPERATOR,
    ROLE_ORDER,
    AuditEntry,
    ImportResult,
    Operator,
    PersonSummary,
    ShareInfo,
    ShareScope,
    SignOffRecord,
    TestRecord,
    TestSummary,
    User,
)
from store.sharing import SHARE_SECTIONS
from store.store import Store, open_store

__all__ = [
    "AccountLocked",
    "AuditEntry",
    "EditConflict",
    "ImportResult",
    "LOCAL_OPERATOR",
    "LabIdentity",
    "LoginRefused",
    "NotFound",
    "Operator",
    "PermissionDenied",
    "PUBLIC_URL_ENV",
    "PersonSummary",
    "ROLE_ORDER",
    "SHARE_SECTIONS",
    "ShareInfo",
    "ShareScope",
    "SignOffRecord",
    "Store",
    "StoreError",
    "TestRecord",
    "TestSummary",
    "User",
    "open_store",
    "public_base_url",
]
