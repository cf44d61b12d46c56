"""Entry script of the dashboard: ``streamlit run dashboard/app.py`` (or ``tidemark serve``).

:func:`run` builds the navigation once per run from the page modules in ``dashboard/views``.
Three modes:

- **Coach link** — the URL carries ``?link=TOKEN``: only the read-only coach view is shown (no
  navigation, no sign-in, nothing else in the store is reachable).
- **Demo mode** — the store was created by ``tidemark demo --load``: the built-in demo reviewer
  is signed in and a banner says so.
- **Staff sign-in** — otherwise a store account (user name and password) is required.
"""

from __future__ import annotations

import importlib
import logging
from collections.abc import Callable
from pathlib import Path
from types import ModuleType
from typing import TYPE_CHECKING, Any

import streamlit as st

from dashboard import data, state
from dashboard.errors import show_error, user_errors
from dashboard.lab import markdown_text

if TYPE_CHECKING:
    from store import Store, User

log = logging.getLogger("tidemark.dashboard")

#: (module under dashboard/views, title, icon) in the reviewer's order of work.
PAGES: tuple[tuple[str, str, str], ...] = (
    ("library", "Library", ":material/folder_open:"),
    ("review", "Review", ":material/monitoring:"),
    ("oxygen", "Oxygen path", ":material/bloodtype:"),
    ("progress", "Progress", ":material/trending_up:"),
    ("reports", "Reports", ":material/description:"),
    ("sharing", "Share links", ":material/link:"),
    ("lab_settings", "Lab settings", ":material/settings:"),
)

#: Pages only administrators see in the navigation (the store checks the role again on save).
ADMIN_PAGES: frozenset[str] = frozenset({"lab_settings"})

#: The browser tab's icon, served by the dashboard itself (no request to any other host).
FAVICON = Path(__file__).resolve().parent / "assets" / "favicon.png"

COACH_PAGE = ("coach", "Coach view", ":material/sports:")

CAUTION = (
    "Tidemark is not a medical device. Thresholds, zones and oxygen-transport figures are "
    "estimates. Exercise testing must be supervised, and results interpreted, by qualified staff "
    "under local protocols and licensed practice."
)


def load_page_module(name: str) -> ModuleType | None:
    """Import ``dashboard.views.<name>``; ``None`` (logged) when that page does not exist yet."""
    try:
        module = importlib.import_module(f"dashboard.views.{name}")
    except ModuleNotFoundError as exc:
        if exc.name not in (f"dashboard.views.{name}", "dashboard.views"):
            log.exception("page %s could not be imported", name)
        else:
            log.warning("page %s is not available (module missing)", name)
        return None
    except Exception:  # a broken page must not take the others down
        log.exception("page %s could not be imported", name)
        return None
    if not callable(getattr(module, "render", None)):
        log.warning("page %s has no render() function", name)
        return None
    return module


def _guarded(module: ModuleType, title: str) -> Callable[[], None]:
    def page() -> None:
        for kind, message in state.pop_flashes():
            getattr(st, kind, st.info)(message)
        with user_errors(title):
            module.render()

    page.__name__ = f"page_{module.__name__.rsplit('.', 1)[-1]}"
    return page


def build_pages(role: str = "") -> dict[str, Any]:
    """The ``st.Page`` objects of every available page for a user of ``role``, keyed by module name."""
    pages: dict[str, Any] = {}
    for i, (name, title, icon) in enumerate(PAGES):
        if name in ADMIN_PAGES and role != "admin":
            continue
        module = load_page_module(name)
        if module is None:
            continue
        pages[name] = st.Page(_guarded(module, title), title=title, icon=icon, url_path=name, default=i == 0)
    return pages


# --- sign-in -------------------------------------------------------------------------------


def _demo_user(store: Store) -> User | None:
    """The built-in demo reviewer when the store is a demo store, else ``None``."""
    is_demo = getattr(store, "is_demo_store", None)
    if not callable(is_demo) or not is_demo():
        return None
    getter = getattr(store, "demo_user", None)
    return getter() if callable(getter) else None


def oidc_configured() -> bool:
    """True when an identity provider is set up for ``st.login`` (an ``[auth]`` section in secrets)."""
    try:
        return "auth" in st.secrets
    except Exception:  # noqa: BLE001 - no secrets file at all is the common, local-accounts case
        return False


def identity_user(store: Store, *, is_logged_in: bool, email: str | None) -> User | None:
    """The Tidemark account for a provider sign-in, or ``None``.

    A provider sign-in alone grants nothing: the e-mail must match an active ``oidc`` account that
    an administrator created (``tidemark users add EMAIL --role ... --oidc``); the role is Tidemark's.
    """
    if not is_logged_in or not email:
        return None
    return store.user_for_identity(email)


def _provider_sign_in(store: Store) -> None:
    """Offer the identity provider's sign-in and map a signed-in provider user to a store account."""
    user_info = st.user
    logged_in = bool(getattr(user_info, "is_logged_in", False))
    user = identity_user(store, is_logged_in=logged_in, email=getattr(user_info, "email", None))
    if user is not None:
        state.set_current_user(user)
        st.rerun()
    if logged_in:
        st.warning(
            "You are signed in with your organisation, but there is no Tidemark account for this "
            "address. Ask an administrator to create one."
        )
        if st.button("Sign out of the organisation account"):
            st.logout()
    elif st.button("Sign in with the organisation's account", type="primary"):
        st.login()


def lab_name(store: Store) -> str:
    """The lab's name from the store's lab settings ("" when none is set or it cannot be read)."""
    try:
        return str(store.lab_identity().name or "")
    except Exception:
        log.exception("lab settings could not be read")
        return ""


def sign_in_subtitle(name: str) -> str:
    """The line under the sign-in title: the lab's own name when an administrator set one."""
    base = "Breath-by-breath exercise test review"
    return f"{base} — {name}" if name else base


def sign_in_client() -> str | None:
    """Who is signing in, for the per-client limit: the browser's address.

    Behind a reverse proxy on the same machine every request comes from loopback; then the last
    address the proxy appended to ``X-Forwarded-For`` is the browser's (the entries before it
    are whatever the browser sent, so they are not trusted).
    """
    try:
        address = st.context.ip_address
        forwarded = st.context.headers.get("X-Forwarded-For") if address in ("127.0.0.1", "::1") else None
    except Exception:  # noqa: BLE001 - not every Streamlit context knows it
        address, forwarded = None, None
    if forwarded:
        address = forwarded.split(",")[-1].strip() or address
    return f"ip:{address}" if address else None


def sign_in_form(store: Store) -> None:
    """Render the staff sign-in form; on success store the user and rerun."""
    st.title("Tidemark")
    st.caption(sign_in_subtitle(lab_name(store)), unsafe_allow_html=False)
    if oidc_configured():
        _provider_sign_in(store)
        st.caption("Or sign in with a local Tidemark account:")
    with st.form("sign_in"):
        username = st.text_input("User name")
        # "current-password": password managers fill in the saved password (not a new one).
        password = st.text_input("Password", type="password", autocomplete="current-password")
        submitted = st.form_submit_button("Sign in", type="primary")
    if submitted:
        try:
            user = store.authenticate(username.strip(), password, client=sign_in_client())
        except Exception as exc:  # noqa: BLE001 - throttling and other refusals are shown plainly
            show_error(exc, context="Sign-in")
            return
        if user is None:
            st.error("User name or password not recognised.")
            return
        state.set_current_user(user)
        st.rerun()
    st.info("Accounts are created by an administrator with `tidemark users add NAME --role reviewer`.")


def sidebar(store: Store) -> None:
    with st.sidebar:
        user = state.current_user()
        if state.in_demo_mode():
            st.warning("**Demo mode** — fictional people of a fictional lab; signed in as the demo reviewer.")
        elif user is not None:
            st.caption(f"Signed in as **{markdown_text(state.user_name())}** ({state.user_role()})")
            if st.button("Sign out", key="sign_out"):
                state.sign_out()
                st.rerun()
        unsaved = state.tests_with_pending_changes()
        if unsaved:
            st.warning(unsaved_reminder(len(unsaved)))
        st.caption(CAUTION)


def unsaved_reminder(n_tests: int) -> str:
    """The sidebar's reminder, on every page, of Review changes not yet saved."""
    which = "one test" if n_tests == 1 else f"{n_tests} tests"
    return f"Unsaved Review changes on {which}: save or discard them on the Review page (signing out drops them)."


def run() -> None:
    """Build and run the dashboard for this browser session."""
    st.set_page_config(page_title="Tidemark", page_icon=str(FAVICON), layout="wide")
    token = st.query_params.get("link")
    if token is not None:
        run_coach(str(token))
        return
    try:
        store = data.get_store()
    except Exception as exc:  # noqa: BLE001 - no store, no app; say so plainly
        show_error(exc, context="The data store could not be opened")
        st.stop()
    if state.current_user() is None:
        demo = _demo_user(store)
        if demo is not None:
            state.set_current_user(demo, demo=True)
    if state.current_user() is None:
        st.navigation(sign_in_pages(store), position="hidden").run()
        return
    pages = build_pages(state.user_role())
    state.register_pages(pages)
    sidebar(store)
    if not pages:
        st.error("No dashboard pages are available. Check the server log.")
        return
    st.navigation(list(pages.values())).run()


def sign_in_pages(store: Store) -> list[Any]:
    """The sign-in form under its own address and under every page's address.

    A bookmarked or shared deep link (``/library``) then opens the sign-in form instead of a
    "Page not found" dialog, and after signing in the same address shows that page.
    """
    def form() -> None:
        sign_in_form(store)

    pages = [st.Page(form, title="Sign in", url_path="sign-in", default=True)]
    for name, title, _icon in PAGES:
        def deep(title: str = title) -> None:
            sign_in_form(store)

        deep.__name__ = f"sign_in_for_{name}"
        pages.append(st.Page(deep, title=f"Sign in — {title}", url_path=name))
    return pages


def _invalid_link() -> None:
    st.error("This link is not valid. Ask the lab that sent it for a new one.")


def run_coach(token: str) -> None:
    """Coach-link mode: the read-only coach view and nothing else."""
    state.set_share_token(token)
    module = load_page_module(COACH_PAGE[0])
    if module is None:
        page = st.Page(_invalid_link, title="Tidemark", url_path="coach")
    else:
        page = st.Page(_guarded(module, COACH_PAGE[1]), title=COACH_PAGE[1], url_path="coach")
    st.navigation([page], position="hidden").run()


if __name__ == "__main__":
    run()
