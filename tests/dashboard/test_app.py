"""The app shell (AppTest of dashboard/app.py): demo mode, staff sign-in, coach-link isolation,
the navigation built from the page modules, and ``tidemark serve``'s command line."""

from __future__ import annotations

import pytest

from dashboard import app
from tests.support import ROOT

APP = str(ROOT / "dashboard" / "app.py")


def _app_test():
    from streamlit.testing.v1 import AppTest

    return AppTest.from_file(APP, default_timeout=60)


def test_demo_store_signs_in_the_demo_reviewer_and_shows_the_library(demo_store):
    at = _app_test().run()
    assert not at.exception, at.exception
    assert at.session_state["tm_demo_mode"] is True
    assert at.session_state["tm_user"].username == demo_store.user.username
    assert any("Demo mode" in w.value for w in at.sidebar.warning)
    assert any(t.value == "Library" for t in at.title)
    assert any("not a medical device" in c.value for c in at.sidebar.caption)


def test_coach_link_shows_only_the_coach_view(demo_store):
    at = _app_test()
    at.query_params["link"] = "not-a-real-token"
    at.run()
    assert not at.exception, at.exception
    assert at.session_state["tm_share_token"] == "not-a-real-token"
    texts = [e.value for e in at.error] + [m.value for m in at.markdown]
    assert any("This link is not valid." in t for t in texts)
    assert not any(t.value == "Library" for t in at.title)
    assert not at.sidebar.warning  # no demo banner, no sign-in: nothing of the staff app


def test_page_modules_that_are_missing_are_skipped(caplog):
    assert app.load_page_module("no_such_page_module") is None
    assert "not available" in caplog.text
    assert app.load_page_module("library") is not None
    assert [p[1] for p in app.PAGES][:2] == ["Library", "Review"]


def test_serve_command_line():
    from analysis.errors import InvalidParameter
    from tidemark.cli import main
    from tidemark.commands import serve

    cmd = serve.streamlit_command(port=8630, host="127.0.0.1")
    assert cmd[1:4] == ["-m", "streamlit", "run"] and cmd[4].endswith("dashboard/app.py")
    assert cmd[cmd.index("--client.toolbarMode") + 1] == "viewer"  # no "Deploy" button
    assert cmd[cmd.index("--server.port") + 1] == "8630"
    assert cmd[cmd.index("--server.address") + 1] == "127.0.0.1"
    with pytest.raises(InvalidParameter, match="--port"):
        serve.streamlit_command(port=70000, host="127.0.0.1")
    assert main(["serve", "--port", "0"]) == 2  # bad input, message on stderr
    assert serve.DEFAULT_PORT == 8630


def test_no_streamlit_folder_pages_beside_the_entry_script():
    """Streamlit serves every module of a ``pages/`` folder beside the entry script as a page of
    its own; the page modules live in ``dashboard/views`` so no start shows raw module pages."""
    from tidemark.commands.serve import app_path

    here = app_path().parent
    assert not (here / "pages").exists()
    assert (here / "views" / "review.py").is_file()
    assert app.load_page_module("review").__name__ == "dashboard.views.review"


def test_plain_streamlit_run_reads_the_viewer_toolbar_setting(tmp_path):
    """``streamlit run dashboard/app.py`` from any folder reads ``dashboard/.streamlit/config.toml``
    (Streamlit's script-level config file), so the "Deploy" button is hidden there too."""
    import subprocess
    import sys

    from tidemark.commands.serve import app_path

    code = (
        "import sys; from streamlit import config; config._main_script_path = sys.argv[1]; "
        "config.get_config_options(force_reparse=True); "
        "print(config.get_option('client.toolbarMode'), config.get_option('server.maxUploadSize'))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code, str(app_path())], cwd=tmp_path, capture_output=True, text=True, check=True
    )
    assert out.stdout.split() == ["viewer", "50"]


def test_staff_store_needs_sign_in(tmp_path, monkeypatch):
    from store import open_store
    from tests.dashboard.conftest import make_user

    url = f"sqlite:///{tmp_path / 'staff.sqlite'}"
    store = open_store(url)
    try:
        make_user(store, "ana.reviewer", "reviewer", password="Saltmarsh-test-pass-2026!")
    finally:
        store.close()
    monkeypatch.setenv("TIDEMARK_STORE", url)
    at = _app_test().run()
    assert not at.exception, at.exception
    assert "tm_user" not in at.session_state or at.session_state["tm_user"] is None
    assert [b.label for b in at.button] == ["Sign in"]
    at.text_input[0].input("ana.reviewer")
    at.text_input[1].input("wrong password")
    at.button[0].click().run()
    shown = [e.value.replace("\\", "") for e in at.error]  # shown escaped (markdown)
    assert any("not recognised" in e or "refused" in e.lower() or "sign-in" in e.lower() for e in shown)
    at.text_input[1].input("Saltmarsh-test-pass-2026!")
    at.button[0].click().run()
    assert not at.exception, at.exception
    assert at.session_state["tm_user"].username == "ana.reviewer"
    assert any(t.value == "Library" for t in at.title)
    assert any("Signed in as" in c.value for c in at.sidebar.caption)


class _IdentityStore:
    """Stands in for the store's ``user_for_identity`` (the store's own tests cover the lookup)."""

    def __init__(self, accounts: dict[str, str]):
        self.accounts = accounts
        self.asked: list[str] = []

    def user_for_identity(self, email: str):
        self.asked.append(email)
        return self.accounts.get(email)


def test_provider_sign_in_grants_nothing_without_a_tidemark_account():
    store = _IdentityStore({"coach.lead@saltmarsh.example": "account"})
    assert app.identity_user(store, is_logged_in=False, email="coach.lead@saltmarsh.example") is None
    assert app.identity_user(store, is_logged_in=True, email=None) is None
    assert store.asked == []  # nothing is looked up before the provider has signed the person in
    assert app.identity_user(store, is_logged_in=True, email="stranger@elsewhere.example") is None
    assert app.identity_user(store, is_logged_in=True, email="coach.lead@saltmarsh.example") == "account"


def test_provider_button_appears_only_when_an_identity_provider_is_configured(tmp_path, monkeypatch):
    from store import open_store

    url = f"sqlite:///{tmp_path / 'staff.sqlite'}"
    open_store(url).close()
    monkeypatch.setenv("TIDEMARK_STORE", url)
    at = _app_test()
    at.secrets["auth"] = {
        "redirect_uri": "http://127.0.0.1:8630/oauth2callback",
        "cookie_secret": "test-only-cookie-secret",
        "client_id": "tidemark-test",
        "client_secret": "test-only-secret",
        "server_metadata_url": "http://127.0.0.1:9/.well-known/openid-configuration",
    }
    at.run()
    assert not at.exception, at.exception
    assert [b.label for b in at.button] == ["Sign in with the organisation's account", "Sign in"]
