"""Read and write Tidemark session files (see ``docs/session-format.md``).

A session file is UTF-8 CSV: optional ``# key: value`` metadata lines, then one header row of
canonical column names, then one row per breath.
"""

from __future__ import annotations

import io
import math
from pathlib import Path
from typing import Any

import pandas as pd

from analysis import columns as C
from analysis.session import META_FLOAT_KEYS, Session

#: Order in which canonical columns are written.
COLUMN_ORDER: tuple[str, ...] = tuple(C.COLUMNS)


def _format_meta_value(value: Any) -> str:
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        return repr(round(value, 6)).rstrip("0").rstrip(".") if value != int(value) else str(int(value))
    return str(value).replace("\r", " ").replace("\n", " ")


def session_to_text(session: Session) -> str:
    """Render a session as the text of a session file."""
    lines = [f"# {key}: {_format_meta_value(value)}" for key, value in session.meta.items() if value is not None]
    cols = [c for c in COLUMN_ORDER if c in session.breaths.columns]
    buf = io.StringIO()
    session.breaths[cols].to_csv(buf, index=False, float_format="%.6g", lineterminator="\n")
    return ("\n".join(lines) + "\n" if lines else "") + buf.getvalue()


def write_session(session: Session, path: str | Path) -> Path:
    """Write ``session`` to ``path`` (UTF-8, ``\\n`` line ends). Returns the path."""
    path = Path(path)
    path.write_text(session_to_text(session), encoding="utf-8", newline="\n")
    return path


def parse_meta_line(line: str) -> tuple[str, str] | None:
    """``'# key: value'`` -> ``(key, value)``; anything else -> ``None``."""
    body = line.lstrip()
    if not body.startswith("#"):
        return None
    body = body[1:].strip()
    if ":" not in body:
        return None
    key, value = body.split(":", 1)
    key = key.strip()
    if not key or " " in key:
        return None
    return key, value.strip()


def coerce_meta(raw: dict[str, str]) -> dict[str, Any]:
    """Known numeric keys become floats (when they parse); everything else stays text."""
    meta: dict[str, Any] = {}
    for key, value in raw.items():
        if key in META_FLOAT_KEYS or key.startswith("truth_"):
            try:
                meta[key] = float(value.replace(",", "."))
                continue
            except ValueError:
                pass
        meta[key] = value
    return meta
