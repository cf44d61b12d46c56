"""Database tables of the store (SQLAlchemy 2 typed models).

Nothing is deleted in place: tests and people carry ``deleted_at``; analysis versions, audit
events, sign-offs, login attempts and share views are append-only; for audit events, analysis
versions and sign-offs database triggers refuse UPDATE and DELETE (migration ``0006``). Times are stored in UTC.
The schema is created and upgraded by the Alembic migrations in ``store/migrations``; a test
checks that the migrations and these models agree.
"""

from __future__ import annotations

from datetime import datetime

from sqlalchemy import (
    Boolean,
    DateTime,
    ForeignKey,
    Index,
    Integer,
    LargeBinary,
    MetaData,
    String,
    Text,
    UniqueConstraint,
    text,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column

from store.compressed_text import CompressedText

#: Constraint names are fixed so that migrations name them identically on every back end.
NAMING_CONVENTION = {
    "ix": "ix_%(table_name)s_%(column_0_N_name)s",
    "uq": "uq_%(table_name)s_%(column_0_N_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

ROLES: tuple[str, ...] = ("viewer", "reviewer", "admin")


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING_CONVENTION)


class StoreInfo(Base):
    """Key/value facts about the store itself (for example ``demo`` = ``"1"``)."""

    __tablename__ = "store_info"

    key: Mapped[str] = mapped_column(String(64), primary_key=True)
    value: Mapped[str] = mapped_column(Text)


class UserRow(Base):
    __tablename__ = "users"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    username: Mapped[str] = mapped_column(String(120), unique=True)
    role: Mapped[str] = mapped_column(String(16))
    #: ``scrypt$N$r$p$salt$hash`` (base64), or ``None`` for accounts without a local password.
    password_hash: Mapped[str | None] = mapped_column(String(255))
    #: ``local`` (password) or ``oidc`` (signs in through the configured identity provider).
    auth_source: Mapped[str] = mapped_column(String(16), default="local")
    is_active: Mapped[bool] = mapped_column(Boolean, default=True)
    is_demo: Mapped[bool] = mapped_column(Boolean, default=False)
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    disabled_at: Mapped[datetime | None] = mapped_column(DateTime(timezone=True))


class LoginAttempt(Base):
    __tablename__ = "login_attempts"
    __table_args__ = (Index("ix_login_attempts_username_at", "username", "at"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    #: As typed (normalised to lower case); kept even when no such account exists.
    username: Mapped[str] = mapped_column(String(120))
    at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    #: ``pending`` (recorded before the check), ``ok``, ``bad_password``, ``unknown_user``,
    #: ``disabled``, ``locked``, ``busy`` or ``unlocked`` (by an admin).
    outcome: Mapped[str] = mapped_column(String(16))
    #: Who tried, as the dashboard knows it (the browser's address or session); ``None`` otherwise.
    client: Mapped[str | None] = mapped_column(String(64), index=True)


class PersonRow(Base):
    __tablename__ = "people"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    #: Pseudonymous code (shown by default everywhere, including share links).
    code: Mapped[str] = mapped_column(String(120), unique=True)
    display_name: Mapped[str | None] = mapped_column(String(200))
    sex: Mapped[str | None] = mapped_column(String(16))
    birth_year: Mapped[int | None] = mapped_column(Integer)
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    created_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    deleted_at: Mapped[datetime | None] = mapped_column(DateTime(timezone=True))
    deleted_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))


class TestRow(Base):
    __tablename__ = "tests"
    __test__ = False  # not a pytest class
    __table_args__ = (
        # One live test per file content; a soft-deleted test does not block re-importing.
        Index(
            "ix_tests_raw_sha256_live",
            "raw_sha256",
            unique=True,
            sqlite_where=text("deleted_at IS NULL"),
            postgresql_where=text("deleted_at IS NULL"),
        ),
        # Every column the test list reads, live tests only: listing never reads a row (rows
        # carry the upload and the session text). Migration 0004.
        Index(
            "ix_tests_live_listing",
            "test_date", "id", "person_id", "current_version", "imported_at", "protocol", "original_file_name",
            "deleted_at",
            sqlite_where=text("deleted_at IS NULL"),
            postgresql_where=text("deleted_at IS NULL"),
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    person_id: Mapped[int] = mapped_column(ForeignKey("people.id"), index=True)
    test_date: Mapped[str | None] = mapped_column(String(32))
    protocol: Mapped[str | None] = mapped_column(String(200))
    #: The uploaded file name as given: text only, never used as a file-system path.
    original_file_name: Mapped[str] = mapped_column(String(255))
    raw_sha256: Mapped[str] = mapped_column(String(64))
    raw_size_bytes: Mapped[int] = mapped_column(Integer)
    #: The uploaded file byte for byte.
    raw_bytes: Mapped[bytes] = mapped_column(LargeBinary, deferred=True)
    #: The converted session (Tidemark session-file text); empty when it is the upload itself
    #: (a Tidemark session file), which is then kept once, in ``raw_bytes`` (migration 0004).
    session_text: Mapped[str] = mapped_column(Text, deferred=True)
    #: The column mapping used by the import (JSON), ``None`` for native session files.
    mapping_json: Mapped[str | None] = mapped_column(Text)
    #: Import options used besides the mapping (sheet, gas_unit, time_format, meta_overrides), JSON.
    import_options_json: Mapped[str] = mapped_column(Text, default="{}", server_default="{}")
    #: Import flags (suspicious rows) as JSON records.
    flags_json: Mapped[str] = mapped_column(Text, default="[]")
    #: Current analysis version; bumped by every settings save (optimistic lock).
    current_version: Mapped[int] = mapped_column(Integer, default=1)
    imported_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    imported_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    deleted_at: Mapped[datetime | None] = mapped_column(DateTime(timezone=True))
    deleted_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))


class AnalysisVersion(Base):
    """Settings and the results computed from them; one immutable row per saved version."""

    __tablename__ = "analysis_versions"
    __table_args__ = (UniqueConstraint("test_id", "version"),)

    # The list's columns first, the JSON last: on SQLite a row's first bytes sit in its page and
    # long JSON in overflow pages, so the test list reads headline numbers without the results.
    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    test_id: Mapped[int] = mapped_column(ForeignKey("tests.id"), index=True)
    version: Mapped[int] = mapped_column(Integer)
    vo2peak_ml_min: Mapped[float | None] = mapped_column()
    vt1_vo2_ml_min: Mapped[float | None] = mapped_column()
    ve_vco2_slope: Mapped[float | None] = mapped_column()
    #: Why results could not be computed (shown to the user), ``None`` when they were.
    results_error: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    created_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    reason: Mapped[str] = mapped_column(Text, default="")
    settings_json: Mapped[str] = mapped_column(Text)
    #: The results JSON text; kept zlib-compressed in the column ``results_zlib`` (migration 0008).
    results_json: Mapped[str | None] = mapped_column("results_zlib", CompressedText)


class SignOff(Base):
    __tablename__ = "sign_offs"
    __table_args__ = (UniqueConstraint("test_id", "version"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    test_id: Mapped[int] = mapped_column(ForeignKey("tests.id"), index=True)
    version: Mapped[int] = mapped_column(Integer)
    signed_by: Mapped[int] = mapped_column(ForeignKey("users.id"))
    signed_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    note: Mapped[str] = mapped_column(Text, default="")


class AuditEvent(Base):
    __tablename__ = "audit_events"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    actor_id: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    #: The actor's user name at the time (kept even if the account is renamed or disabled).
    actor_name: Mapped[str] = mapped_column(String(120))
    action: Mapped[str] = mapped_column(String(40))
    test_id: Mapped[int | None] = mapped_column(ForeignKey("tests.id"), index=True)
    person_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"))
    #: What changed, e.g. a settings field path ``thresholds.vt1_override_s``.
    field: Mapped[str | None] = mapped_column(String(200))
    old_value: Mapped[str | None] = mapped_column(Text)
    new_value: Mapped[str | None] = mapped_column(Text)
    reason: Mapped[str] = mapped_column(Text, default="")
    #: The hash chain (``store/audit_chain.py``): ``row_hash`` of the row before, and this row's.
    prev_hash: Mapped[str | None] = mapped_column(String(64))
    row_hash: Mapped[str | None] = mapped_column(String(64))


class ShareLink(Base):
    __tablename__ = "share_links"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    #: SHA-256 of the token (hex). The token itself is never stored.
    token_sha256: Mapped[str] = mapped_column(String(64), unique=True)
    person_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"))
    test_id: Mapped[int | None] = mapped_column(ForeignKey("tests.id"))
    show_name: Mapped[bool] = mapped_column(Boolean, default=False)
    #: JSON list of the sections the recipient may see.
    sections_json: Mapped[str] = mapped_column(Text)
    note: Mapped[str] = mapped_column(Text, default="")
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    created_by: Mapped[int] = mapped_column(ForeignKey("users.id"))
    expires_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    revoked_at: Mapped[datetime | None] = mapped_column(DateTime(timezone=True))
    revoked_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))


class ShareLinkTest(Base):
    """The tests a share link covers, fixed when the link is created."""

    __tablename__ = "share_link_tests"

    share_id: Mapped[int] = mapped_column(ForeignKey("share_links.id"), primary_key=True)
    test_id: Mapped[int] = mapped_column(ForeignKey("tests.id"), primary_key=True)


class ShareView(Base):
    __tablename__ = "share_views"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    share_id: Mapped[int] = mapped_column(ForeignKey("share_links.id"), index=True)
    viewed_at: Mapped[datetime] = mapped_column(DateTime(timezone=True))
    #: ``open`` (the link opened), ``test`` (another test chosen inside a person link) or
    #: ``report`` (the report downloaded).
    kind: Mapped[str] = mapped_column(String(16), default="open", server_default="open")
    #: The test looked at, when known (a plain number: the view log outlives nothing it points to).
    test_id: Mapped[int | None] = mapped_column(Integer)


class ShareMiss(Base):
    """How many times a link that does not open was tried, per UTC day (counts, never tokens)."""

    __tablename__ = "share_misses"

    day: Mapped[str] = mapped_column(String(10), primary_key=True)
    attempts: Mapped[int] = mapped_column(Integer)


class LabIdentityRow(Base):
    """The lab's identity for reports, the sign-in page and share links (one row, ``id`` 1).

    Set by an administrator on the dashboard's lab settings page; every change is audited.
    """

    __tablename__ = "lab_identity"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), default="")
    address: Mapped[str] = mapped_column(String(400), default="")
    report_footer: Mapped[str] = mapped_column(Text, default="")
    #: Logo image bytes (PNG or JPEG), ``None`` when the lab has none.
    logo: Mapped[bytes | None] = mapped_column(LargeBinary)
    logo_mime: Mapped[str | None] = mapped_column(String(32))
    #: Public base URL of the dashboard for share links (``https://tests.lab.example``), or "".
    public_url: Mapped[str] = mapped_column(String(400), default="")
    updated_at: Mapped[datetime | None] = mapped_column(DateTime(timezone=True))
    updated_by: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
