"""The lab's identity as the pages show it (plain functions, tested without Streamlit).

The store holds the settings (:mod:`store.lab`); this module turns them into what a page,
a report or a share link needs: the name to print, the logo as a ``data:`` URL, and the
base address of share links.
"""

from __future__ import annotations

import base64
import logging
import re
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from store import LabIdentity, Store

log = logging.getLogger("tidemark.dashboard")

_MARKDOWN_SPECIAL = re.compile(r"([\\`*_{}\[\]()#+\-.!|~<>$:])")


def markdown_text(text: Any) -> str:
    """Data-derived text made safe for a Streamlit markdown element (every markup character escaped)."""
    return _MARKDOWN_SPECIAL.sub(r"\\\1", "" if text is None else str(text))


def read_identity(store: Store) -> LabIdentity | None:
    """The store's :class:`store.lab.LabIdentity`, or ``None`` when it cannot be read (logged)."""
    try:
        return store.lab_identity()
    except Exception:
        log.exception("lab settings could not be read")
        return None


def logo_data_url(identity: LabIdentity | None) -> str | None:
    """The logo as ``data:image/png;base64,...`` (embedded in reports), or ``None``."""
    if identity is None or not identity.logo or not identity.logo_mime:
        return None
    return f"data:{identity.logo_mime};base64,{base64.b64encode(identity.logo).decode('ascii')}"


def share_base_url(identity: LabIdentity | None, *, request_host: str | None, environ: dict[str, str] | None = None) -> str:
    """Where share links point: the configured public URL (``TIDEMARK_PUBLIC_URL`` or the lab
    setting), else the address the reviewer reached the dashboard on (``http://`` + host).

    Examples
    --------
    >>> share_base_url(None, request_host="127.0.0.1:8630", environ={})
    'http://127.0.0.1:8630'
    >>> share_base_url(None, request_host="x", environ={"TIDEMARK_PUBLIC_URL": "tests.lab.example"})
    'https://tests.lab.example'
    """
    from store import public_base_url

    stored = str(getattr(identity, "public_url", "") or "")
    configured = public_base_url(stored, environ=environ)
    if configured:
        return configured
    return f"http://{request_host or 'localhost:8630'}"


def public_url_configured(identity: LabIdentity | None, *, environ: dict[str, str] | None = None) -> bool:
    """True when share links have a configured public address (environment or lab settings)."""
    from store import public_base_url

    return public_base_url(str(getattr(identity, "public_url", "") or ""), environ=environ) is not None


def share_url(token: str, *, base_url: str) -> str:
    """``<base>/?link=<token>`` — the address a coach opens."""
    return f"{base_url.rstrip('/')}/?link={token}"
