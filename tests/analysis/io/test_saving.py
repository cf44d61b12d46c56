"""Writing an import: all-or-nothing, originals never overwritten; metadata checks."""

from __future__ import annotations

import hashlib
import os

import pytest

from analysis.errors import ImportRejected
from analysis.io import import_bytes, read_session
from analysis.io import saving
from analysis.io.saving import SaveError, save_import

DATA = b"Time,VO2,VCO2,VE\n0,300,250,10\n3,310,260,11\n"


def _listing(root):
    return sorted(str(p.relative_to(root)) for p in root.rglob("*"))


def test_save_then_read(tmp_path):
    out = import_bytes(DATA, file_name="r.csv")
    saved = save_import(out, DATA, out_dir=tmp_path / "a" / "b", original_name="r.csv")
    assert saved.session_path == tmp_path / "a" / "b" / "r.session.csv"
    assert hashlib.sha256(saved.original_path.read_bytes()).digest() == hashlib.sha256(DATA).digest()
    assert read_session(saved.session_path).breaths["vo2_ml_min"].tolist() == [300.0, 310.0]
    assert _listing(tmp_path) == ["a", "a/b", "a/b/originals", "a/b/originals/r.csv", "a/b/r.session.csv"]


def test_failure_leaves_nothing_behind(tmp_path, monkeypatch):
    out = import_bytes(DATA, file_name="r.csv")

    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(saving.os, "replace", broken_replace)
    with pytest.raises(SaveError, match="No space left on device.*nothing was saved"):
        save_import(out, DATA, out_dir=tmp_path / "new" / "dir", original_name="r.csv")
    assert _listing(tmp_path) == []


def test_failure_keeps_existing_files(tmp_path, monkeypatch):
    out = import_bytes(DATA, file_name="r.csv")
    first = save_import(out, DATA, out_dir=tmp_path, original_name="r.csv")
    before = {p: p.read_bytes() for p in tmp_path.rglob("*") if p.is_file()}
    monkeypatch.setattr(saving.os, "replace", lambda s, d: (_ for _ in ()).throw(OSError(5, "I/O error")))
    other = DATA + b"6,320,270,12\n"
    with pytest.raises(SaveError):
        save_import(import_bytes(other, file_name="r.csv"), other, out_dir=tmp_path, original_name="r.csv")
    after = {p: p.read_bytes() for p in tmp_path.rglob("*") if p.is_file()}
    assert after == before and first.session_path in after


def test_unsafe_names_are_reduced_to_a_file_name(tmp_path):
    out = import_bytes(DATA, file_name="x.csv")
    saved = save_import(out, DATA, out_dir=tmp_path, original_name="../../etc/x.csv")
    assert saved.original_path.parent == tmp_path / "originals"
    assert os.path.commonpath([saved.session_path, tmp_path]) == str(tmp_path)


class TestMetadata:
    def test_numeric_key_with_text_is_rejected_with_line(self):
        with pytest.raises(ImportRejected, match=r"line 2: metadata body_mass_kg is 'heavy', not a number"):
            import_bytes(b"# subject_id: A\n# body_mass_kg: heavy\n" + DATA, file_name="m.csv")
        with pytest.raises(ImportRejected, match=r"line 1: metadata age_y"):
            read_session(b"# age_y: thirty\nt_s,vo2_ml_min,vco2_ml_min,ve_l_min\n0,300,250,10\n")

    def test_override_checked_and_empty_numeric_left_out(self):
        with pytest.raises(ImportRejected, match=r"metadata hb_g_dl is 'x' \(set for the import\)"):
            import_bytes(DATA, file_name="m.csv", meta_overrides={"hb_g_dl": "x"})
        out = import_bytes(b"# body_mass_kg:\n" + DATA, file_name="m.csv", meta_overrides={"height_cm": "181,5"})
        assert out.session.meta == {"height_cm": 181.5}
