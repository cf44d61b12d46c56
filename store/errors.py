"""Error types raised by the store (all :class:`~analysis.errors.TidemarkError` subclasses).

Messages are written for lab staff: what happened and what to do next. None of them reveals
whether a user name exists or why a share link was refused.
"""

from __future__ import annotations

from analysis.errors import TidemarkError


class StoreError(TidemarkError):
    """A store operation cannot be carried out (with the reason and a remedy)."""


class NotFound(StoreError):
    """The person, test, user or share link asked for does not exist (or was deleted)."""


class PermissionDenied(StoreError):
    """The acting account's role does not allow this action."""


class EditConflict(StoreError):
    """Somebody else saved this test since it was opened; the save was not applied."""


class LoginRefused(StoreError):
    """Sign-in failed. The message never says whether the user name or the password was wrong."""


class AccountLocked(LoginRefused):
    """Too many failed sign-ins for this user name in a short time; try again later."""

    def __init__(self, message: str, *, retry_after_s: float) -> None:
        super().__init__(message)
        self.retry_after_s = retry_after_s
