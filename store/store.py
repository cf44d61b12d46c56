"""The :class:`Store` facade and :func:`open_store`."""

from __future__ import annotations

from sqlalchemy.exc import DBAPIError

from store.accounts import AccountsMixin
from store.config import describe_url, make_engine, resolve_url
from store.core import Clock
from store.db_errors import plain_store_error
from store.errors import StoreError
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
    try:
        engine = make_engine(resolved)
    except OSError as exc:  # the SQLite folder cannot be created
        raise StoreError(
            f"The store's folder cannot be created ({exc.strerror or exc}). Check the path "
            f"{describe_url(resolved)} and the permissions of its parent folder."
        ) from None
    try:
        upgrade_to_head(engine)
    except (DBAPIError, OSError) as exc:
        engine.dispose()
        plain = plain_store_error(exc)
        if plain is None:
            raise
        raise StoreError(f"{plain} (store: {describe_url(resolved)})") from None
    except Exception:
        engine.dispose()
        raise
    return Store(engine, url=resolved, clock=clock)
