"""Test phases (rest, warm-up, exercise, recovery) and the ramp rate of a cycle test."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.records import described

#: Reader-facing method sentence (shown under ``methods``).
PHASES_METHOD = "the file's phase column when present, else found from the work-rate signal (common practice)"

#: A constant first load counts as warm-up when it lasts at least this long (seconds) and at
#: least 1.5 times as long as the typical later load step (common practice: a 2-5 minute
#: unloaded or light warm-up precedes the ramp).
WARMUP_MIN_S = 60.0

#: Load below this fraction of the peak load counts as "no load" at the start (common practice).
_REST_LOAD_FRACTION = 0.02


def _load_signal(breaths: pd.DataFrame) -> np.ndarray | None:
    """Work rate in W, or for a treadmill a monotone stand-in from speed and grade.

    The treadmill stand-in is the ACSM running equation's horizontal + vertical term,
    speed * (0.2 + 0.9 * grade) (ACSM metabolic equations, from memory); it only orders the
    load, it is not reported.
    """
    if C.WORK_W in breaths.columns and breaths[C.WORK_W].notna().any() and breaths[C.WORK_W].max() > 0:
        return breaths[C.WORK_W].ffill().fillna(0.0).to_numpy(dtype=float)
    if C.SPEED_KMH in breaths.columns and breaths[C.SPEED_KMH].notna().any() and breaths[C.SPEED_KMH].max() > 0:
        speed = breaths[C.SPEED_KMH].ffill().fillna(0.0).to_numpy(dtype=float)
        grade = (
            breaths[C.GRADE_PCT].ffill().fillna(0.0).to_numpy(dtype=float)
            if C.GRADE_PCT in breaths.columns
            else np.zeros_like(speed)
        )
        return speed * (0.2 + 0.9 * np.clip(grade, 0.0, None) / 100.0)
    return None


def detect_phases(breaths: pd.DataFrame) -> pd.Series:
    """Label every breath as ``rest``, ``warmup``, ``exercise`` or ``recovery``.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath (or averaged) table sorted by ``t_s``.

    Returns
    -------
    pandas.Series
        Phase labels, same index as ``breaths``, named ``phase``.

    When neither a ``phase`` column nor a load (``work_w`` / ``speed_kmh``) is available,
    every breath is labelled ``exercise``; :func:`label_phases` says so in its notes.

    Notes
    -----
    1. A ``phase`` column is used as given (missing labels are filled from the neighbouring
       breath before them, then after them).
    2. Otherwise the load is read: ``rest`` is the opening stretch with no load; ``warmup`` is
       a first constant load held for at least 60 s and clearly longer than the later steps;
       ``exercise`` runs to the last breath at peak load; ``recovery`` is everything after the
       load drops from its peak (common practice).
    """
    n = len(breaths)
    if C.PHASE in breaths.columns and breaths[C.PHASE].notna().any():
        # Each distinct label is normalised once; missing labels take the label before them,
        # then (at the start) the first label after them.
        codes, uniques = pd.factorize(breaths[C.PHASE])
        if (codes < 0).any():
            pos = np.maximum.accumulate(np.where(codes >= 0, np.arange(n), -1))
            pos[pos < 0] = int(np.argmax(codes >= 0))
            codes = codes[pos]
        names = [str(u).strip().lower() for u in uniques]
        bad = sorted({names[c] for c in np.unique(codes)} - set(C.PHASES))
        if bad:
            raise InvalidParameter("phase", f"labels from {list(C.PHASES)}", bad)
        return pd.Series(np.array(names, dtype=object)[codes], index=breaths.index, name=C.PHASE)
    load = _load_signal(breaths) if n else None
    if load is None:
        return pd.Series(["exercise"] * n, index=breaths.index, name=C.PHASE, dtype=object)
    t = breaths[C.T_S].to_numpy(dtype=float)
    labels = np.full(n, "exercise", dtype=object)
    peak = float(np.max(load))
    loaded = load > _REST_LOAD_FRACTION * peak
    first = int(np.argmax(loaded))
    labels[:first] = "rest"
    i_peak_last = int(np.flatnonzero(load >= peak - 1e-9)[-1])
    labels[i_peak_last + 1 :] = "recovery"
    # Warm-up: a constant first load held long enough before the load rises further.
    seg = load[first : i_peak_last + 1]
    if seg.size > 2:
        rises = np.flatnonzero(np.diff(seg) > 1e-9)
        if rises.size:
            end_first = first + int(rises[0]) + 1  # first breath at the next load
            first_dur = t[end_first] - t[first]
            step_t = t[first + rises + 1]
            later_steps = np.diff(step_t)
            typical = float(np.median(later_steps)) if later_steps.size else 0.0
            if first_dur >= WARMUP_MIN_S and first_dur >= 1.5 * typical:
                labels[first:end_first] = "warmup"
    return pd.Series(labels, index=breaths.index, name=C.PHASE)


#: Note given when every breath had to be treated as exercise.
NO_PHASES_NOTE = (
    "No phase labels and no work rate or speed in this test: every breath is treated "
    "as exercise. Add a 'phase' column or the load to separate rest and recovery."
)


@dataclass(frozen=True)
class PhaseSpan:
    """Start and end of one phase of the breaths used."""

    start_s: float = described(unit="s", description="time of the first breath of the phase")
    end_s: float = described(unit="s", description="time of the last breath of the phase")


@dataclass(frozen=True)
class PhaseLabels:
    """The phase of every breath, the span of each phase, and notes.

    Attributes
    ----------
    labels : pandas.Series
        :func:`detect_phases` output (same index as the breaths).
    spans : dict of str to PhaseSpan
        Phase -> first and last breath time, for the phases present.
    notes : tuple of str
        Plain-language notes (e.g. no way to tell the phases apart).
    """

    labels: pd.Series
    spans: dict[str, PhaseSpan]
    notes: tuple[str, ...]


def label_phases(breaths: pd.DataFrame) -> PhaseLabels:
    """Label the phases of the breaths (:func:`detect_phases`) with their spans and notes.

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table sorted by ``t_s``.

    Returns
    -------
    PhaseLabels
    """
    labels = detect_phases(breaths)
    notes: tuple[str, ...] = ()
    has_labels = C.PHASE in breaths.columns and breaths[C.PHASE].notna().any()
    if len(breaths) and not has_labels and _load_signal(breaths) is None:
        notes = (NO_PHASES_NOTE,)
    t = breaths[C.T_S].to_numpy(dtype=float)
    ph = labels.to_numpy()
    spans = {
        name: PhaseSpan(float(t[m].min()), float(t[m].max()))
        for name in C.PHASES
        if (m := ph == name).any()
    }
    return PhaseLabels(labels, spans, notes)


def ramp_rate_w_per_min(breaths: pd.DataFrame, phases: pd.Series | None = None) -> float | None:
    """Ramp rate of a cycle test in W/min (robust slope of work rate against time).

    Parameters
    ----------
    breaths : pandas.DataFrame
        Breath table with ``t_s`` and ``work_w``.
    phases : pandas.Series, optional
        Labels from :func:`detect_phases` (computed when omitted).

    Returns
    -------
    float or None
        Theil-Sen slope of ``work_w`` on time over the exercise phase, in W/min; ``None`` when
        there is no work rate, fewer than 10 exercise breaths, or no rise in load.

    References
    ----------
    Sen PK (1968). Estimates of the regression coefficient based on Kendall's tau. J Am Stat
    Assoc 63:1379-1389 (the Theil-Sen estimator, as in ``scipy.stats.theilslopes``).
    """
    if C.WORK_W not in breaths.columns or not breaths[C.WORK_W].notna().any():
        return None
    if phases is None:
        phases = detect_phases(breaths)
    if len(phases) != len(breaths):
        raise InvalidParameter("phases", f"one label per breath ({len(breaths)})", len(phases))
    mask = (np.asarray(phases) == "exercise") & breaths[C.WORK_W].notna().to_numpy()
    if mask.sum() < 10:
        return None
    t = breaths[C.T_S].to_numpy(dtype=float)[mask]
    w = breaths[C.WORK_W].to_numpy(dtype=float)[mask]
    if np.ptp(w) <= 0:
        return None
    if t.size > 400:  # Theil-Sen is O(n^2) in pairs; an even subsample keeps it fast
        pick = np.linspace(0, t.size - 1, 400).round().astype(int)
        t, w = t[pick], w[pick]
    slope = theil_sen_slope(t, w)
    return None if slope is None else slope * 60.0


def theil_sen_slope(x: np.ndarray, y: np.ndarray) -> float | None:
    """Theil-Sen slope: the median of the slopes between every pair of points with distinct x.

    Parameters
    ----------
    x, y : numpy.ndarray
        Points (same length). Cost O(n^2) in memory and time; callers subsample long series.

    Returns
    -------
    float or None
        The median pairwise slope in units of y per unit of x; ``None`` when no two points
        have distinct x.

    Notes
    -----
    slope = median{(y_j - y_i) / (x_j - x_i) : x_j > x_i}. The same pairs and the same median
    as ``scipy.stats.theilslopes`` (a test compares the two); written out here because that
    function's module costs about half a second of start-up for one call.

    References
    ----------
    Sen PK (1968). Estimates of the regression coefficient based on Kendall's tau. J Am Stat
    Assoc 63:1379-1389.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    dx = x[:, np.newaxis] - x
    rising = dx > 0
    if not rising.any():
        return None
    slopes = (y[:, np.newaxis] - y)[rising] / dx[rising]
    return float(np.median(slopes))
