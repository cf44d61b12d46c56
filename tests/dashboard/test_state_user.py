"""The signed-in account's name and role as the pages show them (typed store ``User`` only)."""

from __future__ import annotations

import pytest

from dashboard import state
from store import User


@pytest.mark.parametrize(
    ("role", "may_edit"), [("admin", True), ("reviewer", True), ("viewer", False)]
)
def test_name_role_and_edit_right_of_an_account(role: str, may_edit: bool) -> None:
    user = User(id=7, username="ada.reviewer", role=role)
    assert state.user_name(user) == "ada.reviewer"
    assert state.user_role(user) == role
    assert state.can_edit(user) is may_edit
    assert state.EDIT_ROLES == frozenset({"admin", "reviewer"})
