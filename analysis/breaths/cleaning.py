"""Cleaning the breath table: outlier breaths and the reviewer's exclusions, as one step."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.breaths.outliers import exclude_breaths, outlier_columns, outlier_frame
from analysis.records import described

#: Columns of the excluded-breaths table (:func:`excluded_table`).
EXCLUDED_COLUMNS: tuple[str, ...] = ("source_row", "t_s", "column", "value", "reason", "by")

#: Share of breaths excluded above which a note is given (common practice: a clean recording
#: loses a few per cent to swallows, coughs and talking).
EXCLUDED_NOTE_FRACTION = 0.10


def outliers_method(*, window_breaths: int, k_sd: float) -> str:
    """The reader-facing method sentence of the outlier test with the window and limit set."""
    return (
        f"breaths more than {k_sd:g} SD from the mean of the {window_breaths} "
        "breaths around them are excluded (Lamarra et al. 1987)"
    )


@dataclass(frozen=True)
class ExcludedBreath:
    """One breath left out of the analysis."""

    source_row: int = described(description="line of the breath in the original file")
    t_s: float = described(unit="s", description="time of the breath")
    column: str = described(description="column whose value made it an outlier (empty for a reviewer's exclusion)")
    value: float = described(description="that value, in the column's unit (null for a reviewer's exclusion)")
    reason: str = described(description="why it was excluded, in plain words")
    by: str = described(description="`auto` (outlier test) or `reviewer`")


@dataclass(frozen=True)
class CleanedBreaths:
    """The breaths an analysis uses, the ones it left out, and notes.

    Attributes
    ----------
    breaths : pandas.DataFrame
        The breath table without the excluded breaths.
    excluded : tuple of ExcludedBreath
        Every breath left out, by source row.
    notes : tuple of str
        Plain-language notes (e.g. many breaths excluded).
    """

    breaths: pd.DataFrame
    excluded: tuple[ExcludedBreath, ...]
    notes: tuple[str, ...]


def clean_breaths(
    breaths: pd.DataFrame,
    *,
    window_breaths: int,
    k_sd: float,
    excluded_rows: tuple[int, ...] = (),
    restored_rows: tuple[int, ...] = (),
) -> CleanedBreaths:
    """Leave out outlier breaths (minus the reviewer's restored rows) and the reviewer's exclusions.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table sorted by time, with ``source_row``.
    window_breaths, k_sd : keyword-only
        The outlier test: breaths more than ``k_sd`` local SDs from the mean of the
        ``window_breaths`` breaths around them.
    excluded_rows, restored_rows : tuple of int, keyword-only
        Source rows the reviewer excluded, and automatically excluded rows put back.

    Returns
    -------
    CleanedBreaths

    References
    ----------
    Lamarra N, Whipp BJ, Ward SA, Wasserman K. Effect of interbreath fluctuations on
    characterizing exercise gas exchange kinetics. J Appl Physiol 1987;62:2003-2012.
    """
    table = _excluded_table(
        breaths, window_breaths=window_breaths, k_sd=k_sd, excluded_rows=excluded_rows, restored_rows=restored_rows
    )
    excluded = tuple(
        ExcludedBreath(int(r), float(t), str(c), float(v), str(why), str(by))
        for r, t, c, v, why, by in zip(*(table[c].tolist() for c in EXCLUDED_COLUMNS), strict=True)
    )
    clean = exclude_breaths(breaths, table["source_row"].tolist())
    notes = []
    n = len(excluded)
    if n > EXCLUDED_NOTE_FRACTION * len(breaths):
        notes.append(f"{n} of {len(breaths)} breaths ({100 * n / len(breaths):.0f} %) were excluded — check the recording.")
    return CleanedBreaths(clean, excluded, tuple(notes))


def excluded_frame(excluded: tuple[ExcludedBreath, ...]) -> pd.DataFrame:
    """The excluded breaths as a table with the columns :data:`EXCLUDED_COLUMNS` (for charts and tables)."""
    return pd.DataFrame(
        {c: [getattr(e, c) for e in excluded] for c in EXCLUDED_COLUMNS}
    ).astype({"source_row": int, "t_s": float, "value": float})


def _excluded_table(
    breaths: pd.DataFrame, *, window_breaths: int, k_sd: float, excluded_rows: tuple[int, ...], restored_rows: tuple[int, ...]
) -> pd.DataFrame:
    found = outlier_columns(breaths, window_breaths=window_breaths, k_sd=k_sd)
    restored = set(restored_rows)
    if found is not None and restored:
        back = np.isin(found["source_row"], np.fromiter(restored, dtype=np.int64, count=len(restored)))
        if back.any():
            keep = np.flatnonzero(~back)
            found = {k: v[keep] if isinstance(v, np.ndarray) else [v[i] for i in keep] for k, v in found.items()}
    n_auto = 0 if found is None else len(found["column"])
    auto_rows = set(found["source_row"].tolist()) if found is not None and excluded_rows and n_auto else set()
    manual = [r for r in excluded_rows if r not in auto_rows]
    if not manual and found is not None and n_auto:
        rows = found["source_row"]
        order = np.argsort(rows, kind="stable") if np.any(np.diff(rows) < 0) else np.arange(len(rows))
        column, reason = found["column"], found["reason"]
        return pd.DataFrame(
            {
                "source_row": rows[order],
                "t_s": found["t_s"][order],
                "column": [column[i] for i in order],
                "value": found["value"][order],
                "reason": [reason[i] for i in order],
                "by": ["auto"] * len(rows),
            }
        )
    auto = outlier_frame(found)
    parts = [auto.assign(by="auto")[list(EXCLUDED_COLUMNS)]] if len(auto) else []
    if manual:
        src = breaths["source_row"] if "source_row" in breaths else pd.Series(np.arange(1, len(breaths) + 1))
        pos = {int(s): i for i, s in enumerate(src.to_numpy())}
        t = breaths[C.T_S].to_numpy(dtype=float)
        rows = [
            (r, t[pos[r]] if r in pos else np.nan, "", np.nan, "excluded by the reviewer", "reviewer")
            for r in manual
        ]
        parts.append(pd.DataFrame(rows, columns=list(EXCLUDED_COLUMNS)))
    if not parts:
        return pd.DataFrame(
            {c: pd.Series(dtype=object if c in ("column", "reason", "by") else float) for c in EXCLUDED_COLUMNS}
        ).astype({"source_row": int})
    out = pd.concat(parts, ignore_index=True) if len(parts) > 1 else parts[0].reset_index(drop=True)
    return out.sort_values("source_row", kind="stable").reset_index(drop=True)
