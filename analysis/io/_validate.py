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
from analysis.errors import ImportRejected, Problem, quoted, shorten
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
REASON_PHASE = "unknown phase label (left without a phase)"
REASON_ARTEFACT = "beyond physical limits (artefact)"
FLAG_REASONS: tuple[str, ...] = (
    REASON_BELOW,
    REASON_ABOVE,
    REASON_RER,
    REASON_DUPLICATE_TIME,
    REASON_GAP,
    REASON_MISSING,
    REASON_PHASE,
    REASON_ARTEFACT,
)

#: Columns where an isolated value beyond the physical limits is kept as an artefact breath
#: (a cough, a swallow, a mask re-seat) for the analysis to exclude, instead of refusing the
#: file: the columns the outlier rule tests (``analysis.breaths.outliers``).
ARTEFACT_COLUMNS: tuple[str, ...] = (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN)
#: At most this many artefact breaths (or 1 % of the breaths, whichever is more) are kept;
#: more, or a run of more than :data:`ARTEFACT_MAX_RUN` in a row, is systematic (a unit error)
#: and the file is refused (common practice: artefact breaths are rare and scattered).
ARTEFACT_MAX_COUNT = 3
ARTEFACT_MAX_FRACTION = 0.01
ARTEFACT_MAX_RUN = 2
#: Files with fewer breaths than this keep today's rule (every impossible value refused): a
#: handful of rows with an impossible one is not "an otherwise fine test".
ARTEFACT_MIN_BREATHS = 60


def artefact_rows(impossible: np.ndarray) -> bool:
    """True when the breaths in ``impossible`` (bool per breath) are few and isolated."""
    count = int(impossible.sum())
    if count == 0:
        return True
    if impossible.size < ARTEFACT_MIN_BREATHS:
        return False
    if count > max(ARTEFACT_MAX_COUNT, int(np.ceil(ARTEFACT_MAX_FRACTION * impossible.size))):
        return False
    padded = np.concatenate([[0], impossible.astype(np.int8), [0]])
    edges = np.flatnonzero(np.diff(padded))
    runs = edges[1::2] - edges[::2]
    return bool(runs.max() <= ARTEFACT_MAX_RUN)

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
            f"{quoted(cell_at(int(i)))} is not a {'time' if is_time else 'number'}",
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
            problems.add(f"metadata key {quoted(key)} is empty or contains spaces", "use a key like body_mass_kg", row=line)
            continue
        numeric = key in META_FLOAT_KEYS or key.startswith("truth_")
        if numeric and not value.strip():
            meta.pop(key, None)
            continue
        coerced = coerce_meta({key: value})[key]
        if key in META_FLOAT_KEYS and not isinstance(coerced, float):
            where = "" if line is not None else " (set for the import)"
            problems.add(
                f"metadata {shorten(key)} is {quoted(value)}{where}, not a number",
                f"write a number, e.g. '{key}: 72.5'",
                row=line,
            )
            continue
        meta[key] = coerced
    return meta


def _fmt(value: float | None) -> str:
    return "no limit" if value is None else f"{value:.6g}"


#: Words inside a phase label that name its phase ("Recovery 2", "Stage 3", "Rest phase"),
#: tried in this order ("unloaded" before "load").
_PHASE_WORDS: tuple[tuple[str, str], ...] = (
    ("recover", "recovery"), ("cool", "recovery"), ("warm", "warmup"), ("unload", "warmup"),
    ("rest", "rest"), ("baseline", "rest"), ("exercise", "exercise"), ("ramp", "exercise"),
    ("stage", "exercise"), ("step", "exercise"), ("load", "exercise"),
)


def map_phase_label(label: str) -> str | None:
    """The phase of :data:`analysis.columns.PHASES` a written label names, or ``None``."""
    key = label.strip().lower()
    if key in C.PHASES:
        return key
    if key in _PHASE_SYNONYMS:
        return _PHASE_SYNONYMS[key]
    return next((phase for word, phase in _PHASE_WORDS if word in key), None)


def unknown_phase_labels(values: Any) -> list[str]:
    """Distinct labels (as written) that :func:`map_phase_label` cannot place."""
    seen = pd.unique(np.asarray(values, dtype=object))
    return [v for v in seen if isinstance(v, str) and v.strip() and map_phase_label(v) is None]


def normalise_phase(values: pd.Series) -> pd.Series:
    """Map phase labels to :data:`analysis.columns.PHASES` (synonyms and words such as
    "Stage 3" or "Recovery 2"); other text is kept as written (flagged, then left out)."""

    def one(v: Any) -> Any:
        if not isinstance(v, str):
            return v
        return map_phase_label(v) or v.strip()

    codes, uniques = pd.factorize(values)  # a handful of labels: map each once; None/NaN kept as they are
    mapped = np.empty(len(uniques), dtype=object)
    mapped[:] = [one(v) for v in uniques]
    out = values.to_numpy(dtype=object, copy=True)
    labelled = codes >= 0
    out[labelled] = mapped[codes[labelled]]
    return pd.Series(out, index=values.index, name=values.name, dtype=object)


def _beyond_limits(v: np.ndarray, name: str) -> np.ndarray:
    """Values outside the physical limits of column ``name`` (:mod:`analysis.columns`)."""
    spec = C.COLUMNS[name]
    out = np.zeros(len(v), dtype=bool)
    if spec.reject_below is not None:
        out |= v < spec.reject_below
    if spec.reject_above is not None:
        out |= v > spec.reject_above
    return out


def _rer(frame: pd.DataFrame | Mapping[str, Any]) -> np.ndarray | None:
    """RER (VCO2/VO2) of every breath, NaN where VO2 is not positive; ``None`` without both columns."""
    if C.VO2_ML_MIN not in frame or C.VCO2_ML_MIN not in frame:
        return None
    vo2 = np.asarray(frame[C.VO2_ML_MIN], dtype=float)
    vco2 = np.asarray(frame[C.VCO2_ML_MIN], dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return np.where(vo2 > 0, vco2 / vo2, np.nan)


def _unknown_phase(values: Any) -> np.ndarray:
    """True for each label that is text but not one of :data:`analysis.columns.PHASES`
    (each distinct label checked once)."""
    codes, labels = pd.factorize(np.asarray(values, dtype=object))
    unknown = np.array([isinstance(v, str) and v not in C.PHASES for v in labels] + [False], dtype=bool)
    return unknown[codes]  # code -1 (no label) -> False


def check_and_flag(
    frame: pd.DataFrame | Mapping[str, Any],
    *,
    problems: ProblemLog,
    headers: Mapping[str, str],
    unit_notes: Mapping[str, str] | None = None,
) -> pd.DataFrame:
    """Add rejections to ``problems`` and return the flags table.

    Parameters
    ----------
    frame : DataFrame or mapping of column name to array
        Canonical columns (numeric ones as float, NaN where missing) and ``source_row``.
    problems : ProblemLog
        Receives located problems; the caller raises them.
    headers : mapping
        Canonical column -> header as written in the file (for messages).
    unit_notes : mapping, optional
        Canonical column -> how its unit was read (added to the fix of range problems).
    """
    unit_notes = unit_notes or {}
    rows = np.asarray(frame["source_row"])
    flags: list[tuple[np.ndarray, str, str]] = []  # (source rows, column, reason), in the order found

    def header(name: str) -> str:
        return headers.get(name, name)

    artefact_cols = [n for n in ARTEFACT_COLUMNS if n in frame]
    beyond = {n: _beyond_limits(np.asarray(frame[n], dtype=float), n) for n in artefact_cols}
    rer = _rer(frame)
    rer_beyond = rer > C.RER_REJECT_ABOVE if rer is not None else np.zeros(len(rows), dtype=bool)
    any_beyond = np.logical_or.reduce([*beyond.values(), rer_beyond]) if artefact_cols else rer_beyond
    # A few isolated impossible breaths are artefacts (kept, flagged, excluded by the analysis);
    # many, or a run of them, are systematic and refused with the hint to check the unit.
    tolerated = artefact_rows(any_beyond)
    for name in C.NUMERIC:
        if name not in frame:
            continue
        spec = C.COLUMNS[name]
        v = np.asarray(frame[name], dtype=float)
        lo, hi = spec.reject_below, spec.reject_above
        impossible = beyond[name] if name in beyond else _beyond_limits(v, name)
        unit_hint = f"; {unit_notes[name]}" if name in unit_notes else ""
        if tolerated and name in beyond:
            flags.append((rows[impossible], name, REASON_ARTEFACT))
        elif impossible.any():
            many = f" ({int(impossible.sum())} breaths)" if impossible.sum() > 1 else ""
            for i in np.flatnonzero(impossible):
                problems.add(
                    f"{spec.label} {_fmt(v[i])} {spec.unit} is impossible (allowed {_fmt(lo)} to {_fmt(hi)} {spec.unit})"
                    + (f"; too many such breaths to be artefacts{many}" if name in beyond else ""),
                    f"correct or delete this row, or check the column's unit{unit_hint}",
                    row=int(rows[i]),
                    column=header(name),
                )
        missing = np.isnan(v)
        usable = ~(impossible | missing)
        if spec.flag_below is not None:
            flags.append((rows[usable & (v < spec.flag_below)], name, REASON_BELOW))
        if spec.flag_above is not None:
            flags.append((rows[usable & (v > spec.flag_above)], name, REASON_ABOVE))
        if not spec.required:
            flags.append((rows[missing], name, REASON_MISSING))

    if rer is not None:
        if tolerated:
            flags.append((rows[rer_beyond], RER_COLUMN, REASON_ARTEFACT))
        for i in np.flatnonzero(rer_beyond) if not tolerated else ():
            problems.add(
                f"RER (VCO2/VO2) is {rer[i]:.2f}, above {C.RER_REJECT_ABOVE:g}: not a human breath",
                "check that VO2 and VCO2 are not swapped and are in the same unit",
                row=int(rows[i]),
                column=header(C.VCO2_ML_MIN),
            )
        odd = ((rer < C.RER_FLAG_BELOW) | (rer > C.RER_FLAG_ABOVE)) & (rer <= C.RER_REJECT_ABOVE)
        flags.append((rows[odd], RER_COLUMN, REASON_RER))

    if C.T_S in frame and len(rows) > 1:
        t = np.asarray(frame[C.T_S], dtype=float)
        dt = np.diff(t)
        for i in np.flatnonzero(dt < 0):
            problems.add(
                f"time goes backwards ({_fmt(t[i + 1])} s after {_fmt(t[i])} s on line {rows[i]})",
                "sort the rows by time or remove the repeated block",
                row=int(rows[i + 1]),
                column=header(C.T_S),
            )
        flags.append((rows[1:][dt == 0], C.T_S, REASON_DUPLICATE_TIME))
        flags.append((rows[1:][dt > GAP_FLAG_S], C.T_S, REASON_GAP))

    if C.PHASE in frame:
        flags.append((rows[_unknown_phase(frame[C.PHASE])], C.PHASE, REASON_PHASE))

    counts = [len(f[0]) for f in flags]
    source_row = np.concatenate([f[0] for f in flags] + [np.empty(0)]).astype("int64")
    column = np.repeat(np.array([f[1] for f in flags], dtype=object), counts)
    reason = np.repeat(np.array([f[2] for f in flags], dtype=object), counts)
    order = np.argsort(column, kind="stable")  # by row, then column; found order among equals
    order = order[np.argsort(source_row[order], kind="stable")]
    return pd.DataFrame(
        {  # in the order of FLAG_COLUMNS
            "source_row": source_row[order],
            "column": pd.Series(column[order], dtype=object),
            "reason": pd.Series(reason[order], dtype=object),
        }
    )


def finish_session(
    frame: pd.DataFrame | Mapping[str, Any],
    *,
    meta: dict[str, Any],
    file_name: str,
    problems: ProblemLog,
    headers: Mapping[str, str],
    unit_notes: Mapping[str, str] | None = None,
) -> Session:
    """Run :func:`check_and_flag`, raise collected problems, and build the :class:`Session`.

    ``frame`` holds the canonical columns and ``source_row`` (a DataFrame, or a mapping of
    column name to array). Optional columns that hold no value at all are dropped (a note is
    the caller's job).
    """
    n_rows = len(frame["source_row"])
    if n_rows == 0:
        problems.add("the table has a header but no breath rows", "check the export contains the test data")
    problems.raise_if_any()
    # every column read once and put in its final type; the breath table is built once
    data: dict[str, object] = {}
    for name in (c for c in C.COLUMNS if c in frame):
        if name in C.NUMERIC:
            values = np.asarray(frame[name], dtype=np.float64)
            if name in C.REQUIRED or not np.isnan(values).all():
                data[name] = values
            continue
        text = np.asarray(frame[name], dtype=object)
        if name in C.REQUIRED or not pd.isna(text).all():
            column = pd.Series(text, dtype=object)
            data[name] = normalise_phase(column) if name == C.PHASE else column
    data["source_row"] = np.asarray(frame["source_row"], dtype=np.int64)
    flags = check_and_flag(data, problems=problems, headers=headers, unit_notes=unit_notes)
    problems.raise_if_any()
    if C.PHASE in data:
        # flagged above; left without a phase so that the analysis (which knows only
        # analysis.columns.PHASES) finds the phases from the data instead of refusing the test
        unknown = _unknown_phase(data[C.PHASE])
        if unknown.any():
            phase = np.array(data[C.PHASE], dtype=object)
            phase[unknown] = None
            data[C.PHASE] = pd.Series(phase, dtype=object)
    frame = pd.DataFrame(data)
    return Session(meta=meta, breaths=frame, flags=flags, source_name=file_name)
