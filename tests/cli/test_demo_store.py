"""The demo lives in a store of its own: never the default store for real data, no real accounts."""

from __future__ import annotations

import io
from pathlib import Path

import pytest

from analysis.simulation.simulate import LAB_NAME
from store import StoreError, open_store
from store.demo_loader import load_demo_sessions
from tests.support import ROOT
from tidemark.cli import EXIT_BAD_INPUT, main

DEMO_FILE = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"


def test_demo_store_carries_the_demo_lab_name_as_data(tmp_path):
    url = str(tmp_path / "demo.sqlite")
    load_demo_sessions([DEMO_FILE], url=url)
    store = open_store(url)
    try:
        assert store.is_demo_store()
        assert store.lab_identity().name == LAB_NAME
    finally:
        store.close()


def test_demo_is_loaded_into_its_own_file_by_default(tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path))
    monkeypatch.delenv("TIDEMARK_STORE", raising=False)
    load_demo_sessions([DEMO_FILE])
    assert (tmp_path / ".tidemark" / "demo.sqlite").is_file()
    assert not (tmp_path / ".tidemark" / "tidemark.sqlite").exists()  # the real-data default stays untouched


def test_demo_is_refused_in_the_default_store_for_real_data(tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path))
    with pytest.raises(StoreError, match="never loaded into the default store"):
        load_demo_sessions([DEMO_FILE], url=str(Path(tmp_path) / ".tidemark" / "tidemark.sqlite"))


def test_users_add_on_a_demo_store_refuses_with_a_clear_message(tmp_path, monkeypatch, capsys):
    url = str(tmp_path / "demo.sqlite")
    load_demo_sessions([DEMO_FILE], url=url)
    monkeypatch.setattr("sys.stdin", io.StringIO("tide-table-2026\n"))
    code = main(["users", "--store", url, "add", "ana", "--role", "admin", "--password-stdin"])
    err = capsys.readouterr().err
    assert code == EXIT_BAD_INPUT
    assert "is a demo store" in err and "TIDEMARK_STORE" in err
    store = open_store(url)
    try:
        assert [u.username for u in store.list_users()] == ["demo-reviewer"]
    finally:
        store.close()
