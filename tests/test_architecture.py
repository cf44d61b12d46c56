"""The functional core stays pure: no UI or database import under analysis/ (project rule,
common practice for a functional-core / thin-shell layout)."""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FORBIDDEN_IN_CORE = ("streamlit", "sqlalchemy", "alembic", "psycopg", "plotly", "store", "dashboard", "tidemark")


def _imported_roots(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    roots: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            roots.update(alias.name.split(".")[0] for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            roots.add(node.module.split(".")[0])
    return roots


def test_analysis_imports_no_ui_database_or_shell_package():
    offenders = {
        str(p.relative_to(ROOT)): sorted(_imported_roots(p) & set(FORBIDDEN_IN_CORE))
        for p in (ROOT / "analysis").rglob("*.py")
    }
    offenders = {k: v for k, v in offenders.items() if v}
    assert offenders == {}


def test_store_does_not_import_the_dashboard():
    offenders = [
        str(p.relative_to(ROOT))
        for p in (ROOT / "store").rglob("*.py")
        if {"streamlit", "dashboard"} & _imported_roots(p)
    ]
    assert offenders == []


def test_importing_the_whole_core_loads_no_streamlit():
    code = (
        "import sys, importlib, pkgutil, analysis\n"
        "for m in pkgutil.walk_packages(analysis.__path__, 'analysis.'):\n"
        "    importlib.import_module(m.name)\n"
        "print(sorted(k for k in sys.modules if k.split('.')[0] in ('streamlit', 'sqlalchemy', 'plotly')))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
