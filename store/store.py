"""The :class:`Store` facade and :func:`open_store`."""

from __future__ import annotations

from store.accounts import AccountsMixin
from store.config import make_engine, resolve_url
from store.core import Clock
from store.lab import LabMixin
from store.metadata import MetadataMixin
from store.migrate import upgrade_to_head
from store.sharing import SharingMixin


class Store(SharingMixin, MetadataMixin, AccountsMixin, LabMixin):
    """Persistence and access control for Tidemark (see ``docs/store.md``).

    Create with :func:`open_store`. Every method runs in its own transaction; every mutating
    method takes the acting :class:`~store.records.User` and checks its role in the database.
    """


def open_store(url: str | None = None, *, clock: Clock | None = None) -> Store:
    """Open (and create or upgrade, via Alembic ``upgrade head``) the Tidemark store.

    Parameters
    ----------
    url : str, optional
        SQLAlchemy URL or SQLite file path. ``None``: ``$TIDEMARK_STORE``, else
        ``~/.tidemark/tidemark.sqlite``. PostgreSQL: ``postgresql+psycopg://user:pw@host/db``.
    clock : callable, optional
        Returns the current time (timezone-aware UTC); tests use it to move time forward.

    Examples
    --------
    >>> import tempfile, os
    >>> store = open_store(os.path.join(tempfile.mkdtemp(), "lab.sqlite"))
    >>> store.list_people()
    []
    >>> store.close()
    """
    resolved = resolve_url(url)
    engine = make_engine(resolved)
    try:
        upgrade_to_head(engine)
    except Exception:
        engine.dispose()
        raise
    return Store(engine, url=resolved, clock=clock)
