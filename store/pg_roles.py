"""A PostgreSQL set-up where the application's role owns nothing and cannot rewrite history.

Two roles: an *owner* (owns the database and the tables, runs the migrations: open the store
once with its URL after each Tidemark upgrade) and the *application* role the dashboard and
the command use day to day. The application role gets:

* ``SELECT, INSERT`` only on the tables where history lives (:data:`HISTORY_TABLES`): it can
  add audit rows, versions, sign-offs and share views, never change or remove them;
* ``SELECT, INSERT, UPDATE`` on the other tables (soft delete is an UPDATE; nothing is
  deleted), no ``DELETE`` or ``TRUNCATE`` anywhere;
* ``SELECT`` on ``alembic_version`` (to see the schema is current) and use of the sequences.

Not owning the tables, it cannot drop or disable the append-only triggers either. Print the
statements with ``python -m store.pg_roles APP_ROLE`` and run them as the owner (again after
an upgrade that adds tables).
"""

from __future__ import annotations

import sys

from store.models import Base

#: Tables whose rows are only ever added (triggers refuse UPDATE/DELETE on the first three).
HISTORY_TABLES: tuple[str, ...] = ("audit_events", "analysis_versions", "sign_offs", "share_views")


def grant_statements(app_role: str) -> list[str]:
    """SQL (run as the owner) granting ``app_role`` what the application needs and no more."""
    if not app_role.replace("_", "").isalnum():
        raise ValueError("the role name may hold letters, digits and '_' only")
    role = f'"{app_role}"'
    out = [
        f"REVOKE ALL ON ALL TABLES IN SCHEMA public FROM {role}",
        f"GRANT USAGE ON SCHEMA public TO {role}",
        f"GRANT SELECT ON alembic_version TO {role}",
        f"GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO {role}",
    ]
    for table in sorted(Base.metadata.tables):
        rights = "SELECT, INSERT" if table in HISTORY_TABLES else "SELECT, INSERT, UPDATE"
        out.append(f"GRANT {rights} ON {table} TO {role}")
    return out


if __name__ == "__main__":  # pragma: no cover - printed for an administrator
    if len(sys.argv) != 2:
        raise SystemExit("usage: python -m store.pg_roles APP_ROLE")
    print(";\n".join(grant_statements(sys.argv[1])) + ";")
