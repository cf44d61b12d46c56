"""Read-only share links for coaches and referrers.

A link carries a random token of 256 bits (``secrets.token_urlsafe(32)``); only its SHA-256 is
stored. A link covers one test or the tests one person had when it was created, expires, can
be revoked, and says which sections its holder may see. Every successful use is logged.
"""

from __future__ import annotations

import hashlib
import hmac
import json
import re
import secrets
from datetime import timedelta

from sqlalchemy import func, select

from analysis.errors import require
from store.core import Actor, aware, to_json
from store.errors import NotFound, StoreError
from store.models import PersonRow, ShareLink, ShareLinkTest, ShareMiss, ShareView, TestRow
from store.records import ShareInfo, ShareScope
from store.review import ReviewMixin

#: Kinds of logged share-link view.
VIEW_KINDS: tuple[str, ...] = ("open", "test", "report")
#: What a link may show; the default is all four (the display name is a separate choice).
SHARE_SECTIONS: tuple[str, ...] = ("headline", "zones", "charts", "report")
#: Longest a link may live (days); common practice for coach follow-up is weeks to a season.
MAX_SHARE_DAYS = 366
TOKEN_BYTES = 32
_TOKEN_RE = re.compile(r"^[A-Za-z0-9_-]{43}$")


def token_hash(token: str) -> str:
    return hashlib.sha256(token.encode("utf-8", "replace")).hexdigest()


class SharingMixin(ReviewMixin):
    def create_share(
        self,
        *,
        actor: Actor,
        test_id: int | None = None,
        person_id: int | None = None,
        expires_in_days: float,
        show_name: bool = False,
        sections: tuple[str, ...] | list[str] = SHARE_SECTIONS,
        note: str = "",
    ) -> tuple[str, int]:
        """Create a read-only link for one test or for one person's tests (reviewer or admin).

        Returns ``(token, share_id)``. The token is shown once and never stored; keep it in
        the link given to the coach. ``show_name=False`` (default) shows the pseudonymous code.
        """
        require((test_id is None) != (person_id is None), "test_id/person_id", "exactly one of them", (test_id, person_id))
        require(isinstance(expires_in_days, (int, float)) and 0 < expires_in_days <= MAX_SHARE_DAYS,
                "expires_in_days", f"a number of days above 0 and at most {MAX_SHARE_DAYS}", expires_in_days)
        sections = tuple(sections)
        require(bool(sections) and all(s in SHARE_SECTIONS for s in sections), "sections",
                f"one or more of {', '.join(SHARE_SECTIONS)}", sections)
        token = secrets.token_urlsafe(TOKEN_BYTES)
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "create share links")
            if actor_row is None:
                raise StoreError("Share links are created by a signed-in reviewer, not the command line.")
            if test_id is not None:
                test = self._live_test(db, test_id)
                covered = [test.id]
                owner = test.person_id
            else:
                person = db.get(PersonRow, person_id)
                if person is None or person.deleted_at is not None:
                    raise NotFound(f"No person with number {person_id} (it may have been deleted).")
                covered = list(db.execute(
                    select(TestRow.id).where(TestRow.person_id == person_id, TestRow.deleted_at.is_(None))
                ).scalars())
                owner = person.id
            now = self.now()
            link = ShareLink(
                token_sha256=token_hash(token), person_id=person_id, test_id=test_id, show_name=bool(show_name),
                sections_json=to_json(list(sections)), note=note or "", created_at=now, created_by=actor_row.id,
                expires_at=now + timedelta(days=float(expires_in_days)),
            )
            db.add(link)
            db.flush()
            for tid in covered:
                db.add(ShareLinkTest(share_id=link.id, test_id=tid))
            self._audit(db, actor=actor, actor_row=actor_row, action="share_create", test_id=test_id,
                        person_id=owner, field=f"share:{link.id}",
                        new={"tests": covered, "sections": list(sections), "show_name": bool(show_name),
                             "expires_at": link.expires_at.isoformat()})
            return token, link.id

    def _count_miss(self) -> None:
        """Count one attempt with a link that does not open (per UTC day; the token is not kept)."""
        day = self.now().strftime("%Y-%m-%d")
        with self._tx() as db:
            row = db.get(ShareMiss, day, with_for_update=True)
            if row is None:
                if self.dialect == "postgresql":
                    from sqlalchemy.dialects.postgresql import insert as pg_insert

                    db.execute(pg_insert(ShareMiss).values(day=day, attempts=1).on_conflict_do_update(
                        index_elements=["day"], set_={"attempts": ShareMiss.attempts + 1}))
                else:
                    db.add(ShareMiss(day=day, attempts=1))
            else:
                row.attempts += 1

    def share_miss_counts(self, *, days: int = 30) -> list[tuple[str, int]]:
        """``(UTC day, attempts)`` with links that did not open, newest first (for administrators)."""
        with self._read() as db:
            rows = db.execute(select(ShareMiss.day, ShareMiss.attempts).order_by(ShareMiss.day.desc()).limit(days))
            return [(str(d), int(n)) for d, n in rows]

    def resolve_share(self, token: str, *, log_view: bool = True) -> ShareScope | None:
        """The scope of a valid link, else ``None``.

        ``None`` is returned alike for malformed, unknown, tampered, expired and revoked
        tokens, and for a link whose tests were all deleted: the caller learns nothing about
        which case it was. The lookup is by hash of the token, followed by a constant-time
        comparison. A successful resolution is logged as a view unless ``log_view=False``.
        """
        scope = self._resolve_share(token, log_view=log_view)
        if scope is None:
            self._count_miss()
        return scope

    def _resolve_share(self, token: str, *, log_view: bool) -> ShareScope | None:
        candidate = token if isinstance(token, str) else ""
        well_formed = bool(_TOKEN_RE.match(candidate))
        digest = token_hash(candidate if well_formed else "!" + candidate[:100])
        now = self.now()
        with self._tx() as db:
            link = db.execute(select(ShareLink).where(ShareLink.token_sha256 == digest)).scalar_one_or_none()
            stored = link.token_sha256 if link is not None else "0" * 64
            matches = hmac.compare_digest(stored, digest) and well_formed and link is not None
            if link is None or not matches or link.revoked_at is not None or aware(link.expires_at) <= now:
                return None
            test_ids = tuple(db.execute(
                select(ShareLinkTest.test_id)
                .join(TestRow, TestRow.id == ShareLinkTest.test_id)
                .join(PersonRow, PersonRow.id == TestRow.person_id)
                .where(ShareLinkTest.share_id == link.id, TestRow.deleted_at.is_(None), PersonRow.deleted_at.is_(None))
                .order_by(ShareLinkTest.test_id)
            ).scalars())
            if not test_ids:
                return None
            if log_view:
                db.add(ShareView(share_id=link.id, viewed_at=now))
            return ShareScope(
                share_id=link.id, test_ids=test_ids, sections=tuple(json.loads(link.sections_json)),
                show_name=link.show_name, expires_at=aware(link.expires_at), for_person=link.person_id is not None,
            )

    def log_share_view(self, share_id: int, *, kind: str = "open", test_id: int | None = None) -> None:
        """Record one more view of a link: ``open`` (when ``resolve_share(..., log_view=False)``
        was used), ``test`` (another test chosen inside a person link) or ``report`` (downloaded)."""
        require(kind in VIEW_KINDS, "kind", f"one of {', '.join(VIEW_KINDS)}", kind)
        with self._tx() as db:
            if db.get(ShareLink, share_id) is None:
                raise NotFound(f"No share link with number {share_id}.")
            db.add(ShareView(share_id=share_id, viewed_at=self.now(), kind=kind, test_id=test_id))

    def share_views(self, share_id: int) -> list[tuple[str, int | None, object]]:
        """Every logged use of a link ``(kind, test id, when)``, oldest first."""
        with self._read() as db:
            rows = db.execute(
                select(ShareView.kind, ShareView.test_id, ShareView.viewed_at)
                .where(ShareView.share_id == share_id).order_by(ShareView.id)
            ).all()
            return [(str(k), t, aware(at)) for k, t, at in rows]

    def revoke_share(self, share_id: int, *, actor: Actor, reason: str = "") -> None:
        """Revoke a link at once (reviewer or admin). Revoking twice is harmless."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "reviewer", "revoke share links")
            link = db.get(ShareLink, share_id)
            if link is None:
                raise NotFound(f"No share link with number {share_id}.")
            if link.revoked_at is None:
                link.revoked_at, link.revoked_by = self.now(), actor_row.id if actor_row else None
                self._audit(db, actor=actor, actor_row=actor_row, action="share_revoke", test_id=link.test_id,
                            person_id=link.person_id, field=f"share:{link.id}", reason=reason)

    def list_shares(
        self, *, test_id: int | None = None, person_id: int | None = None, include_inactive: bool = True
    ) -> list[ShareInfo]:
        """Share links (newest first), optionally those covering a test or created for a person."""
        now = self.now()
        query = select(ShareLink).order_by(ShareLink.id.desc())
        if person_id is not None:
            query = query.where(ShareLink.person_id == person_id)
        with self._read() as db:
            if test_id is not None:
                covering = select(ShareLinkTest.share_id).where(ShareLinkTest.test_id == test_id)
                query = query.where(ShareLink.id.in_(covering))
            links = db.execute(query).scalars().all()
            ids = [link.id for link in links]
            views = {
                sid: (n, last) for sid, n, last in db.execute(
                    select(ShareView.share_id, func.count(ShareView.id), func.max(ShareView.viewed_at))
                    .where(ShareView.share_id.in_(ids)).group_by(ShareView.share_id)
                ).all()
            } if ids else {}
            covered: dict[int, list[int]] = {}
            if ids:
                for sid, tid in db.execute(select(ShareLinkTest.share_id, ShareLinkTest.test_id).where(ShareLinkTest.share_id.in_(ids))):
                    covered.setdefault(sid, []).append(tid)
            names = self._usernames(db, {link.created_by for link in links})
        out = []
        for link in links:
            active = link.revoked_at is None and aware(link.expires_at) > now
            if not include_inactive and not active:
                continue
            n, last = views.get(link.id, (0, None))
            out.append(ShareInfo(
                id=link.id, test_id=link.test_id, person_id=link.person_id, test_ids=tuple(sorted(covered.get(link.id, []))),
                sections=tuple(json.loads(link.sections_json)), show_name=link.show_name, note=link.note,
                created_by=names.get(link.created_by, "?"), created_at=aware(link.created_at),
                expires_at=aware(link.expires_at), revoked_at=aware(link.revoked_at), n_views=int(n),
                last_viewed_at=aware(last), active=active,
            ))
        return out

    def shared_tests(self, scope: ShareScope) -> list[dict]:
        """What a link's holder may see in the test list: label, date, protocol, headline numbers.

        The label is the display name only when the link allows it, else the pseudonymous code.
        Headline numbers are included only when the link shows the ``headline`` section.
        """
        rows = self.list_tests(test_ids=scope.test_ids)
        out = []
        for t in rows:
            item = {
                "test_id": t.id,
                "label": (t.display_name or t.person_code) if scope.show_name else t.person_code,
                "test_date": t.test_date,
                "protocol": t.protocol,
            }
            if "headline" in scope.sections:
                item.update(vo2peak_ml_min=t.vo2peak_ml_min, vt1_vo2_ml_min=t.vt1_vo2_ml_min, ve_vco2_slope=t.ve_vco2_slope)
            out.append(item)
        return out
