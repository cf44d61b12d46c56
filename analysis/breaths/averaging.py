"""Averaging breath-by-breath data: breath windows, time bins, rolling time windows, middle-of-n.

Every method is vectorised (cumulative sums, ``searchsorted`` and sliding windows), so a
2,000-breath test averages in a few milliseconds.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Literal, cast, get_args

import numpy as np
import pandas as pd
from numpy.lib.stride_tricks import sliding_window_view

from analysis import columns as C
from analysis.errors import InvalidParameter, require

AveragingMethod = Literal["breaths", "time_bin", "rolling_time", "middle_of_n"]
METHODS: tuple[str, ...] = get_args(AveragingMethod)

#: Accepted sizes per method: (smallest, largest, whole numbers only, unit word).
_SIZE_RULES: dict[str, tuple[float, float, bool, str]] = {
    "breaths": (2, 101, True, "breaths"),
    "time_bin": (1.0, 120.0, False, "seconds"),
    "rolling_time": (2.0, 120.0, False, "seconds"),
    "middle_of_n": (3, 31, True, "breaths"),
}


def _fmt(x: float) -> str:
    return str(int(x)) if float(x).is_integer() else f"{x:g}"


@dataclass(frozen=True)
class AveragingSpec:
    """How breaths are averaged before thresholds and indices are read.

    Parameters
    ----------
    method : {"breaths", "time_bin", "rolling_time", "middle_of_n"}
        ``"breaths"``: centred rolling mean over ``size`` breaths (one row per breath with a
        full window). ``"time_bin"``: consecutive, non-overlapping bins of ``size`` seconds
        (aligned at t = 0). ``"rolling_time"``: for every breath, the mean of the breaths within
        ``size`` seconds centred on it (full windows only). ``"middle_of_n"``: centred windows of
        ``size`` breaths (odd); per column the highest and lowest are dropped and the middle
        ``size - 2`` are averaged.
    size : float
        Breaths or seconds, depending on ``method``.
    """

    method: AveragingMethod
    size: float

    def __post_init__(self) -> None:
        require(self.method in METHODS, "method", f"one of {', '.join(METHODS)}", self.method)
        lo, hi, whole, unit = _SIZE_RULES[self.method]
        ok = isinstance(self.size, (int, float, np.integer, np.floating)) and not isinstance(self.size, bool)
        ok = ok and math.isfinite(float(self.size)) and lo <= float(self.size) <= hi
        if ok and whole:
            ok = float(self.size).is_integer()
        if ok and self.method == "middle_of_n":
            ok = int(self.size) % 2 == 1
        kind = "an odd whole number" if self.method == "middle_of_n" else ("a whole number" if whole else "a number")
        require(ok, "size", f"{kind} of {unit} from {_fmt(lo)} to {_fmt(hi)} for method '{self.method}'", self.size)

    @classmethod
    def from_text(cls, method: str, size: float) -> AveragingSpec:
        """The spec for a method named in text (a form, a command line); the name is checked on creation."""
        return cls(cast(AveragingMethod, method), size)

    @property
    def label(self) -> str:
        """Plain-language description, e.g. ``"15-breath rolling mean"`` or ``"10 s bins"``."""
        s = _fmt(self.size)
        if self.method == "breaths":
            return f"{s}-breath rolling mean"
        if self.method == "time_bin":
            return f"{s} s bins"
        if self.method == "rolling_time":
            return f"{s} s rolling window"
        return f"middle {int(self.size) - 2} of {s} breaths"

    def to_dict(self) -> dict[str, Any]:
        """``{"method": ..., "size": ...}`` (JSON-ready)."""
        size: float = int(self.size) if float(self.size).is_integer() else float(self.size)
        return {"method": self.method, "size": size}

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> AveragingSpec:
        """Inverse of :meth:`to_dict`; raises :class:`InvalidParameter` on a bad mapping."""
        require(isinstance(data, dict) and {"method", "size"} <= set(data), "averaging", "a mapping with 'method' and 'size'", data)
        return cls(method=data["method"], size=data["size"])


#: Default averaging for threshold detection and reported values: 10 s time bins. Bins do not
#: overlap, so every averaged point is independent (the least-squares fits behind V-slope and
#: the other breakpoints assume independent points), and a 10 s bin holds 3-10 breaths, which
#: halves to thirds the breath-to-breath noise while a 8-12 minute ramp still gives 50-70
#: points for the two-line fits. See docs/thresholds.md.
DEFAULT_AVERAGING = AveragingSpec("time_bin", 10)


def _numeric_columns(breaths: pd.DataFrame) -> list[str]:
    return [c for c in C.NUMERIC if c in breaths.columns and c != C.T_S]


def _phase_mode(phase: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """Most common phase label in each ``[start, end)`` range of rows (ties -> first label)."""
    codes, uniques = pd.factorize(phase)  # each distinct label handled once; missing -> -1
    names = [str(u) for u in uniques]
    if (codes < 0).any():
        names.append("nan")  # str() of a missing label, as before
        codes = np.where(codes < 0, len(names) - 1, codes)
    order = sorted(set(names))
    labels = np.array(order, dtype=object)
    codes = np.array([order.index(name) for name in names], dtype=np.int64)[codes]
    onehot = np.zeros((phase.size + 1, labels.size))
    onehot[np.arange(phase.size) + 1, codes] = 1.0
    csum = np.cumsum(onehot, axis=0)
    counts = csum[ends] - csum[starts]
    return labels[np.argmax(counts, axis=1)]


def _window_means(values: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """NaN-aware mean of ``values[start:end]`` for every range (cumulative sums)."""
    ok = ~np.isnan(values)
    cs = np.concatenate([[0.0], np.cumsum(np.where(ok, values, 0.0))])
    cn = np.concatenate([[0], np.cumsum(ok)])
    n = cn[ends] - cn[starts]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, (cs[ends] - cs[starts]) / np.where(n > 0, n, 1), np.nan)


def _assemble(
    breaths: pd.DataFrame,
    cols: list[str],
    t: np.ndarray,
    starts: np.ndarray,
    ends: np.ndarray,
    t_centre: np.ndarray,
    means: np.ndarray | None = None,
    phase_labels: np.ndarray | None = None,
) -> pd.DataFrame:
    """One frame: ``t_s``, the column means (``means`` when given, else window means), phase, n.

    ``phase_labels`` (one per breath) stand in for the ``phase`` column when given.
    """
    out: dict[str, Any] = {C.T_S: t_centre}
    if means is None:
        values = np.column_stack([breaths[c].to_numpy(dtype=float) for c in cols]) if cols else np.zeros((t.size, 0))
        for j, c in enumerate(cols):
            out[c] = _window_means(values[:, j], starts, ends)
    else:
        for j, c in enumerate(cols):
            out[c] = means[:, j]
    if phase_labels is not None and len(starts):
        out[C.PHASE] = _phase_mode(np.asarray(phase_labels, dtype=object), starts, ends)
    elif C.PHASE in breaths.columns and len(starts):
        out[C.PHASE] = _phase_mode(breaths[C.PHASE].fillna("").to_numpy(), starts, ends)
    out["n_breaths"] = (ends - starts).astype(int)
    return pd.DataFrame(out)


def average_breaths(
    breaths: pd.DataFrame, spec: AveragingSpec = DEFAULT_AVERAGING, *, phase_labels: np.ndarray | None = None
) -> pd.DataFrame:
    """Average a breath table as described by ``spec``.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table in canonical columns, sorted by ``t_s``.
    spec : AveragingSpec, default DEFAULT_AVERAGING
    phase_labels : numpy.ndarray, optional, keyword-only
        Phase label of every breath (e.g. ``detect_phases(breaths).to_numpy()``), used instead
        of a ``phase`` column; saves adding the column only to have it read here.

    Returns
    -------
    pandas.DataFrame
        ``t_s`` at the window centre, every numeric canonical column present in ``breaths``
        averaged (missing values ignored; a window with no value gives NaN), ``phase`` as the
        most common label in the window (when present) and ``n_breaths`` per row. Index
        0..n-1.

    Examples
    --------
    >>> import pandas as pd
    >>> b = pd.DataFrame({"t_s": [1.0, 4.0, 7.0, 12.0], "vo2_ml_min": [1000.0, 1100.0, 1200.0, 1500.0],
    ...                   "vco2_ml_min": [900.0] * 4, "ve_l_min": [30.0] * 4})
    >>> average_breaths(b, AveragingSpec("time_bin", 10))[["t_s", "vo2_ml_min", "n_breaths"]].values.tolist()
    [[5.0, 1100.0, 3.0], [15.0, 1500.0, 1.0]]
    """
    if not isinstance(spec, AveragingSpec):
        raise InvalidParameter("spec", "an AveragingSpec", spec)
    if C.T_S not in breaths.columns:
        raise InvalidParameter("breaths", "a breath table with a 't_s' column", list(breaths.columns))
    cols = _numeric_columns(breaths)
    t = breaths[C.T_S].to_numpy(dtype=float)
    n = t.size
    if n and np.any(np.diff(t) < 0):
        raise InvalidParameter("breaths", "breaths sorted by time (t_s increasing)", "times out of order")
    if phase_labels is not None and len(phase_labels) != n:
        raise InvalidParameter("phase_labels", f"one label per breath ({n})", len(phase_labels))
    empty = np.zeros(0, dtype=int)
    if spec.method == "time_bin":
        if n == 0:
            return _assemble(breaths, cols, t, empty, empty, np.zeros(0), phase_labels=phase_labels)
        size = float(spec.size)
        b = np.floor(t / size).astype(np.int64)
        change = np.flatnonzero(np.diff(b)) + 1
        starts = np.concatenate([[0], change])
        ends = np.concatenate([change, [n]])
        centre = (b[starts] + 0.5) * size
        return _assemble(breaths, cols, t, starts, ends, centre, phase_labels=phase_labels)
    if spec.method == "rolling_time":
        half = float(spec.size) / 2.0
        if n == 0:
            return _assemble(breaths, cols, t, empty, empty, np.zeros(0), phase_labels=phase_labels)
        full = (t - half >= t[0]) & (t + half <= t[-1])
        idx = np.flatnonzero(full)
        starts = np.searchsorted(t, t[idx] - half, side="left")
        ends = np.searchsorted(t, t[idx] + half, side="right")
        return _assemble(breaths, cols, t, starts, ends, t[idx], phase_labels=phase_labels)
    w = int(spec.size)
    if n < w:
        return _assemble(breaths, cols, t, empty, empty, np.zeros(0), phase_labels=phase_labels)
    starts = np.arange(0, n - w + 1)
    ends = starts + w
    centre = _window_means(t, starts, ends)
    if spec.method == "breaths":
        return _assemble(breaths, cols, t, starts, ends, centre, phase_labels=phase_labels)
    # middle_of_n: per column drop the highest and lowest of each window, mean of the rest.
    values = breaths[cols].to_numpy(dtype=float) if cols else np.zeros((n, 0))
    win = np.sort(sliding_window_view(values, w, axis=0), axis=2)  # (windows, columns, w), NaN last
    cnt = np.sum(~np.isnan(win), axis=2)
    pos = np.arange(w)[None, None, :]
    keep = (pos >= 1) & (pos < (cnt - 1)[:, :, None])
    k = keep.sum(axis=2)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.where(k > 0, np.where(keep, win, 0.0).sum(axis=2) / np.where(k > 0, k, 1), np.nan)
    return _assemble(breaths, cols, t, starts, ends, centre, means, phase_labels=phase_labels)
