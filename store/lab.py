"""The lab's identity: name, address line, logo, report footer and the public URL of share links.

Stored in one row of the ``lab_identity`` table, read by everyone (the sign-in page, the coach
view and every report show it) and changed only by an administrator; each changed field is an
audit event. A store without that row has no lab name: pages then show none rather than a
made-up one. The public base URL may also come from the ``TIDEMARK_PUBLIC_URL`` environment
variable, which wins over the stored setting (a deployment fixes it once for all).
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from datetime import datetime
from urllib.parse import urlsplit

from store.core import Actor, StoreCore, aware
from store.errors import StoreError
from store.models import LabIdentityRow

#: Environment variable with the public base URL of the dashboard (share links start with it).
PUBLIC_URL_ENV = "TIDEMARK_PUBLIC_URL"
#: Largest logo image kept (bytes): the report embeds it and must stay small.
MAX_LOGO_BYTES = 200_000
#: Longest texts kept (characters), as the table's columns.
MAX_NAME_CHARS = 200
MAX_ADDRESS_CHARS = 400
MAX_FOOTER_CHARS = 2_000
MAX_URL_CHARS = 400

_PNG = b"\x89PNG\r\n\x1a\n"
_JPEG = b"\xff\xd8\xff"
_HOST = re.compile(r"^[A-Za-z0-9.-]+(:\d{1,5})?$|^\[[0-9A-Fa-f:]+\](:\d{1,5})?$")


@dataclass(frozen=True)
class LabIdentity:
    """What the lab calls itself on reports, the sign-in page and share links.

    Every text is as the administrator typed it (escape it wherever it is shown).
    """

    name: str = ""
    address: str = ""
    report_footer: str = ""
    logo: bytes | None = None
    logo_mime: str | None = None
    #: The stored public base URL ("" when none); see :func:`public_base_url` for the one in force.
    public_url: str = ""
    updated_at: datetime | None = None
    updated_by: str | None = None

    @property
    def has_logo(self) -> bool:
        return bool(self.logo) and bool(self.logo_mime)


def logo_mime(data: bytes) -> str:
    """``image/png`` or ``image/jpeg`` from the file's first bytes; anything else is refused.

    Only bitmap formats are taken: an SVG file can carry scripts and would need cleaning.
    """
    if data.startswith(_PNG):
        return "image/png"
    if data.startswith(_JPEG):
        return "image/jpeg"
    raise StoreError("The logo must be a PNG or JPEG image; choose another file.")


def normalise_public_url(text: str) -> str:
    """A public base URL as stored: ``https://`` added when no scheme is given, no trailing slash.

    ``""`` stays ``""`` (no public URL). Only ``http`` and ``https`` addresses with a host name are
    accepted, without a query or fragment; a path prefix (``https://lab.example/tidemark``) is kept.

    Examples
    --------
    >>> normalise_public_url("tests.lab.example/")
    'https://tests.lab.example'
    >>> normalise_public_url("http://127.0.0.1:8630")
    'http://127.0.0.1:8630'
    """
    value = (text or "").strip()
    if not value:
        return ""
    if len(value) > MAX_URL_CHARS:
        raise StoreError(f"The public address is longer than {MAX_URL_CHARS} characters.")
    if "://" not in value:
        value = "https://" + value
    parts = urlsplit(value)
    if parts.scheme.lower() not in ("http", "https") or not parts.netloc or not _HOST.match(parts.netloc):
        raise StoreError(
            f"'{text}' is not a web address the dashboard can be reached at; give one such as "
            "https://tests.your-lab.example"
        )
    if parts.query or parts.fragment or "@" in parts.netloc:
        raise StoreError("The public address must not contain a user name, '?' or '#'; give only the site and path.")
    return f"{parts.scheme.lower()}://{parts.netloc.lower()}{parts.path.rstrip('/')}"


def public_base_url(stored: str = "", *, environ: dict[str, str] | None = None) -> str | None:
    """The public base URL in force: ``$TIDEMARK_PUBLIC_URL`` when set, else the stored setting.

    ``None`` when neither is set (share links then use the address the reviewer reached the
    dashboard on).
    """
    env = os.environ if environ is None else environ
    configured = (env.get(PUBLIC_URL_ENV) or "").strip()
    value = normalise_public_url(configured) if configured else (stored or "").strip()
    return value or None


def _clean_text(value: str, *, field: str, limit: int, one_line: bool) -> str:
    text = (value or "").strip()
    if one_line:
        text = " ".join(text.split())
    if len(text) > limit:
        raise StoreError(f"The {field} is longer than {limit} characters; shorten it.")
    return text


class LabMixin(StoreCore):
    """Reading and setting the lab's identity."""

    def lab_identity(self) -> LabIdentity:
        """The lab's identity (empty texts when none has been set)."""
        with self._read() as db:
            row = db.get(LabIdentityRow, 1)
            if row is None:
                return LabIdentity()
            names = self._usernames(db, {row.updated_by})
            return LabIdentity(
                name=row.name, address=row.address, report_footer=row.report_footer, logo=row.logo,
                logo_mime=row.logo_mime, public_url=row.public_url, updated_at=aware(row.updated_at),
                updated_by=names.get(row.updated_by) if row.updated_by is not None else None,
            )

    def set_lab_identity(
        self,
        *,
        actor: Actor,
        name: str | None = None,
        address: str | None = None,
        report_footer: str | None = None,
        public_url: str | None = None,
        logo: bytes | None = None,
        remove_logo: bool = False,
        reason: str = "",
    ) -> LabIdentity:
        """Change the lab's identity (administrators only); ``None`` leaves a field as it is.

        Each changed field is written to the audit trail (the logo as its size and type, not its
        bytes). Raises :class:`store.errors.PermissionDenied` for other roles and
        :class:`store.errors.StoreError` for a text too long, a bad address or a logo that is
        not a PNG/JPEG image of at most 200 kB.
        """
        changes: dict[str, str] = {}
        if name is not None:
            changes["name"] = _clean_text(name, field="lab name", limit=MAX_NAME_CHARS, one_line=True)
        if address is not None:
            changes["address"] = _clean_text(address, field="address line", limit=MAX_ADDRESS_CHARS, one_line=True)
        if report_footer is not None:
            changes["report_footer"] = _clean_text(
                report_footer, field="report footer", limit=MAX_FOOTER_CHARS, one_line=False
            )
        if public_url is not None:
            changes["public_url"] = normalise_public_url(public_url)
        new_mime = None
        if logo is not None:
            if len(logo) > MAX_LOGO_BYTES:
                raise StoreError(
                    f"The logo is {len(logo) / 1000:.0f} kB; the limit is {MAX_LOGO_BYTES // 1000} kB "
                    "(a report must stay small). Use a smaller image."
                )
            new_mime = logo_mime(logo)
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "change the lab's settings")
            row = db.get(LabIdentityRow, 1)
            if row is None:
                row = LabIdentityRow(id=1, name="", address="", report_footer="", public_url="")
                db.add(row)
            for field_name, value in changes.items():
                old = getattr(row, field_name) or ""
                if old != value:
                    setattr(row, field_name, value)
                    self._audit(db, actor=actor, actor_row=actor_row, action="lab_settings",
                                field=f"lab.{field_name}", old=old, new=value, reason=reason)
            if logo is not None or remove_logo:
                old_logo = f"{row.logo_mime}, {len(row.logo)} bytes" if row.logo else None
                row.logo, row.logo_mime = (logo, new_mime) if logo is not None else (None, None)
                new_logo = f"{new_mime}, {len(logo)} bytes" if logo is not None else None
                if old_logo != new_logo:
                    self._audit(db, actor=actor, actor_row=actor_row, action="lab_settings", field="lab.logo",
                                old=old_logo, new=new_logo, reason=reason)
            row.updated_at = self.now()
            row.updated_by = actor_row.id if actor_row is not None else None
        return self.lab_identity()
