"""Before/after in one run: the tree before the speed pass, exported from git, beside this one.

``BEFORE_COMMIT`` is main as it stood before the work of the "speed a user feels" issue; the
rows of ``bench_user_speed.py`` run the same measuring code against both trees, each in a fresh
interpreter (``run_in_tree``), alternating, so both see the same machine in the same minutes.
Without git (a source archive) the "before" column is left empty and said so.
"""

from __future__ import annotations

import functools
import json
import os
import resource
import subprocess
import sys
import tarfile
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]

#: main before the speed work (CLI start-up, reader, store listing, batch, deployment).
BEFORE_COMMIT = "15c392e"


@functools.lru_cache(maxsize=1)
def before_tree() -> Path | None:
    """The ``BEFORE_COMMIT`` tree in a temporary folder, or ``None`` when git cannot give it."""
    target = Path(tempfile.mkdtemp(prefix="tidemark-before-"))
    try:
        archive = subprocess.run(
            ["git", "-C", str(ROOT), "archive", "--format=tar", BEFORE_COMMIT],
            capture_output=True, check=True, timeout=120,
        ).stdout
    except (OSError, subprocess.SubprocessError):
        return None
    with tarfile.open(fileobj=__import__("io").BytesIO(archive)) as tar:
        tar.extractall(target, filter="data")
    return target


@dataclass(frozen=True)
class ProcessCost:
    """One finished process: CPU and wall seconds, peak resident memory (MiB), its stdout."""

    cpu_s: float
    wall_s: float
    peak_mib: float
    stdout: str


def run_process(args: list[str], *, tree: Path, env: dict[str, str] | None = None, timeout: float = 3600) -> ProcessCost:
    """Run ``args`` with ``tree`` first on the import path; the kernel's accounting of that process."""
    environment = dict(os.environ, PYTHONPATH=str(tree), **(env or {}))
    t0 = time.perf_counter()
    with tempfile.TemporaryFile() as out, tempfile.TemporaryFile() as err:
        proc = subprocess.Popen(args, cwd=tree, env=environment, stdout=out, stderr=err)
        _, status, usage = os.wait4(proc.pid, 0)
        wall = time.perf_counter() - t0
        proc.returncode = os.waitstatus_to_exitcode(status)
        out.seek(0)
        text = out.read().decode("utf-8", errors="replace")
        err.seek(0)
        last_lines = err.read().decode("utf-8", errors="replace").strip().splitlines()[-5:]
    if proc.returncode not in (0,):
        shown = [a if len(a) < 80 else a[:60] + "..." for a in args[:3]]
        raise RuntimeError(f"{shown} exited with {proc.returncode} in {tree}: " + " | ".join(last_lines))
    return ProcessCost(usage.ru_utime + usage.ru_stime, wall, usage.ru_maxrss / 1024, text)


def run_in_tree(code: str, *, tree: Path, timeout: float = 3600) -> Any:
    """Run Python ``code`` (which prints one JSON value last) in a fresh interpreter in ``tree``."""
    cost = run_process([sys.executable, "-c", code], tree=tree, timeout=timeout)
    return json.loads(cost.stdout.strip().splitlines()[-1])


def median_cost(args: list[str], *, tree: Path, runs: int = 5) -> ProcessCost:
    """Median CPU, wall and peak memory of ``runs`` runs after one warm-up run."""
    run_process(args, tree=tree)
    costs = [run_process(args, tree=tree) for _ in range(runs)]
    mid = lambda xs: sorted(xs)[len(xs) // 2]  # noqa: E731
    return ProcessCost(mid([c.cpu_s for c in costs]), mid([c.wall_s for c in costs]), mid([c.peak_mib for c in costs]), "")


def children_cpu_s() -> float:
    u = resource.getrusage(resource.RUSAGE_CHILDREN)
    return u.ru_utime + u.ru_stime
