"""``tidemark serve`` stopped with SIGTERM stops its Streamlit child: the port is free again."""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import time
import urllib.request

import pytest

from tests.support import ROOT


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def _answers(port: int) -> bool:
    try:
        with urllib.request.urlopen(f"http://127.0.0.1:{port}/_stcore/health", timeout=1) as r:
            return r.read().strip() == b"ok"
    except OSError:
        return False


def _children(pid: int) -> list[int]:
    path = f"/proc/{pid}/task/{pid}/children"
    if not os.path.exists(path):
        pytest.skip("/proc children list not available on this system")
    with open(path, encoding="ascii") as f:
        return [int(x) for x in f.read().split()]


@pytest.mark.slow
def test_sigterm_stops_the_dashboard_child(tmp_path):
    port = _free_port()
    env = dict(os.environ, TIDEMARK_STORE=str(tmp_path / "serve.sqlite"))
    proc = subprocess.Popen(
        [sys.executable, "-m", "tidemark", "serve", "--port", str(port)], cwd=ROOT, env=env,
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
    )
    try:
        deadline = time.monotonic() + 90
        while not _answers(port):
            assert proc.poll() is None, "serve exited early"
            assert time.monotonic() < deadline, "dashboard did not start"
            time.sleep(0.3)
        children = _children(proc.pid)
        assert children, "the dashboard runs as a child process"
        proc.send_signal(signal.SIGTERM)
        assert proc.wait(timeout=30) == 0
        deadline = time.monotonic() + 15
        while any(os.path.exists(f"/proc/{c}") and _alive(c) for c in children) and time.monotonic() < deadline:
            time.sleep(0.2)
        assert not any(_alive(c) for c in children), "the Streamlit child outlived serve"
        assert not _answers(port)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()


def _alive(pid: int) -> bool:
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii") as f:
            return f.read().split(")")[-1].split()[0] != "Z"
    except OSError:
        return False
