"""Raw database-driver failures turned into the store's own error with a plain message.

A read-only store folder, a full disk or an unreachable server otherwise reach the user as a
driver traceback ("attempt to write a readonly database", "database or disk is full"). The
command line turns :class:`~store.errors.StoreError` into exit code 2 with the message; the
dashboard shows it with ``st.error``.
"""

from __future__ import annotations

from store.errors import StoreError

#: (words in the driver's message, lower case) -> what the user reads and what to do.
_PLAIN: tuple[tuple[tuple[str, ...], str], ...] = (
    (("readonly database", "read-only file system", "read only file system"),
     "The store is read-only for this account, so nothing was saved. Check that the store's "
     "folder and file may be written by the account running Tidemark (SQLite also writes small "
     "files beside the store)."),
    (("database or disk is full", "no space left on device", "disk full"),
     "The disk holding the store is full, so nothing was saved. Free some space (or move the "
     "store to a larger disk) and try again."),
    (("disk i/o error",),
     "The disk holding the store reported a read or write error, so nothing was saved. Check "
     "the disk, then try again; restore the store from a backup if it keeps happening."),
    (("unable to open database file",),
     "The store file cannot be opened. Check that its folder exists and may be read and written "
     "by the account running Tidemark."),
    (("database is locked",),
     "The store stayed busy with another program for too long. Try again in a moment; if it "
     "keeps happening, close other programs using the store file."),
    (("connection refused", "could not connect", "could not translate host name", "timeout expired",
      "server closed the connection"),
     "The database server cannot be reached. Check that it is running and that the store URL "
     "(host, port) is right."),
    (("password authentication failed", "role \"", "no pg_hba.conf entry"),
     "The database server refused the store's account. Check the user name and password in the "
     "store URL."),
    (("permission denied",),
     "The database refused this change for the store's account (its rights are limited). Ask "
     "whoever runs the database."),
)


def plain_store_error(exc: BaseException) -> StoreError | None:
    """The :class:`StoreError` for a driver failure a user can act on, or ``None``."""
    text = str(getattr(exc, "orig", None) or exc).lower()
    for words, message in _PLAIN:
        if any(w in text for w in words):
            return StoreError(message)
    return None
