"""Raw driver failures reach the user as the store's own error, in plain words, CLI exit code 2."""

from __future__ import annotations

import io

import pytest
from sqlalchemy import event

from store import LOCAL_OPERATOR, StoreError, open_store
from tests.store.helpers import open_test_store
from tests.store.standin import csv_bytes
from tidemark.cli import EXIT_BAD_INPUT, main


def _made(tmp_path) -> str:  # noqa: ANN001
    path = tmp_path / "lab.sqlite"
    store = open_store(str(path))
    store.close()
    return str(path)


def test_read_only_store_gives_a_plain_message_and_exit_2(tmp_path, monkeypatch, capsys):
    path = _made(tmp_path)
    read_only = f"sqlite:///file:{path}?mode=ro&uri=true"  # as a store on a read-only folder or mount
    monkeypatch.setattr("sys.stdin", io.StringIO("tide-table-2026\n"))
    code = main(["users", "--store", read_only, "add", "ana", "--role", "admin", "--password-stdin"])
    err = capsys.readouterr().err
    assert code == EXIT_BAD_INPUT
    assert "The store is read-only for this account, so nothing was saved" in err
    assert "Traceback" not in err and "sqlite3" not in err and len(err.splitlines()) == 1


def test_full_disk_gives_a_plain_message(tmp_path):
    path = _made(tmp_path)
    store = open_test_store(path)
    admin = store.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password="a long passphrase")
    store.engine.dispose()

    @event.listens_for(store.engine, "connect")
    def _tiny(dbapi_connection, _record):  # noqa: ANN001 - the disk "fills" after a few pages
        dbapi_connection.execute("PRAGMA max_page_count = 40")

    with pytest.raises(StoreError, match="The disk holding the store is full, so nothing was saved"):
        for i in range(40):
            store.import_test(csv_bytes(3000.0 + i, n=400), file_name=f"t{i}.csv", actor=admin)
    store.close()


def test_store_folder_that_cannot_be_made_is_plain(tmp_path):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    with pytest.raises(StoreError, match="folder cannot be created"):
        open_store(str(blocker / "sub" / "lab.sqlite"))
