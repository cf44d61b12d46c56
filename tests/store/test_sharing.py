"""Share links: 256-bit tokens stored as hashes; one identical refusal for every bad token."""

from __future__ import annotations

import hashlib
import secrets
import string

import pytest
from sqlalchemy import select
from sqlalchemy.orm import Session as DbSession

from analysis.errors import InvalidParameter
from store import PermissionDenied
from store.models import ShareLink
from store.sharing import SHARE_SECTIONS
from tests.store.standin import csv_bytes


@pytest.fixture
def two_people(store, users) -> dict[str, list[int]]:
    """Two fictional athletes of the Saltmarsh Exercise Lab, two tests and one test."""
    rhea = users["rhea"]
    ids = {
        "SEL-101": [
            store.import_test(csv_bytes(3500.0 + i, subject="SEL-101"), file_name=f"a{i}.csv", actor=rhea,
                              display_name="Iris Fenwick").test_id
            for i in range(2)
        ],
        "SEL-202": [store.import_test(csv_bytes(2900.0, subject="SEL-202"), file_name="b.csv", actor=rhea,
                                      display_name="Owen Tarrant").test_id],
    }
    return ids


def person_of(store, test_id: int) -> int:
    return store.get_test(test_id).summary.person_id


class TestCreateAndResolve:
    def test_test_link_covers_exactly_that_test(self, store, users, two_people):
        tid = two_people["SEL-101"][0]
        token, share_id = store.create_share(actor=users["rhea"], test_id=tid, expires_in_days=30)
        scope = store.resolve_share(token)
        assert scope.share_id == share_id and scope.test_ids == (tid,)
        assert scope.sections == SHARE_SECTIONS and scope.show_name is False

    def test_person_link_covers_only_that_persons_tests(self, store, users, two_people):
        pid = person_of(store, two_people["SEL-101"][0])
        token, _ = store.create_share(actor=users["rhea"], person_id=pid, expires_in_days=30)
        scope = store.resolve_share(token)
        assert scope.test_ids == tuple(sorted(two_people["SEL-101"]))
        assert not set(scope.test_ids) & set(two_people["SEL-202"])
        # A later test of the same person is not shared without a new link.
        store.import_test(csv_bytes(3600.0, subject="SEL-101"), file_name="later.csv", actor=users["rhea"])
        assert store.resolve_share(token).test_ids == tuple(sorted(two_people["SEL-101"]))

    def test_token_has_at_least_128_bits_and_only_its_hash_is_stored(self, store, users, two_people):
        token, share_id = store.create_share(actor=users["rhea"], test_id=two_people["SEL-202"][0], expires_in_days=1)
        # secrets.token_urlsafe(32): 32 random bytes = 256 bits, 43 URL-safe characters (Python docs).
        assert len(token) == 43 and set(token) <= set(string.ascii_letters + string.digits + "-_")
        with DbSession(store.engine) as db:
            link = db.execute(select(ShareLink).where(ShareLink.id == share_id)).scalar_one()
            stored = [str(v) for v in vars(link).values()]
        assert link.token_sha256 == hashlib.sha256(token.encode()).hexdigest()
        assert not any(token in v for v in stored)

    def test_name_shown_only_when_chosen(self, store, users, two_people):
        tid = two_people["SEL-101"][0]
        plain, _ = store.create_share(actor=users["rhea"], test_id=tid, expires_in_days=5)
        named, _ = store.create_share(actor=users["rhea"], test_id=tid, expires_in_days=5, show_name=True,
                                      sections=("headline",))
        assert store.shared_tests(store.resolve_share(plain))[0]["label"] == "SEL-101"
        shown = store.shared_tests(store.resolve_share(named))[0]
        assert shown["label"] == "Iris Fenwick" and shown["vo2peak_ml_min"] == pytest.approx(3500.0)

    def test_sections_limit_what_is_listed(self, store, users, two_people):
        token, _ = store.create_share(actor=users["rhea"], test_id=two_people["SEL-202"][0], expires_in_days=5,
                                      sections=("zones",))
        (item,) = store.shared_tests(store.resolve_share(token))
        assert "vo2peak_ml_min" not in item and store.resolve_share(token).sections == ("zones",)

    def test_each_view_is_logged(self, store, users, two_people, clock):
        token, share_id = store.create_share(actor=users["rhea"], test_id=two_people["SEL-202"][0], expires_in_days=5)
        for _ in range(3):
            clock.advance(hours=1)
            store.resolve_share(token)
        store.resolve_share(token, log_view=False)
        info = store.list_shares()[0]
        assert (info.id, info.n_views, info.last_viewed_at, info.active) == (share_id, 3, clock.now, True)
        store.log_share_view(share_id)
        assert store.list_shares()[0].n_views == 4

    @pytest.mark.parametrize("store_url", ["sqlite"], indirect=True)  # refusal does not depend on the back end
    @pytest.mark.parametrize("kwargs", [
        {"expires_in_days": 0}, {"expires_in_days": 400}, {"expires_in_days": 5, "sections": ("everything",)},
        {"expires_in_days": 5, "sections": ()},
    ])
    def test_invalid_link_options_refused(self, store, users, two_people, kwargs):
        with pytest.raises(InvalidParameter):
            store.create_share(actor=users["rhea"], test_id=two_people["SEL-202"][0], **kwargs)

    def test_needs_exactly_one_target(self, store, users, two_people):
        tid = two_people["SEL-202"][0]
        with pytest.raises(InvalidParameter, match="exactly one"):
            store.create_share(actor=users["rhea"], test_id=tid, person_id=person_of(store, tid), expires_in_days=5)
        with pytest.raises(InvalidParameter, match="exactly one"):
            store.create_share(actor=users["rhea"], expires_in_days=5)


class TestRefusals:
    @pytest.fixture
    def token(self, store, users, two_people) -> str:
        return store.create_share(actor=users["rhea"], test_id=two_people["SEL-101"][0], expires_in_days=14)[0]

    def test_random_guesses_resolve_to_none(self, store, token):
        guesses = [secrets.token_urlsafe(32) for _ in range(200)]
        assert all(store.resolve_share(g) is None for g in guesses)

    def test_every_single_character_change_resolves_to_none(self, store, token):
        for i in range(len(token)):
            replacement = "A" if token[i] != "A" else "B"
            assert store.resolve_share(token[:i] + replacement + token[i + 1:]) is None
        assert store.resolve_share(token) is not None

    @pytest.mark.parametrize("store_url", ["sqlite"], indirect=True)  # refusal does not depend on the back end
    @pytest.mark.parametrize("bad", ["", " ", "a" * 42, "a" * 44, "a" * 10_000, "../../etc/passwd", "' OR 1=1 --",
                                     "é" * 43, None, 12345])
    def test_malformed_tokens_resolve_to_none(self, store, token, bad):
        assert store.resolve_share(bad) is None

    def test_expired_link_resolves_to_none(self, store, token, clock):
        clock.advance(days=13, hours=23)
        assert store.resolve_share(token) is not None
        clock.advance(hours=1)
        assert store.resolve_share(token) is None
        assert store.list_shares()[0].active is False

    def test_revoked_link_resolves_to_none_and_is_audited(self, store, users, token):
        share_id = store.resolve_share(token).share_id
        store.revoke_share(share_id, actor=users["remy"], reason="season over")
        assert store.resolve_share(token) is None
        info = store.list_shares()[0]
        assert info.revoked_at is not None and not info.active
        assert store.list_shares(include_inactive=False) == []
        entry = store.audit_log()[-1]
        assert (entry.action, entry.actor, entry.reason) == ("share_revoke", "remy", "season over")

    def test_link_to_a_deleted_test_resolves_to_none(self, store, users, token, two_people):
        store.soft_delete_test(two_people["SEL-101"][0], actor=users["ada"])
        assert store.resolve_share(token) is None

    def test_refusals_are_indistinguishable(self, store, users, token, clock, two_people):
        revoked, rid = store.create_share(actor=users["rhea"], test_id=two_people["SEL-202"][0], expires_in_days=30)
        store.revoke_share(rid, actor=users["rhea"])
        clock.advance(days=15)  # expires `token`
        results = [store.resolve_share(t) for t in (token, revoked, secrets.token_urlsafe(32), "x")]
        assert results == [None, None, None, None]

    def test_viewer_cannot_create_or_revoke(self, store, users, token):
        share_id = store.list_shares()[0].id
        with pytest.raises(PermissionDenied):
            store.revoke_share(share_id, actor=users["vic"])
        assert store.resolve_share(token) is not None
