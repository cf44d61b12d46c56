"""Outlier breaths: the local-window rule (a breath far from its neighbours is excluded).

A single swallowed, coughed or half-sampled breath produces a value far from the breaths around
it. The rule here compares each breath with the breaths on either side of it (never with
itself), so a genuine steady change over a ramp is not mistaken for an outlier.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np
import pandas as pd
from numpy.lib.stride_tricks import sliding_window_view
from scipy.ndimage import median_filter

from analysis import columns as C
from analysis.errors import InvalidParameter, require

#: Columns of the frame returned by :func:`find_outlier_breaths`.
OUTLIER_COLUMNS: tuple[str, ...] = (
    "source_row",
    "t_s",
    "column",
    "value",
    "local_mean",
    "local_sd",
    "reason",
)

#: 1.4826 x MAD estimates the SD of normally distributed values (common practice).
_MAD_TO_SD = 1.4826
#: The spread is read over this many times the window (at least 31 breaths), so that it is not
#: itself a noisy estimate from a handful of breaths.
_SPREAD_WINDOW_FACTOR = 5


#: Floor of the local SD as a share of the local mean: gas analysers resolve about 1 % of the
#: reading (common practice), so a breath within a few per cent of its neighbours is never
#: called an outlier however smooth the series is.
LEVEL_FLOOR_FRACTION = 0.01


#: Breaths whose windows are read at once by :func:`_neighbour_stats`: its temporaries (eight
#: neighbours per breath and column) then stay in the processor's cache. Measured in the
#: analysis of the benchmark sessions (docs/benchmarks.md): cleaning 33 -> 23 ms CPU at 20,000
#: breaths, 146 -> 116-123 ms at 100,000, and the analysis's peak memory 38 % lower (91.8 ->
#: 57.4 MiB at 100,000 breaths); identical numbers.
_NEIGHBOUR_BLOCK = 4096


def _neighbour_stats(values: np.ndarray, half: int) -> tuple[np.ndarray, np.ndarray]:
    """Trimmed mean and trimmed SD of the ``half`` breaths on each side of every breath.

    The breath itself is left out; of the neighbours the single highest and single lowest are
    dropped, so one neighbouring artifact does not drag the reference value. Breaths without a
    full window (the first and last ``half`` breaths: a one-sided window is biased on a ramp)
    or with fewer than three usable neighbours get NaN. ``values`` may be one series or a
    stack of equally long series (one per row); the statistics run along the last axis, over
    blocks of :data:`_NEIGHBOUR_BLOCK` breaths.
    """
    n = values.shape[-1]
    mean = np.full(values.shape, np.nan)
    sd = np.full(values.shape, np.nan)
    if n < 2 * half + 1:
        return mean, sd
    win = sliding_window_view(values, 2 * half + 1, axis=-1)  # window w is centred on breath w + half
    for lo in range(0, win.shape[-2], _NEIGHBOUR_BLOCK):
        hi = min(lo + _NEIGHBOUR_BLOCK, win.shape[-2])
        inner, inner_sd = _trimmed_stats(np.delete(win[..., lo:hi, :], half, axis=-1))  # drop the breath itself
        mean[..., lo + half : hi + half] = inner
        sd[..., lo + half : hi + half] = inner_sd
    return mean, sd


def _trimmed_stats(neigh: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and SD along the last axis without its highest and lowest value (NaN skipped; NaN
    where fewer than three values remain)."""
    srt = np.sort(neigh, axis=-1)  # NaN sort to the end
    count = np.sum(~np.isnan(neigh), axis=-1)
    cols = np.arange(neigh.shape[-1])
    keep = (cols >= 1) & (cols < (count - 1)[..., None])
    k = np.sum(keep, axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        inner = np.where(keep, srt, 0.0).sum(axis=-1) / np.where(k > 0, k, np.nan)
        dev = np.where(keep, srt - inner[..., None], 0.0)
        inner_sd = np.sqrt((dev * dev).sum(axis=-1) / np.where(k > 1, k - 1, np.nan))
    inner[k < 3] = np.nan
    inner_sd[k < 3] = np.nan
    return inner, inner_sd


def _beyond_limits(values: np.ndarray, columns: Sequence[str]) -> np.ndarray:
    """Per column (row of ``values``), the breaths outside that column's physical limits."""
    out = np.zeros(values.shape, dtype=bool)
    for j, col in enumerate(columns):
        spec = C.COLUMNS.get(col)
        if spec is None:
            continue
        with np.errstate(invalid="ignore"):
            if spec.reject_below is not None:
                out[j] |= values[j] < spec.reject_below
            if spec.reject_above is not None:
                out[j] |= values[j] > spec.reject_above
    return out


def _neighbour_mean(values: np.ndarray, half: int) -> np.ndarray:
    """Trimmed mean of the ``half`` breaths on each side of every breath (see :func:`_neighbour_stats`)."""
    return _neighbour_stats(values, half)[0]


def _local_spread(resid: np.ndarray, window: int) -> np.ndarray:
    """Robust SD (1.4826 x median absolute deviation) of the residuals around each breath.

    ``resid`` may be one series or a stack of equally long series (one per row), each read on
    its own.
    """
    if resid.ndim > 1:
        return np.stack([_local_spread(row, window) for row in resid])
    min_periods = max(5, window // 3)
    med = _rolling_median(resid, window, min_periods)
    return _MAD_TO_SD * _rolling_median(np.abs(resid - med), window, min_periods)


def _rolling_median(x: np.ndarray, window: int, min_periods: int) -> np.ndarray:
    """Centred rolling median over an odd ``window``, missing values skipped.

    The same numbers as pandas ``rolling(window, center=True, min_periods=...).median()``:
    windows that lie inside the series and hold no missing value take the middle value
    (``scipy.ndimage.median_filter``, several times quicker); the others (the ends, and around
    gaps) take the median of their present values, or NaN with fewer than ``min_periods``.
    """
    n = x.size
    h = window // 2
    out = np.full(n, np.nan)
    if n == 0:
        return out
    missing = np.isnan(x)
    pad = np.concatenate([np.full(h, np.nan), x, np.full(h, np.nan)])
    windows = sliding_window_view(pad, window)  # row i: x[i-h .. i+h]
    cm = np.concatenate([[0], np.cumsum(np.concatenate([np.ones(h, bool), missing, np.ones(h, bool)]))])
    whole = (cm[np.arange(n) + window] - cm[np.arange(n)]) == 0  # full window, nothing missing
    if whole.any():
        filled = np.where(missing, 0.0, x)  # values under incomplete windows are not used
        out[whole] = median_filter(filled, size=window, mode="nearest")[whole]
    rest = np.flatnonzero(~whole)
    if rest.size:
        srt = np.sort(windows[rest], axis=1)  # NaN sort to the end
        count = window - np.count_nonzero(np.isnan(srt), axis=1)
        r = np.arange(rest.size)
        lo, hi = np.maximum((count - 1) // 2, 0), np.maximum(count // 2, 0)
        med = 0.5 * (srt[r, lo] + srt[r, hi])
        med[count < min_periods] = np.nan
        out[rest] = med
    return out


def find_outlier_breaths(
    breaths: pd.DataFrame,
    *,
    window_breaths: int = 9,
    k_sd: float = 3.0,
    columns: Sequence[str] = (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN),
) -> pd.DataFrame:
    """Find breaths that lie far outside the spread of their neighbours.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table in canonical columns, sorted by ``t_s``; ``source_row`` is used when
        present (otherwise the 1-based position).
    window_breaths : int, default 9
        Odd window length in breaths, centred on the breath under test; the breath itself is
        excluded, so 9 compares each breath with 4 breaths on each side.
    k_sd : float, default 3.0
        A breath is excluded when it lies more than ``k_sd`` local SDs from the local mean.
    columns : sequence of str
        Columns tested; a breath is reported once, under the column where it deviates most.

    Returns
    -------
    pandas.DataFrame
        One row per excluded breath: ``source_row``, ``t_s``, ``column``, ``value``,
        ``local_mean``, ``local_sd``, ``reason`` (plain words).

    Notes
    -----
    The local mean is the mean of the neighbouring breaths with the highest and lowest
    neighbour dropped (a trimmed mean, so an artifact next door does not drag it). The local SD
    is the spread of breaths around their own local means, read robustly (1.4826 x median
    absolute deviation) over a wider window of ``5 * window_breaths`` (at least 31) breaths: an
    SD from only eight neighbours would itself be so uncertain that about 3 % of clean breaths
    per column would cross 3 SD. The first and last ``window_breaths // 2`` breaths (no full
    window) and breaths with fewer than three usable neighbours are not tested. Measured
    (docs/thresholds.md): on clean Gaussian noise about 2 % of breaths are flagged at 3 SD
    (three columns); every simulated cough or swallow was found.

    References
    ----------
    Lamarra N, Whipp BJ, Ward SA, Wasserman K (1987). Effect of interbreath fluctuations on
    characterizing exercise gas exchange kinetics. J Appl Physiol 62:2003-2012 (outliers
    outside the local mean +/- 3-4 SD; from memory).
    """
    return outlier_frame(
        outlier_columns(breaths, window_breaths=window_breaths, k_sd=k_sd, columns=columns)
    )


def outlier_columns(
    breaths: pd.DataFrame,
    *,
    window_breaths: int = 9,
    k_sd: float = 3.0,
    columns: Sequence[str] = (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN),
) -> dict[str, Any] | None:
    """:func:`find_outlier_breaths` as plain columns, for callers that take the table apart.

    Returns
    -------
    dict or None
        :data:`OUTLIER_COLUMNS` -> numpy array (``source_row``, ``t_s``, ``value``,
        ``local_mean``, ``local_sd``) or list of str (``column``, ``reason``), one entry per
        excluded breath; ``None`` for an empty table or no columns. Same checks and errors as
        :func:`find_outlier_breaths`.
    """
    require(
        isinstance(window_breaths, (int, np.integer)) and window_breaths >= 5 and window_breaths % 2 == 1,
        "window_breaths",
        "an odd whole number of breaths, at least 5",
        window_breaths,
    )
    require(np.isfinite(k_sd) and 1.0 <= k_sd <= 10.0, "k_sd", "a number between 1 and 10", k_sd)
    missing = [c for c in columns if c not in breaths.columns]
    if missing:
        raise InvalidParameter("columns", f"columns present in the breath table {list(breaths.columns)}", missing)
    n = len(breaths)
    if n == 0 or not columns:
        return None
    half = window_breaths // 2
    spread_window = max(31, _SPREAD_WINDOW_FACTOR * window_breaths)
    V = np.vstack([breaths[col].to_numpy(dtype=float) for col in columns])
    # Breaths beyond the physical limits of a column (analysis.columns; the importer keeps a
    # few isolated ones as artefacts) are excluded whatever their neighbours say, and are left
    # out of their neighbours' statistics.
    beyond = _beyond_limits(V, columns)
    V = np.where(beyond, np.nan, V)
    M, neighbour_sd = _neighbour_stats(V, half)
    S = _local_spread(V - M, spread_window)
    # Floors: the spread of the neighbours themselves (where the signal itself changes
    # fast, e.g. at a load step, the neighbours' mean is a poor guess of the next breath)
    # and 1 % of the local mean (analyser resolution), so smooth or noise-free series and
    # quantised data are not cut up.
    S = np.fmax(np.fmax(S, neighbour_sd), LEVEL_FLOOR_FRACTION * np.abs(M))
    with np.errstate(invalid="ignore", divide="ignore"):
        Z = np.abs(V - M) / S
    Z[~np.isfinite(Z)] = 0.0
    Z[beyond] = np.inf
    worst = np.argmax(Z, axis=0)
    zmax = Z[worst, np.arange(n)]
    hit = np.flatnonzero(zmax > k_sd)
    raw = np.vstack([breaths[col].to_numpy(dtype=float) for col in columns])
    src = (
        breaths["source_row"].to_numpy()
        if "source_row" in breaths.columns
        else np.arange(1, n + 1)
    )
    t = breaths[C.T_S].to_numpy(dtype=float) if C.T_S in breaths.columns else np.full(n, np.nan)
    wj = worst[hit]
    value, local_mean, local_sd = raw[wj, hit], M[wj, hit], S[wj, hit]
    names = [columns[j] for j in wj]
    reasons = []
    for q, i in enumerate(hit):
        j, col = wj[q], names[q]
        others = [columns[o] for o in range(len(columns)) if o != j and Z[o, i] > k_sd]
        direction = "above" if value[q] > local_mean[q] else "below"
        unit = C.COLUMNS[col].unit if col in C.COLUMNS else ""
        label = C.COLUMNS[col].label if col in C.COLUMNS else col
        if beyond[j, i]:
            spec = C.COLUMNS[col]
            reasons.append(
                f"{label} {value[q]:.6g} {unit} is beyond physical limits ({spec.reject_below:g} to "
                f"{spec.reject_above:g} {unit}): an artefact such as a cough or a mask re-seat"
            )
            continue
        reason = (
            f"{label} {value[q]:.4g} {unit} is {zmax[i]:.1f} SD {direction} the neighbouring "
            f"breaths (mean {local_mean[q]:.4g} {unit})"
        )
        if others:
            reason += "; also out of line: " + ", ".join(C.COLUMNS[o].label if o in C.COLUMNS else o for o in others)
        reasons.append(reason)
    return {
        "source_row": np.asarray(src)[hit].astype(int),
        "t_s": t[hit].astype(float),
        "column": names,
        "value": value,
        "local_mean": local_mean,
        "local_sd": local_sd,
        "reason": reasons,
    }


def outlier_frame(found: dict[str, Any] | None) -> pd.DataFrame:
    """The :func:`find_outlier_breaths` frame of :func:`outlier_columns` output."""
    if found is None:
        return pd.DataFrame({c: pd.Series(dtype=object if c in ("column", "reason") else float) for c in OUTLIER_COLUMNS})
    if not found["column"]:  # empty: text columns of dtype object, as before
        found = {**found, "column": pd.Series([], dtype=object), "reason": pd.Series([], dtype=object)}
    return pd.DataFrame(found)


def exclude_breaths(breaths: pd.DataFrame, source_rows: Iterable[int]) -> pd.DataFrame:
    """Return a copy of ``breaths`` without the breaths whose ``source_row`` is in ``source_rows``.

    The input is not changed. A reviewer puts a breath back simply by leaving its row out of
    ``source_rows``. When the table has no ``source_row`` column, the 1-based position is used.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table.
    source_rows : iterable of int
        Source rows to leave out (for example ``find_outlier_breaths(b)["source_row"]``).

    Returns
    -------
    pandas.DataFrame
        The remaining breaths, index reset.
    """
    drop = {int(r) for r in source_rows}
    keys = breaths["source_row"].to_numpy() if "source_row" in breaths.columns else np.arange(1, len(breaths) + 1)
    mask = ~np.isin(keys, np.fromiter(drop, dtype=np.int64, count=len(drop)))
    return breaths.loc[mask].reset_index(drop=True)  # a new frame (copy-on-write: never a view)
