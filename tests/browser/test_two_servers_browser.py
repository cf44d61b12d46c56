"""A shared deployment: two dashboard servers on one PostgreSQL database, two reviewers in two
browsers (system Chromium), editing and signing off different tests and the same test.

Checked: each reviewer sees the other's saved work after a rerun on their own server; a save
made on an outdated version is refused with a message, not applied over the newer one (no lost
update); a sign-off made on one server shows on the other, and a change after it starts a new
version. The database is the suite's own throw-away PostgreSQL server (tests/store/pg_server.py).
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass

import pytest

from tests.browser.conftest import REQUIRE_ENV, chromium_path, demo_files, start_server, stop_server, wait_for_app, wait_for_health
from tests.support import skip_or_fail

PASSWORD = "two-servers-tide-17"
#: "VT1: 2 741 mL/min at 11:55 — automatic (consensus)": thin-space thousands, the time as m:ss.
VT1_LINE = re.compile(r"VT1:\s*([\d\u2009 ]+) mL/min at (\d+):(\d\d) — (.*)")


@dataclass
class Deployment:
    url: str
    servers: list[str]
    labels: dict[str, str]  # person code -> test choice label prefix


@pytest.fixture(scope="module")
def deployment(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Deployment]:
    if chromium_path() is None:
        skip_or_fail("system Chromium not found (set TIDEMARK_CHROMIUM)", require_env=REQUIRE_ENV)
    from tests.store.pg_server import find_bin_dir
    from tests.store.pg_server import start_server as start_pg

    if find_bin_dir() is None:
        skip_or_fail("PostgreSQL server binaries are not installed", require_env="TIDEMARK_REQUIRE_POSTGRES")
    pg = start_pg()
    procs = []
    try:
        pg.admin_execute("CREATE DATABASE tidemark_two_servers")
        url = pg.url("tidemark_two_servers")
        from store import LOCAL_OPERATOR, open_store

        store = open_store(url)
        try:
            for name in ("rhea", "remy"):
                store.create_user(name, role="reviewer", actor=LOCAL_OPERATOR, password=PASSWORD)
            rhea = {u.username: u for u in store.list_users()}["rhea"]
            for path in demo_files(2):
                store.import_test(path.read_bytes(), file_name=path.name, actor=rhea)
            labels = {t.person_code: f"{t.person_code} · {t.test_date}" for t in store.list_tests()}
        finally:
            store.close()
        logs = tmp_path_factory.mktemp("two-servers")
        bases = []
        for k in range(2):
            proc, base = start_server(url, log_path=logs / f"server{k}.log")
            procs.append(proc)
            bases.append(base)
        for k, (proc, base) in enumerate(zip(procs, bases, strict=True)):
            try:
                wait_for_health(base, timeout_s=120, proc=proc)
            except RuntimeError as exc:
                pytest.fail(f"{exc}; log:\n{(logs / f'server{k}.log').read_text(errors='replace')[-3000:]}")
        yield Deployment(url, bases, labels)
    finally:
        for proc in procs:
            stop_server(proc)
        pg.stop()


def _sign_in(browser, base: str, name: str):  # noqa: ANN001, ANN202 - Playwright objects
    context = browser.new_context(viewport={"width": 1366, "height": 900})
    page = context.new_page()
    page.set_default_timeout(90_000)
    page.goto(base)
    page.get_by_label("User name").fill(name)
    page.get_by_label("Password", exact=True).fill(PASSWORD)
    page.get_by_role("button", name="Sign in").click()
    page.get_by_text(f"Signed in as {name}").wait_for()
    wait_for_app(page)
    return context, page


def _open_review(page, base: str, label: str) -> None:  # noqa: ANN001
    # through the sidebar: loading the address again would start a new (signed-out) session
    page.locator("[data-testid='stSidebarNav'] a", has_text="Review").first.click()
    page.get_by_role("heading", name="Review", exact=True).wait_for()
    wait_for_app(page)
    _choose(page, label)


def _choose(page, label: str) -> None:  # noqa: ANN001
    box = page.get_by_label(re.compile(r"^Selected .*\. Test$|^Test$")).first
    if label not in page.locator("[data-testid='stSelectbox']").first.inner_text():
        box.click()
        box.fill(label)  # the choice list filters as one types
        box.press("Enter")
    page.get_by_role("heading", name=re.compile(re.escape(label.split(" · ")[0]))).wait_for()
    page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.wait_for()
    wait_for_app(page)


def _vt1(page) -> tuple[int, int, str]:  # noqa: ANN001
    text = page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.inner_text()
    m = VT1_LINE.search(text)
    assert m, text
    return int(re.sub(r"\D", "", m.group(1))), int(m.group(2)) * 60 + int(m.group(3)), m.group(4)


def _set_vt1(page, t_s: int, reason: str) -> None:  # noqa: ANN001
    page.get_by_label("Reason (kept in the audit trail)").fill(reason)
    page.get_by_role("textbox", name="Time (m:ss or seconds)").fill(str(t_s))
    page.get_by_role("button", name="Set VT1").click()
    wait_for_app(page)
    page.get_by_role("button", name=re.compile(r"^Save as version \d+$")).click()  # one version per Save
    wait_for_app(page)


def _wait_vt1_time(page, t_s: int) -> tuple[int, int, str]:  # noqa: ANN001
    page.wait_for_function(
        """(t) => { const el = [...document.querySelectorAll('[data-testid="stMarkdownContainer"]')]
                      .find(e => e.innerText.includes('VT1:'));
                    if (!el) return false;
                    const m = el.innerText.match(/at (\\d+):(\\d\\d) /);
                    return m && Math.abs(parseInt(m[1]) * 60 + parseInt(m[2]) - t) <= 10; }""",
        arg=t_s,
        timeout=90_000,
    )
    wait_for_app(page)
    return _vt1(page)


def _wait_saved(page) -> None:  # noqa: ANN001
    """The background save has finished (nothing pending is shown)."""
    page.wait_for_function(
        "() => !document.body.innerText.includes('Saving')", timeout=90_000,
    )
    wait_for_app(page)


def test_two_reviewers_on_two_servers(deployment, browser, screenshot):
    a_ctx, a = _sign_in(browser, deployment.servers[0], "rhea")
    b_ctx, b = _sign_in(browser, deployment.servers[1], "remy")
    try:
        cycle, runner = deployment.labels["SEL-0107"], deployment.labels["SEL-0212"]

        # --- different tests: each places VT1 on their own test, on their own server
        _open_review(a, deployment.servers[0], cycle)
        _open_review(b, deployment.servers[1], runner)
        a_t, b_t = _vt1(a)[1] + 90, _vt1(b)[1] + 60
        _set_vt1(a, a_t, "rhea on server one")
        _set_vt1(b, b_t, "remy on server two")
        assert "manual" in _wait_vt1_time(a, a_t)[2] and "manual" in _wait_vt1_time(b, b_t)[2]
        _wait_saved(a)
        _wait_saved(b)

        # --- each sees the other's saved work on their own server
        _choose(a, runner)
        assert abs(_wait_vt1_time(a, b_t)[1] - b_t) <= 10
        _choose(b, cycle)
        assert abs(_wait_vt1_time(b, a_t)[1] - a_t) <= 10
        screenshot(a, "two-servers-a-sees-b")

        # --- the same test: both have SEL-0212 open at the same version; rhea saves first
        _choose(b, runner)
        later_a, later_b = b_t + 60, b_t + 120
        _set_vt1(a, later_a, "rhea moves it")
        _wait_vt1_time(a, later_a)
        _wait_saved(a)
        _set_vt1(b, later_b, "remy moves it too")  # made on the version remy opened: refused
        b.get_by_text(re.compile(r"was changed by rhea")).wait_for(timeout=90_000)
        b.get_by_text("Your change was not saved").first.wait_for(timeout=60_000)
        screenshot(b, "two-servers-conflict")
        b.get_by_role("button", name="Reload the stored version").click()
        assert abs(_wait_vt1_time(b, later_a)[1] - later_a) <= 10  # rhea's save, not lost

        # --- sign-off on server two shows on server one; a change after it starts a new version
        b.get_by_role("button", name="Sign off this version").click()
        b.get_by_text(re.compile(r"Version \d+ is signed off")).wait_for(timeout=90_000)
        signed = int(re.search(r"Version (\d+) is signed off", b.get_by_text(re.compile(r"Version \d+ is signed off")).first.inner_text()).group(1))
        _choose(a, cycle)
        _choose(a, runner)  # a rerun on server one
        a.get_by_text(f"Version {signed} is signed off").wait_for(timeout=90_000)
        screenshot(a, "two-servers-a-sees-sign-off")
        _set_vt1(a, later_a + 30, "after the sign-off")
        _wait_vt1_time(a, later_a + 30)
        _wait_saved(a)
        _choose(b, cycle)
        _choose(b, runner)
        b.get_by_text(re.compile(r"Sign off this version")).wait_for(timeout=90_000)  # the new version is unsigned
        assert b.get_by_text(f"Version {signed} is signed off").count() == 0
    finally:
        a_ctx.close()
        b_ctx.close()

    from store import open_store

    store = open_store(deployment.url)
    try:
        test_id = next(t.id for t in store.list_tests() if t.person_code == "SEL-0212")
        versions = store.list_versions(test_id)
        assert [v["signed"] for v in versions].count(True) == 1 and versions[-1]["version"] == signed + 1
        reasons = [v["reason"] for v in versions]
        assert "remy moves it too" not in reasons  # the refused save left no version
        assert {"remy on server two", "rhea moves it", "after the sign-off"} <= set(reasons)
    finally:
        store.close()
