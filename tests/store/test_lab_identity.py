"""The lab's identity (name, address, logo, footer, public URL): set by an admin, audited, read by all."""

from __future__ import annotations

import struct
import zlib

import pytest

from store import PermissionDenied, StoreError
from store.lab import MAX_LOGO_BYTES, PUBLIC_URL_ENV, normalise_public_url, public_base_url


def tiny_png() -> bytes:
    """A valid 1x1 PNG built by hand (PNG specification: signature, IHDR, IDAT, IEND chunks)."""
    def chunk(kind: bytes, body: bytes) -> bytes:
        return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))

    ihdr = struct.pack(">IIBBBBB", 1, 1, 8, 2, 0, 0, 0)
    idat = zlib.compress(b"\x00\x00\x72\xb2")
    return b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr) + chunk(b"IDAT", idat) + chunk(b"IEND", b"")


def test_a_new_store_has_no_lab_name(store):
    identity = store.lab_identity()
    assert (identity.name, identity.address, identity.report_footer, identity.public_url) == ("", "", "", "")
    assert not identity.has_logo


def test_admin_sets_the_identity_and_every_change_is_audited(store, users):
    logo = tiny_png()
    out = store.set_lab_identity(
        actor=users["ada"], name="  Harbour   Sports Lab ", address="2 Quay Road, Porthaven",
        report_footer="Accredited lab no. 12\nContact: tests@harbour.example", public_url="tests.harbour.example/",
        logo=logo, reason="letterhead",
    )
    assert out.name == "Harbour Sports Lab"  # one line, single spaces
    assert out.address == "2 Quay Road, Porthaven"
    assert out.report_footer == "Accredited lab no. 12\nContact: tests@harbour.example"
    assert out.public_url == "https://tests.harbour.example"
    assert out.logo == logo and out.logo_mime == "image/png" and out.updated_by == "ada"
    assert store.lab_identity() == out
    events = [e for e in store.audit_log() if e.action == "lab_settings"]
    assert sorted(e.field for e in events) == ["lab.address", "lab.logo", "lab.name", "lab.public_url", "lab.report_footer"]
    name_event = next(e for e in events if e.field == "lab.name")
    assert (name_event.actor, name_event.reason) == ("ada", "letterhead")
    # an unchanged field writes no event; a change writes one with old and new value
    store.set_lab_identity(actor=users["ada"], name="Harbour Sports Lab", address="3 Quay Road")
    events = [e for e in store.audit_log() if e.action == "lab_settings"]
    assert len(events) == 6
    store.set_lab_identity(actor=users["ada"], remove_logo=True)
    assert not store.lab_identity().has_logo


def test_only_admins_change_the_identity(store, users):
    for who in ("rhea", "vic"):
        with pytest.raises(PermissionDenied, match="admin"):
            store.set_lab_identity(actor=users[who], name="Someone Else's Lab")
    assert store.lab_identity().name == ""


def test_logo_must_be_a_small_bitmap(store, users):
    with pytest.raises(StoreError, match="PNG or JPEG"):
        store.set_lab_identity(actor=users["ada"], logo=b"<svg onload='alert(1)'></svg>")
    with pytest.raises(StoreError, match="200 kB"):
        store.set_lab_identity(actor=users["ada"], logo=b"\x89PNG\r\n\x1a\n" + b"0" * MAX_LOGO_BYTES)
    assert not store.lab_identity().has_logo


@pytest.mark.parametrize(
    ("typed", "stored"),
    [
        ("tests.lab.example", "https://tests.lab.example"),
        ("https://Tests.Lab.Example/tidemark/", "https://tests.lab.example/tidemark"),
        ("http://127.0.0.1:8630", "http://127.0.0.1:8630"),
        ("", ""),
    ],
)
def test_public_url_is_normalised_https_by_default(typed, stored):
    assert normalise_public_url(typed) == stored


@pytest.mark.parametrize("bad", ["javascript:alert(1)", "ftp://lab.example", "https://lab.example/?x=1", "https://u@lab.example", "https:// bad host"])
def test_public_url_refuses_what_is_not_a_web_address(bad):
    with pytest.raises(StoreError):
        normalise_public_url(bad)


def test_environment_public_url_wins_over_the_setting():
    assert public_base_url("https://stored.example", environ={}) == "https://stored.example"
    assert public_base_url("https://stored.example", environ={PUBLIC_URL_ENV: "env.example/"}) == "https://env.example"
    assert public_base_url("", environ={}) is None
