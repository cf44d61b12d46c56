"""``tidemark users``: first admin without a default password, list, set-role, disable."""

from __future__ import annotations

import io

import pytest

from store import open_store
from tidemark.cli import EXIT_BAD_INPUT, EXIT_OK, main


@pytest.fixture
def db(tmp_path) -> str:
    return str(tmp_path / "cli.sqlite")


def run(argv, monkeypatch, stdin: str = "") -> int:
    monkeypatch.setattr("sys.stdin", io.StringIO(stdin))
    return main(argv)


def test_first_admin_from_stdin_then_manage_accounts(db, monkeypatch, capsys):
    assert run(["users", "--store", db, "add", "Ana.Admin", "--role", "admin", "--password-stdin"], monkeypatch,
               "tide-table-2026\n") == EXIT_OK
    assert "Created admin account 'ana.admin'" in capsys.readouterr().out
    assert run(["users", "--store", db, "add", "coach@saltmarsh.example", "--role", "viewer", "--oidc"],
               monkeypatch) == EXIT_OK
    assert run(["users", "--store", db, "set-role", "coach@saltmarsh.example", "reviewer"], monkeypatch) == EXIT_OK
    assert run(["users", "--store", db, "disable", "coach@saltmarsh.example"], monkeypatch) == EXIT_OK
    capsys.readouterr()
    assert run(["users", "--store", db, "list"], monkeypatch) == EXIT_OK
    lines = capsys.readouterr().out.strip().splitlines()
    assert lines == ["ana.admin\tadmin\tlocal\tactive", "coach@saltmarsh.example\treviewer\toidc\tdisabled"]
    store = open_store(db)
    try:
        assert store.authenticate("ana.admin", "tide-table-2026").role == "admin"
        actions = [e.action for e in store.audit_log()]
        assert actions == ["user_create", "user_create", "user_role", "user_disable"]
        assert store.audit_log()[0].actor == "command line"
    finally:
        store.close()


def test_no_terminal_and_no_stdin_flag_is_bad_input(db, monkeypatch, capsys):
    assert run(["users", "--store", db, "add", "ana", "--role", "admin"], monkeypatch) == EXIT_BAD_INPUT
    assert "--password-stdin" in capsys.readouterr().err


@pytest.mark.parametrize("stdin,message", [("\n", "No password"), ("short\n", "at least")])
def test_empty_or_short_password_is_refused(db, monkeypatch, capsys, stdin, message):
    assert run(["users", "--store", db, "add", "ana", "--role", "admin", "--password-stdin"], monkeypatch,
               stdin) == EXIT_BAD_INPUT
    assert message in capsys.readouterr().err
    store = open_store(db)
    assert store.list_users() == []
    store.close()


def test_last_admin_cannot_be_disabled_from_the_command_line(db, monkeypatch, capsys):
    assert run(["users", "--store", db, "add", "boss@saltmarsh.example", "--role", "admin", "--oidc"],
               monkeypatch) == EXIT_OK
    assert run(["users", "--store", db, "disable", "boss@saltmarsh.example"], monkeypatch) == EXIT_BAD_INPUT
    assert "last active administrator" in capsys.readouterr().err


def test_unknown_role_is_rejected_by_the_parser(db, monkeypatch):
    with pytest.raises(SystemExit) as info:
        run(["users", "--store", db, "add", "ana", "--role", "superuser", "--oidc"], monkeypatch)
    assert info.value.code == 2


def test_empty_store_list_explains_the_first_step(db, monkeypatch, capsys):
    assert run(["users", "list", "--store", db], monkeypatch) == EXIT_OK  # --store after the action too
    assert "tidemark users add NAME --role admin" in capsys.readouterr().out


def test_unlock_lifts_a_sign_in_lock(db, monkeypatch, capsys):
    store = open_store(db)
    try:
        for _ in range(5):  # five recorded failures, as authenticate() would log them
            store._log_attempt("kim", "bad_password")
        assert store.login_locked_for("kim") > 0
        assert run(["users", "unlock", "Kim", "--store", db], monkeypatch) == EXIT_OK
        assert "unlocked" in capsys.readouterr().out
        assert store.login_locked_for("kim") == 0
    finally:
        store.close()
