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


def _store_imports(path: Path) -> list[tuple[int, str, tuple[str, ...]]]:
    """``(line, module, names)`` of every import of the store package or its modules in ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    found: list[tuple[int, str, tuple[str, ...]]] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [(node.lineno, a.name, ()) for a in node.names if a.name.split(".")[0] == "store"]
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0 and node.module.split(".")[0] == "store":
            found.append((node.lineno, node.module, tuple(a.name for a in node.names)))
    return found


def _store_offenders(paths: list[Path], public: set[str], root: Path) -> list[str]:
    """Imports of store modules, or of names the store package does not publish."""
    offenders = []
    for p in paths:
        for line, module, names in _store_imports(p):
            where = f"{p.relative_to(root)}:{line}"
            if module != "store":
                offenders.append(f"{where} imports {module}")
            else:
                offenders += [f"{where} imports store.{n}, not in store.__all__" for n in names if n not in public]
    return offenders


def test_dashboard_reaches_the_store_only_through_its_public_api():
    # The dashboard renders and collects input; storage and access control live behind the store's
    # public API (`store.__all__`: the Store class, its records and errors), never its modules
    # (store.models, store.review, store.accounts, ...), so the store can change inside.
    import store

    paths = sorted((ROOT / "dashboard").rglob("*.py"))
    assert len(paths) > 10  # the rule looks at the real pages
    assert _store_offenders(paths, set(store.__all__), ROOT) == []


def test_the_dashboard_rule_catches_imports_of_store_internals(tmp_path):
    # the rule on a module written for the purpose: each kind of violation is named with its line
    bad = tmp_path / "page.py"
    bad.write_text("from store.models import TestRow\nimport store.review\nfrom store import Store, _secret\n")
    assert _store_offenders([bad], {"Store"}, tmp_path) == [
        "page.py:1 imports store.models",
        "page.py:2 imports store.review",
        "page.py:3 imports store._secret, not in store.__all__",
    ]
