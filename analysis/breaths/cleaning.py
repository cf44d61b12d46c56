"""Cleaning the breath table: outlier breaths and the reviewer's exclusions, as one step."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.breaths.outliers import exclude_breaths, outlier_columns
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
    excluded = _excluded(
        breaths, window_breaths=window_breaths, k_sd=k_sd, excluded_rows=excluded_rows, restored_rows=restored_rows
    )
    clean = exclude_breaths(breaths, [e.source_row for e in excluded])
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


def _excluded(
    breaths: pd.DataFrame, *, window_breaths: int, k_sd: float, excluded_rows: tuple[int, ...], restored_rows: tuple[int, ...]
) -> tuple[ExcludedBreath, ...]:
    """The outlier breaths (less the restored rows) and the reviewer's exclusions, by source row
    (an outlier before a reviewer's row of the same number)."""
    found = outlier_columns(breaths, window_breaths=window_breaths, k_sd=k_sd)
    restored = set(restored_rows)
    out = []
    if found is not None:
        out = [
            ExcludedBreath(r, t, c, v, why, "auto")
            for r, t, c, v, why in zip(
                found["source_row"].tolist(), found["t_s"].tolist(), found["column"], found["value"].tolist(),
                found["reason"], strict=True,
            )
            if r not in restored
        ]
    auto_rows = {e.source_row for e in out}
    manual = [r for r in excluded_rows if r not in auto_rows]
    if manual:
        src = breaths["source_row"].to_numpy() if "source_row" in breaths else np.arange(1, len(breaths) + 1)
        pos = {int(src[i]): i for i in np.flatnonzero(np.isin(src, manual))}  # the last breath of a repeated row
        t_s = breaths[C.T_S].to_numpy(dtype=float)
        out += [
            ExcludedBreath(int(r), float(t_s[pos[r]]) if r in pos else np.nan, "", np.nan, "excluded by the reviewer", "reviewer")
            for r in manual
        ]
    return tuple(sorted(out, key=lambda e: e.source_row))  # sorted() is stable
