"""Save and compare the full results of many analyses: the identical-results check of speed work.

Usage::

    .venv/bin/python benchmarks/results_snapshot.py save /tmp/before.json
    ... change the code ...
    .venv/bin/python benchmarks/results_snapshot.py compare /tmp/before.json

Covers the six demo profiles x seeds (2) x noise (0.5, 1, 2) x settings (default; 15-breath
averaging; reviewer exclusions/restorations with a VT1 override), each analysed from the
session file text read back by the strict reader (so the reader is covered too), plus the
demo files in ``demo_sessions/`` as they are; every kind of the simulator suite
(:func:`analysis.simulation.simulation_suite`) x seeds (2) x noise 0.5/1/2, the suite's
"foreign" half also read back through a foreign export and the importer; and the long
benchmark sessions of 2,000 and 20,000 breaths (``benchmarks/sessions.py``), each also read
back by the strict reader. ``compare`` prints every analysis whose results JSON differs and
exits 1 when any does.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

SEEDS = (11, 12)
NOISES = (0.5, 1.0, 2.0)
SUITE_SEEDS = (0, 1)
LONG_BREATHS = (2000, 20000)


def _settings() -> dict[str, Any]:
    from analysis.breaths import AveragingSpec
    from analysis.settings import AnalysisSettings, ThresholdOverride

    return {
        "default": AnalysisSettings(),
        "breaths15": AnalysisSettings(averaging=AveragingSpec("breaths", 15)),
        "reviewer": AnalysisSettings(
            excluded_rows=(5, 40, 41, 200),
            restored_rows=(),
            vt1_override=ThresholdOverride(t_s=700.0, vo2_ml_min=None, reason="snapshot"),
        ),
    }


def snapshot() -> dict[str, Any]:
    """Results JSON of every analysis, keyed by a readable name."""
    from analysis.io import read_session
    from analysis.io.session_file import session_to_text
    from analysis.pipeline import analyze_session
    from analysis.records import to_json
    from analysis.simulation import DEMO_TESTS, simulate_session

    out: dict[str, Any] = {}
    settings = _settings()
    for demo in DEMO_TESTS:
        for seed in SEEDS:
            for noise in NOISES:
                sim = simulate_session(demo.profile, demo.protocol, seed=seed, noise=noise, artifacts=3)
                text = session_to_text(sim).encode()
                session = read_session(text, file_name=f"{demo.stem}.session.csv")
                for name, s in settings.items():
                    key = f"{demo.stem}/seed{seed}/noise{noise}/{name}"
                    out[key] = to_json(analyze_session(session, s))
    for path in sorted((ROOT / "demo_sessions").glob("*.session.csv")):
        out[f"file/{path.name}"] = to_json(analyze_session(read_session(path)))
    out.update(_suite())
    out.update(_long())
    return json.loads(json.dumps(out, sort_keys=True, allow_nan=True))


def _suite() -> dict[str, Any]:
    """Every simulator kind, directly and (the foreign half) through a foreign export and the importer."""
    from analysis.io import import_bytes
    from analysis.pipeline import analyze_session
    from analysis.records import to_json
    from analysis.simulation import ALL_KINDS, NOISE_LEVELS, simulation_suite
    from analysis.simulation.foreign import FOREIGN_LAYOUTS, foreign_export_bytes, foreign_meta_overrides

    out: dict[str, Any] = {}
    for case in simulation_suite(ALL_KINDS, seeds=SUITE_SEEDS, noise_levels=NOISE_LEVELS):
        out[f"suite/{case.label}"] = to_json(analyze_session(case.session))
        if case.foreign:
            layout = FOREIGN_LAYOUTS[(case.seed + round(case.noise * 2)) % len(FOREIGN_LAYOUTS)]
            imported = import_bytes(
                foreign_export_bytes(case.session, layout=layout),
                file_name=f"{case.kind}-{case.seed}.csv",
                meta_overrides=foreign_meta_overrides(case.session, layout=layout),
            ).session
            out[f"suite/{case.label}/{layout}"] = to_json(analyze_session(imported))
    return out


def _long() -> dict[str, Any]:
    """The benchmark sessions of 2,000 and 20,000 breaths, as built and read back from their file text."""
    from analysis.io import read_session
    from analysis.pipeline import analyze_session
    from analysis.records import to_json
    from benchmarks.sessions import session_of, session_text

    out: dict[str, Any] = {}
    for n in LONG_BREATHS:
        out[f"long/{n}"] = to_json(analyze_session(session_of(n)))
        read = read_session(session_text(n), file_name=f"bench-{n}.session.csv")
        out[f"long/{n}/read"] = to_json(analyze_session(read))
    return out


def main(argv: list[str]) -> int:
    if len(argv) != 2 or argv[0] not in ("save", "compare"):
        print(__doc__)
        return 2
    action, target = argv
    current = snapshot()
    if action == "save":
        Path(target).write_text(json.dumps(current, sort_keys=True, allow_nan=True), encoding="utf-8")
        print(f"saved {len(current)} analyses to {target}")
        return 0
    saved = json.loads(Path(target).read_text(encoding="utf-8"))
    differ = sorted(k for k in set(saved) | set(current) if saved.get(k) != current.get(k))
    for key in differ:
        print(f"DIFFERS {key}")
    print(f"{len(current)} analyses, {len(differ)} differ")
    return 1 if differ else 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
