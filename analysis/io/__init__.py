"""Explicit readers and writers: Tidemark session files and generic cart exports.

Public API
----------
Session files (our own format, ``docs/session-format.md``):
    :func:`read_session`, :func:`write_session`, :func:`session_to_text`
Generic import of cart exports (``docs/import.md``):
    :func:`import_bytes`, :func:`import_file`, :class:`ImportOutcome`, :func:`describe_outcome`,
    :func:`list_sheets`, :func:`read_headers`, :func:`read_input_file`, :func:`file_kind`,
    :data:`DEFAULT_MAX_BYTES`, :data:`GAS_UNITS`, :data:`TIME_FORMATS`
Column mapping:
    :class:`ColumnMapping`, :func:`guess_mapping`, :func:`save_profile`, :func:`load_profile`
Flag reasons (``Session.flags["reason"]``):
    :data:`FLAG_REASONS` and the ``REASON_*`` constants
"""

from analysis.io._cells import TIME_FORMATS
from analysis.io._decode import DEFAULT_MAX_BYTES, MAX_UPLOAD_MB
from analysis.io._decode import container_kind as file_kind
from analysis.io._validate import (
    FLAG_REASONS,
    GAP_FLAG_S,
    REASON_ABOVE,
    REASON_BELOW,
    REASON_DUPLICATE_TIME,
    REASON_GAP,
    REASON_MISSING,
    REASON_PHASE,
    REASON_RER,
    RER_COLUMN,
)
from analysis.io._xlsx import list_sheets
from analysis.io.importer import GAS_UNITS, ImportOutcome, import_bytes, import_file, read_headers, read_input_file
from analysis.io.mapping import IGNORE, ColumnMapping, ProfileError, guess_mapping, load_profile, save_profile
from analysis.io.session_file import read_session, session_to_text, write_session
from analysis.io.summary import describe_outcome

__all__ = [
    "DEFAULT_MAX_BYTES",
    "MAX_UPLOAD_MB",
    "FLAG_REASONS",
    "GAP_FLAG_S",
    "GAS_UNITS",
    "IGNORE",
    "REASON_ABOVE",
    "REASON_BELOW",
    "REASON_DUPLICATE_TIME",
    "REASON_GAP",
    "REASON_MISSING",
    "REASON_PHASE",
    "REASON_RER",
    "TIME_FORMATS",
    "RER_COLUMN",
    "ColumnMapping",
    "ImportOutcome",
    "ProfileError",
    "describe_outcome",
    "file_kind",
    "guess_mapping",
    "import_bytes",
    "import_file",
    "list_sheets",
    "load_profile",
    "read_headers",
    "read_input_file",
    "read_session",
    "save_profile",
    "session_to_text",
    "write_session",
]
