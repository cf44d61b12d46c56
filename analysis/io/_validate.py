"""Checks shared by the generic importer and the session reader: reject or flag.

Reject (the file is not imported): values outside the physiological limits of
:mod:`analysis.columns`, RER above 3, time going backwards, empty required cells, text in a
numeric column. Flag (row kept, listed in ``Session.flags``): values outside the usual range,
RER outside 0.6-1.6, duplicate times, gaps over 15 s, missing optional values, unknown phase
labels.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import ImportRejected, Problem
from analysis.session import Session

#: At most this many problems are listed in one rejection (the rest are counted).
MAX_PROBLEMS = 10

#: A pause between consecutive breaths longer than this is flagged, in seconds (common practice).
GAP_FLAG_S = 15.0

#: Flag reasons (the ``reason`` column of ``Session.flags``).
REASON_BELOW = "below usual range"
REASON_ABOVE = "above usual range"
REASON_RER = "RER outside 0.6-1.6"
REASON_DUPLICATE_TIME = "duplicate time"
REASON_GAP = "gap over 15 s"
REASON_MISSING = "missing value"
REASON_PHASE = "unknown phase label"
FLAG_REASONS: tuple[str, ...] = (
    REASON_BELOW,
    REASON_ABOVE,
    REASON_RER,
    REASON_DUPLICATE_TIME,
    REASON_GAP,
    REASON_MISSING,
    REASON_PHASE,
)

#: Column name used in flags for the respiratory exchange ratio (derived, VCO2/VO2).
RER_COLUMN = "rer"

FLAG_COLUMNS = ["source_row", "column", "reason"]

_PHASE_SYNONYMS: dict[str, str] = {
    "rest": "rest",
    "resting": "rest",
    "baseline": "rest",
    "pre": "rest",
    "warmup": "warmup",
    "warm-up": "warmup",
    "warm up": "warmup",
    "unloaded": "warmup",
    "exercise": "exercise",
    "test": "exercise",
    "ramp": "exercise",
    "load": "exercise",
    "recovery": "recovery",
    "cooldown": "recovery",
    "cool-down": "recovery",
    "cool down": "recovery",
    "post": "recovery",
}


class ProblemLog:
    """Collects located problems; raises them together, at most :data:`MAX_PROBLEMS` listed."""

    def __init__(self, file_name: str) -> None:
        self.file_name = file_name
        self.items: list[Problem] = []
        self.more = 0

    def add(self, message: str, fix: str = "", *, row: int | None = None, column: str | None = None) -> None:
        if len(self.items) < MAX_PROBLEMS:
            self.items.append(Problem(message, fix, self.file_name, row, column))
        else:
            self.more += 1

    def __bool__(self) -> bool:
        return bool(self.items)

    def raise_if_any(self) -> None:
        if not self.items:
            return
        problems = list(self.items)
        if self.more:
            problems.append(
                Problem(f"... and {self.more} more problem(s) of the kinds above", "", self.file_name)
            )
        raise ImportRejected(problems)


def report_cells(
    problems: ProblemLog,
    *,
    name: str,
    header: str,
    bad: np.ndarray,
    missing: np.ndarray,
    line_numbers: np.ndarray,
    cell_at: Callable[[int], object],
) -> None:
    """Add a problem for each unreadable cell, and for each empty cell of a required column.

    ``cell_at(i)`` returns the original cell of body row ``i`` (only called for listed problems).
    """
    is_time = name == C.T_S
    bad_idx = np.flatnonzero(bad)
    problems.more += max(0, bad_idx.size - MAX_PROBLEMS)
    for i in bad_idx[:MAX_PROBLEMS]:
        problems.add(
            f"{cell_at(int(i))!r} is not a {'time' if is_time else 'number'}",
            "write times as seconds, m:ss or h:mm:ss"
            if is_time
            else "correct the cell or leave it empty (use one decimal mark, comma or point, throughout)",
            row=int(line_numbers[i]),
            column=header,
        )
    if name in C.REQUIRED:
        empty_idx = np.flatnonzero(missing)
        problems.more += max(0, empty_idx.size - MAX_PROBLEMS)
        for i in empty_idx[:MAX_PROBLEMS]:
            problems.add(
                f"the required {C.COLUMNS[name].label} value is empty",
                "fill it in or delete the row",
                row=int(line_numbers[i]),
                column=header,
            )


def checked_meta(
    entries: list[tuple[str, str, int | None]],
    problems: ProblemLog,
    *,
    overrides: Mapping[str, Any] | None = None,
) -> dict[str, Any]:
    """Metadata from ``(key, value, line)`` entries, then ``overrides`` (which win).

    Known numeric keys (``body_mass_kg``, ``age_y``, ...) must read as numbers: an empty value
    leaves the key out, text is a located problem. Other keys are kept as text.
    """
    from analysis.io.session_file import coerce_meta
    from analysis.session import META_FLOAT_KEYS

    items = list(entries) + [(str(k).strip(), "" if v is None else str(v), None) for k, v in (overrides or {}).items()]
    meta: dict[str, Any] = {}
    for key, value, line in items:
        if not key or any(ch.isspace() for ch in key):
            problems.add(f"metadata key {key!r} is empty or contains spaces", "use a key like body_mass_kg", row=line)
            continue
        numeric = key in META_FLOAT_KEYS or key.startswith("truth_")
        if numeric and not value.strip():
            meta.pop(key, None)
            continue
        coerced = coerce_meta({key: value})[key]
        if key in META_FLOAT_KEYS and not isinstance(coerced, float):
            where = "" if line is not None else " (set for the import)"
            problems.add(
                f"metadata {key} is {value!r}{where}, not a number",
                f"write a number, e.g. '{key}: 72.5'",
                row=line,
            )
            continue
        meta[key] = coerced
    return meta


def _fmt(value: float | None) -> str:
    return "no limit" if value is None else f"{value:.6g}"


def normalise_phase(values: pd.Series) -> pd.Series:
    """Map phase synonyms to :data:`analysis.columns.PHASES`; other text is kept as written."""

    def one(v: Any) -> Any:
        if not isinstance(v, str):
            return v
        key = v.strip().lower()
        return _PHASE_SYNONYMS.get(key, v.strip())

    return values.map(one)


def check_and_flag(
    frame: pd.DataFrame,
    *,
    problems: ProblemLog,
    headers: Mapping[str, str],
    unit_notes: Mapping[str, str] | None = None,
) -> pd.DataFrame:
    """Add rejections to ``problems`` and return the flags table.

    Parameters
    ----------
    frame : DataFrame
        Canonical columns (numeric ones as float, NaN where missing) and ``source_row``.
    problems : ProblemLog
        Receives located problems; the caller raises them.
    headers : mapping
        Canonical column -> header as written in the file (for messages).
    unit_notes : mapping, optional
        Canonical column -> how its unit was read (added to the fix of range problems).
    """
    unit_notes = unit_notes or {}
    rows = frame["source_row"].to_numpy()
    flags: list[tuple[int, str, str]] = []

    def header(name: str) -> str:
        return headers.get(name, name)

    for name in C.NUMERIC:
        if name not in frame.columns:
            continue
        spec = C.COLUMNS[name]
        v = frame[name].to_numpy(dtype=float)
        lo, hi = spec.reject_below, spec.reject_above
        impossible = np.zeros(len(v), dtype=bool)
        if lo is not None:
            impossible |= v < lo
        if hi is not None:
            impossible |= v > hi
        unit_hint = f"; {unit_notes[name]}" if name in unit_notes else ""
        for i in np.flatnonzero(impossible):
            problems.add(
                f"{spec.label} {_fmt(v[i])} {spec.unit} is impossible (allowed {_fmt(lo)} to {_fmt(hi)} {spec.unit})",
                f"correct or delete this row, or check the column's unit{unit_hint}",
                row=int(rows[i]),
                column=header(name),
            )
        usable = ~impossible & ~np.isnan(v)
        if spec.flag_below is not None:
            flags += [(int(rows[i]), name, REASON_BELOW) for i in np.flatnonzero(usable & (v < spec.flag_below))]
        if spec.flag_above is not None:
            flags += [(int(rows[i]), name, REASON_ABOVE) for i in np.flatnonzero(usable & (v > spec.flag_above))]
        if not spec.required:
            flags += [(int(rows[i]), name, REASON_MISSING) for i in np.flatnonzero(np.isnan(v))]

    if C.VO2_ML_MIN in frame.columns and C.VCO2_ML_MIN in frame.columns:
        vo2 = frame[C.VO2_ML_MIN].to_numpy(dtype=float)
        vco2 = frame[C.VCO2_ML_MIN].to_numpy(dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            rer = np.where(vo2 > 0, vco2 / vo2, np.nan)
        for i in np.flatnonzero(rer > C.RER_REJECT_ABOVE):
            problems.add(
                f"RER (VCO2/VO2) is {rer[i]:.2f}, above {C.RER_REJECT_ABOVE:g}: not a human breath",
                "check that VO2 and VCO2 are not swapped and are in the same unit",
                row=int(rows[i]),
                column=header(C.VCO2_ML_MIN),
            )
        odd = ((rer < C.RER_FLAG_BELOW) | (rer > C.RER_FLAG_ABOVE)) & (rer <= C.RER_REJECT_ABOVE)
        flags += [(int(rows[i]), RER_COLUMN, REASON_RER) for i in np.flatnonzero(odd)]

    if C.T_S in frame.columns and len(frame) > 1:
        t = frame[C.T_S].to_numpy(dtype=float)
        dt = np.diff(t)
        for i in np.flatnonzero(dt < 0):
            problems.add(
                f"time goes backwards ({_fmt(t[i + 1])} s after {_fmt(t[i])} s on line {rows[i]})",
                "sort the rows by time or remove the repeated block",
                row=int(rows[i + 1]),
                column=header(C.T_S),
            )
        flags += [(int(rows[i + 1]), C.T_S, REASON_DUPLICATE_TIME) for i in np.flatnonzero(dt == 0)]
        flags += [(int(rows[i + 1]), C.T_S, REASON_GAP) for i in np.flatnonzero(dt > GAP_FLAG_S)]

    if C.PHASE in frame.columns:
        for j, v in enumerate(frame[C.PHASE].tolist()):
            if isinstance(v, str) and v not in C.PHASES:
                flags.append((int(rows[j]), C.PHASE, REASON_PHASE))

    table = pd.DataFrame(flags, columns=FLAG_COLUMNS)
    table["source_row"] = table["source_row"].astype("int64")
    table["column"] = table["column"].astype(object)
    table["reason"] = table["reason"].astype(object)
    return table.sort_values(["source_row", "column"], kind="stable").reset_index(drop=True)


def finish_session(
    frame: pd.DataFrame,
    *,
    meta: dict[str, Any],
    file_name: str,
    problems: ProblemLog,
    headers: Mapping[str, str],
    unit_notes: Mapping[str, str] | None = None,
) -> Session:
    """Run :func:`check_and_flag`, raise collected problems, and build the :class:`Session`.

    Optional columns that hold no value at all are dropped (a note is the caller's job).
    """
    if len(frame) == 0:
        problems.add("the table has a header but no breath rows", "check the export contains the test data")
    problems.raise_if_any()
    ordered = [c for c in C.COLUMNS if c in frame.columns]
    frame = frame[[*ordered, "source_row"]].copy()
    for name in ordered:
        if name not in C.REQUIRED and frame[name].isna().all():
            frame = frame.drop(columns=name)
    if C.PHASE in frame.columns:
        frame[C.PHASE] = normalise_phase(frame[C.PHASE])
    flags = check_and_flag(frame, problems=problems, headers=headers, unit_notes=unit_notes)
    problems.raise_if_any()
    # convert only the columns not yet in their final type (each assignment copies a column)
    for name in C.NUMERIC:
        if name in frame.columns and frame[name].dtype != np.float64:
            frame[name] = frame[name].astype(float)
    for name in (C.PHASE, C.MARKER):
        if name in frame.columns and frame[name].dtype != object:
            frame[name] = frame[name].astype(object)
    if frame["source_row"].dtype != np.int64:
        frame["source_row"] = frame["source_row"].astype("int64")
    frame = frame.reset_index(drop=True)
    return Session(meta=meta, breaths=frame, flags=flags, source_name=file_name)
