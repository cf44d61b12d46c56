"""Start a throw-away PostgreSQL server for the store tests (loopback only, temporary directory)."""

from __future__ import annotations

import glob
import os
import shutil
import socket
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path


def find_bin_dir() -> Path | None:
    """Directory holding ``initdb`` and ``pg_ctl`` (Debian layout first), else None."""
    for candidate in sorted(glob.glob("/usr/lib/postgresql/*/bin"), reverse=True):
        if os.access(os.path.join(candidate, "initdb"), os.X_OK):
            return Path(candidate)
    found = shutil.which("initdb")
    return Path(found).parent if found else None


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@dataclass
class PgServer:
    bin_dir: Path
    root: Path
    port: int
    as_user: list[str]

    @property
    def data_dir(self) -> Path:
        return self.root / "data"

    def _run(self, *args: str, check: bool = True) -> subprocess.CompletedProcess:
        return subprocess.run([*self.as_user, *args], check=check, capture_output=True, text=True, timeout=120)

    def start(self) -> None:
        self._run(str(self.bin_dir / "initdb"), "-D", str(self.data_dir), "--auth=trust", "-U", "postgres",
                  "--encoding=UTF8", "--no-locale", "--no-sync")
        options = f"-p {self.port} -k {self.root} -c listen_addresses=127.0.0.1 -c fsync=off -c full_page_writes=off"
        self._run(str(self.bin_dir / "pg_ctl"), "-D", str(self.data_dir), "-o", options,
                  "-l", str(self.root / "server.log"), "-w", "-t", "60", "start")

    def stop(self) -> None:
        self._run(str(self.bin_dir / "pg_ctl"), "-D", str(self.data_dir), "-m", "fast", "-w", "stop", check=False)
        shutil.rmtree(self.root, ignore_errors=True)

    def url(self, database: str) -> str:
        return f"postgresql+psycopg://postgres@127.0.0.1:{self.port}/{database}"

    def admin_execute(self, sql: str) -> None:
        import psycopg

        with psycopg.connect(host="127.0.0.1", port=self.port, user="postgres", dbname="postgres", autocommit=True) as conn:
            conn.execute(sql)


def start_server() -> PgServer:
    """Start a server; as root it runs as the ``postgres`` OS user (root may not run it)."""
    bin_dir = find_bin_dir()
    if bin_dir is None:
        raise FileNotFoundError("PostgreSQL server binaries (initdb, pg_ctl) were not found")
    as_root = os.geteuid() == 0
    # As root, use /tmp itself: a TMPDIR under /root would not be reachable by "postgres".
    root = Path(tempfile.mkdtemp(prefix="tidemark-pg-", dir="/tmp" if as_root and os.path.isdir("/tmp") else None))
    as_user: list[str] = []
    if as_root:
        shutil.chown(root, user="postgres", group="postgres")
        as_user = ["runuser", "-u", "postgres", "--"]
    server = PgServer(bin_dir=bin_dir, root=root, port=_free_port(), as_user=as_user)
    try:
        server.start()
    except Exception:
        log = root / "server.log"
        detail = log.read_text(errors="replace")[-2000:] if log.exists() else ""
        shutil.rmtree(root, ignore_errors=True)
        raise RuntimeError(f"PostgreSQL did not start: {detail}") from None
    return server
