"""Set-up facts of the workspace: no demo name outside demo code, one upload limit, `make run`, the
TLS recipe in the README, the favicon served by the dashboard itself."""

from __future__ import annotations

import re
import subprocess
import tomllib

from analysis.io import DEFAULT_MAX_BYTES, MAX_UPLOAD_MB
from analysis.simulation import cast
from analysis.simulation.simulate import LAB_NAME
from tests.support import ROOT
from tidemark.commands.serve import streamlit_command

#: Code that writes the fictional demo data (the only code allowed to name the demo lab or cast).
DEMO_CODE = {
    "analysis/simulation",
    "store/demo_loader.py",
    "tidemark/commands/demo.py",
}
CODE_FOLDERS = ("analysis", "dashboard", "store", "tidemark")


def demo_names() -> set[str]:
    """The demo lab's name, its first word, and every demo person's display name.

    (The demo files' pseudonymous codes may appear in command examples: they name files.)
    """
    names = {LAB_NAME, LAB_NAME.split()[0]}
    for value in vars(cast).values():
        text = getattr(value, "display_name", None)
        if isinstance(text, str) and text:
            names.add(text)
    return names


def test_demo_names_are_known():
    names = demo_names()
    assert "Saltmarsh" in names and len(names) >= 4


def test_no_demo_name_in_code_outside_the_demo_writers():
    pattern = re.compile("|".join(re.escape(n) for n in sorted(demo_names(), key=len, reverse=True)), re.IGNORECASE)
    offenders = []
    for folder in CODE_FOLDERS:
        for path in sorted((ROOT / folder).rglob("*")):
            if path.suffix not in {".py", ".css", ".toml", ".html", ".js"} or not path.is_file():
                continue
            rel = path.relative_to(ROOT).as_posix()
            if any(rel == d or rel.startswith(d + "/") for d in DEMO_CODE):
                continue
            for i, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
                if pattern.search(line):
                    offenders.append(f"{rel}:{i}: {line.strip()}")
    assert offenders == []


def test_upload_limit_is_one_number_in_browser_server_and_importer():
    config = tomllib.loads((ROOT / "dashboard" / ".streamlit" / "config.toml").read_text(encoding="utf-8"))
    assert config["server"]["maxUploadSize"] == MAX_UPLOAD_MB == 50
    # the browser's upload box counts 1 MB as 1,000,000 bytes: the importer refuses above the same figure
    assert DEFAULT_MAX_BYTES == 50_000_000
    cmd = streamlit_command(port=8630, host="127.0.0.1")
    assert cmd[cmd.index("--server.maxUploadSize") + 1] == "50"


def test_make_run_installs_tidemark_without_the_test_extras_and_uses_the_demo_store():
    out = subprocess.run(["make", "-n", "-B", "run"], cwd=ROOT, capture_output=True, text=True, check=True).stdout
    installs = [line for line in out.splitlines() if "pip install" in line and "-e" in line]
    assert installs and all("test" not in line for line in installs)
    assert re.search(r"tidemark demo --load --store \S+demo\.sqlite", out)
    assert re.search(r"tidemark serve --port \d+ --store \S+demo\.sqlite", out)


def test_readme_recipe_serves_share_links_over_tls():
    # finding 6: a README recipe for serving behind a TLS reverse proxy with the public URL
    from analysis.io import MAX_UPLOAD_MB

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Serving coaches over the network (TLS reverse proxy)", 1)[1].split("\n## ", 1)[0]
    port = re.search(r"TIDEMARK_PUBLIC_URL=https://\S+ \S*tidemark serve --port (\d+)", section)
    assert port is not None
    assert f"proxy_pass http://127.0.0.1:{port.group(1)};" in section
    assert f"reverse_proxy 127.0.0.1:{port.group(1)}" in section
    assert "listen 443 ssl;" in section and "proxy_set_header Upgrade $http_upgrade;" in section
    assert f"client_max_body_size {MAX_UPLOAD_MB}m;" in section  # the one upload limit


def test_favicon_is_served_by_the_dashboard_itself():
    # finding 7: the browser tab's icon came from an outside font host; now it is our own PNG file
    from dashboard import app

    assert app.FAVICON.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, 5.2)
    source = (ROOT / "dashboard" / "app.py").read_text(encoding="utf-8")
    assert source.count("st.set_page_config(") == 1 and "page_icon=str(FAVICON)" in source
