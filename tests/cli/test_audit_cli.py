"""``tidemark audit verify``: the hash chain holds after ordinary use; the first broken link is named."""

from __future__ import annotations

import io
import sqlite3

import pytest

from tidemark.cli import EXIT_OK, main
from tidemark.commands.audit import EXIT_BROKEN


def _accounts(db: str, monkeypatch) -> None:  # noqa: ANN001
    for name, role in (("ana.admin", "admin"), ("rhea", "reviewer"), ("vic", "viewer")):
        monkeypatch.setattr("sys.stdin", io.StringIO("tide-table-2026\n"))
        assert main(["users", "--store", db, "add", name, "--role", role, "--password-stdin"]) == EXIT_OK
    assert main(["users", "--store", db, "set-role", "vic", "reviewer"]) == EXIT_OK


def test_verify_reports_an_intact_chain(tmp_path, monkeypatch, capsys):
    db = str(tmp_path / "a.sqlite")
    _accounts(db, monkeypatch)
    capsys.readouterr()
    assert main(["audit", "verify", "--store", db]) == EXIT_OK
    out = capsys.readouterr().out
    assert "4 row(s), every link holds" in out and "Last link: " in out


def test_verify_names_the_first_broken_link(tmp_path, monkeypatch, capsys):
    db = str(tmp_path / "b.sqlite")
    _accounts(db, monkeypatch)
    con = sqlite3.connect(db)
    con.execute("DROP TRIGGER trg_audit_events_no_update")  # as someone holding the file could
    con.execute("UPDATE audit_events SET new_value = '\"admin\"' WHERE id = 2")
    con.commit()
    con.close()
    capsys.readouterr()
    assert main(["audit", "verify", "--store", db]) == EXIT_BROKEN
    out = capsys.readouterr().out
    assert "BROKEN after 1 good row(s)" in out
    assert "row 2 (" in out and "user_create by command line) was changed after it was written" in out


@pytest.mark.parametrize("verb", ["UPDATE audit_events SET reason = 'x'", "DELETE FROM audit_events"])
def test_plain_sqlite_client_meets_the_triggers(tmp_path, monkeypatch, verb):
    db = str(tmp_path / "c.sqlite")
    _accounts(db, monkeypatch)
    con = sqlite3.connect(db)
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        con.execute(verb)
    con.close()
