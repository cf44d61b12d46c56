"""Exercise oscillatory ventilation (EOV): cyclic swings of VE during exercise."""

from __future__ import annotations

import bisect
import itertools
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import require
from analysis.interpretation._series import centred_mean, on_grid, span_of
from analysis.interpretation.flags import Flag, flag
from analysis.records import described

#: A cycle counts when its peak-to-trough swing is at least this share of the local mean VE
#: (Leite et al. 2003; Corrà et al. 2006 — from memory).
EOV_AMPLITUDE_FRACTION = 0.15
#: Oscillation is present when counted cycles cover at least this share of the exercise
#: (Leite et al. 2003; Corrà et al. 2006 — from memory).
EOV_DURATION_FRACTION = 0.60
#: Cycle lengths counted, s: periodic breathing in heart failure cycles about every 40–90 s
#: (from memory); shorter swings are breath noise, longer ones are drift.
EOV_PERIOD_RANGE_S: tuple[float, float] = (30.0, 120.0)
#: Smoothing of VE before the cycles are read, s (a few breaths; keeps 40-s cycles at ≥ 90 %).
EOV_SMOOTH_S = 15.0
#: Degree of the polynomial in time taken as the slow trend of VE during exercise.
EOV_TREND_DEGREE = 4
#: Consecutive regular cycles needed before any is counted (Corrà et al.: at least three
#: regular oscillations, from memory).
EOV_MIN_RUN = 3
#: Largest departure of a cycle's length from the median of its run (Corrà et al.: cycle
#: lengths within 20 % of their mean, from memory).
EOV_REGULARITY = 0.20
#: A run of cycles covers from this share of a cycle before its first peak to the same after
#: its last (the swing begins before the first peak it reaches).
EOV_RUN_MARGIN = 0.35
#: Spacing of the series kept for the charts, s.
EOV_SERIES_STEP_S = 5.0

EOV_SOURCE = "Leite et al. 2003; Corrà et al. 2006 (from memory)"
EOV_METHOD = (
    f"VE on a 1-s grid, {EOV_SMOOTH_S:g}-s centred means, divided by a degree-{EOV_TREND_DEGREE} trend of exercise; "
    f"cycles from peak to peak {EOV_PERIOD_RANGE_S[0]:g}–{EOV_PERIOD_RANGE_S[1]:g} s long with a swing (mean of the "
    f"two peaks minus the trough between) ≥ {EOV_AMPLITUDE_FRACTION:.0%} of the trend, in runs of ≥ {EOV_MIN_RUN} "
    f"regular cycles, are counted; present when they cover ≥ {EOV_DURATION_FRACTION:.0%} of exercise ({EOV_SOURCE})"
)


@dataclass(frozen=True)
class Oscillation:
    """Cyclic fluctuation of VE during exercise, with the series the charts draw."""

    present: bool = described(
        description=f"counted cycles cover ≥ {EOV_DURATION_FRACTION:.0%} of exercise", method=EOV_SOURCE
    )
    fraction_of_exercise: float = described(description="share of the exercise phase covered by counted cycles (0–1)")
    cycles: int = described(description="number of counted cycles")
    period_s: float | None = described(unit="s", description="median length of the counted cycles")
    amplitude_pct: float | None = described(
        unit="%", description="median peak-to-trough swing of the counted cycles as % of the trend"
    )
    amplitude_l_min: float | None = described(unit="L/min", description="median peak-to-trough swing of the counted cycles")
    exercise_s: float = described(unit="s", description="duration of the exercise phase judged")
    series_t_s: tuple[float, ...] = described(unit="s", key="series_time_s", description="times of the drawn series")
    series_ve_l_min: tuple[float, ...] = described(unit="L/min", description=f"VE, {EOV_SMOOTH_S:g}-s centred means")
    series_trend_l_min: tuple[float, ...] = described(unit="L/min", description="the slow trend of VE")
    cycle_spans_s: tuple[tuple[float, float], ...] = described(unit="s", description="start and end of each counted cycle")


def _peaks(y: np.ndarray, *, distance_n: int, prominence: float) -> np.ndarray:
    """Indices of the local maxima of ``y`` (finite values) that stand out by ``prominence`` (the
    drop to the lowest point before a higher value, or the edge, on the lower of its two sides),
    at least ``distance_n`` points apart (the higher kept, the earlier of equal ones), in time
    order. Time and memory grow with ``y.size`` times a logarithm at most."""
    if y.size < 3:
        return np.empty(0, dtype=int)
    inner = np.flatnonzero((y[1:-1] > y[:-2]) & (y[1:-1] >= y[2:])) + 1
    if inner.size == 0:
        return inner
    last = y.size - 1
    low_left = _low_since_higher(y, inner)
    low_right = _low_since_higher(y[::-1], last - inner[::-1])[::-1]
    kept = inner[y[inner] - np.maximum(low_left, low_right) >= prominence]
    chosen: list[int] = []
    for k in sorted(kept.tolist(), key=lambda k: -y[k]):
        at = bisect.bisect(chosen, k)
        if (at == 0 or k - chosen[at - 1] >= distance_n) and (at == len(chosen) or chosen[at] - k >= distance_n):
            chosen.insert(at, k)
    return np.array(chosen, dtype=int)


def _low_since_higher(y: np.ndarray, maxima: np.ndarray) -> np.ndarray:
    """For each of the local maxima ``maxima`` (increasing indices), the lowest value of ``y`` from
    just after the nearest earlier point higher than it (or from the start) up to the maximum.

    The nearest earlier higher *maximum* bounds the same stretch: between it and the nearest
    higher point, a value below the maximum would need another higher maximum in between. So a
    stack of the earlier maxima, each with the lowest value since the one below it, finds every
    answer in one pass over the maxima.
    """
    # lowest value from just after the previous maximum up to each maximum
    lows = np.minimum.reduceat(y[: maxima[-1] + 1], np.concatenate(([0], maxima[:-1] + 1)))
    out = np.empty(maxima.size)
    stack: list[tuple[float, float]] = []  # (height of a maximum, lowest value since the maximum below it)
    for j, (height, low) in enumerate(zip(y[maxima].tolist(), lows.tolist(), strict=True)):
        while stack and stack[-1][0] <= height:
            low = min(low, stack.pop()[1])
        stack.append((height, low))
        out[j] = low
    return out


def _regular_runs(
    cycles: list[tuple[float, float, float, float, float] | None],
) -> list[tuple[float, float, float, float, float]]:
    """The counted cycles that belong to runs of at least :data:`EOV_MIN_RUN` consecutive
    cycles of regular length (each within :data:`EOV_REGULARITY` of the run's median)."""
    kept: list[tuple[float, float, float, float, float]] = []
    run: list[tuple[float, float, float, float, float]] = []

    def close() -> None:
        if len(run) >= EOV_MIN_RUN:
            med = float(np.median([c[0] for c in run]))
            regular = [c for c in run if abs(c[0] - med) <= EOV_REGULARITY * med]
            if len(regular) >= EOV_MIN_RUN:
                kept.extend(regular)
        run.clear()

    for c in cycles:
        if c is None:
            close()
        else:
            run.append(c)
    close()
    return kept


def _covered_s(spans: list[tuple[float, float]], lengths: list[float], *, t_from_s: float, t_to_s: float) -> float:
    """Time covered by the counted cycles: each run of cycles from peak to peak, widened by
    :data:`EOV_RUN_MARGIN` of its median cycle on either side (the swing starts before its first peak and ends after its
    last), clipped to exercise."""
    if not spans:
        return 0.0
    runs: list[list[int]] = [[0]]
    for i in range(1, len(spans)):
        if spans[i][0] == spans[i - 1][1]:
            runs[-1].append(i)
        else:
            runs.append([i])
    total = 0.0
    for run in runs:
        half = EOV_RUN_MARGIN * float(np.median([lengths[i] for i in run]))
        total += min(spans[run[-1]][1] + half, t_to_s) - max(spans[run[0]][0] - half, t_from_s)
    return total


def exercise_oscillation(t_s: ArrayLike, ve_l_min: ArrayLike, phases: ArrayLike) -> Oscillation | None:
    """Detect exercise oscillatory ventilation by the Leite/Corrà definition.

    Parameters
    ----------
    t_s, ve_l_min : array_like
        Breath times (s) and minute ventilation (L/min, BTPS); breath-by-breath data.
    phases : array_like of str
        Phase label of every breath; the ``exercise`` breaths are judged.

    Returns
    -------
    Oscillation or None
        ``None`` when the exercise phase is shorter than two minutes.

    Notes
    -----
    Definition used (Leite et al. 2003; Corrà et al. 2006 — from memory, definitions vary):
    cyclic fluctuation of VE with a peak-to-trough amplitude ≥ 15 % of the mean, lasting ≥ 60 %
    of the exercise. Steps: VE interpolated on a 1-s grid and smoothed with 10-s centred means;
    the slow trend is a degree-4 polynomial in time fitted to exercise; the relative deviation
    from the trend is cut into cycles from peak to peak (peaks at least 24 s apart, standing
    out by 7.5 % or more); a cycle 30–120 s long whose swing (mean of its two peaks minus the
    trough between, relative to the trend) is ≥ 15 % is counted when it belongs to a run of at
    least three consecutive cycles whose lengths lie within 20 % of the run's median (the
    regularity Corrà et al. asked for, from memory).

    References
    ----------
    Leite JJ, Mansur AJ, de Freitas HF, et al. Periodic breathing during incremental exercise
    predicts mortality in patients with chronic heart failure evaluated for cardiac
    transplantation. J Am Coll Cardiol 2003;41:2175-2181 (from memory).
    Corrà U, Giordano A, Bosimini E, et al. Oscillatory ventilation during exercise in patients
    with chronic heart failure. Chest 2002;121:1572-1580 / Corrà et al. 2006 (from memory).

    Examples
    --------
    >>> import numpy as np
    >>> t = np.arange(0, 600, 2.0); lab = np.full(t.size, "exercise")
    >>> ve = (20 + 0.05 * t) * (1 + 0.15 * np.sin(2 * np.pi * t / 60))
    >>> r = exercise_oscillation(t, ve, lab)
    >>> r.present, round(r.period_s)
    (True, 60)
    """
    t = np.asarray(t_s, dtype=float)
    ve = np.asarray(ve_l_min, dtype=float)
    labels = np.asarray(phases).astype(str)
    require(t.shape == ve.shape == labels.shape, "ve_l_min", f"one value and one phase per time ({t.size})", ve.size)
    require(not bool(np.any(ve[np.isfinite(ve)] < 0)), "ve_l_min", "ventilations ≥ 0 L/min", ve_l_min)
    ex = span_of(t, labels, "exercise")
    if ex is None or ex[1] - ex[0] < 120.0:
        return None
    mask = labels == "exercise"
    grid, values = on_grid(t[mask], ve[mask], t_from_s=ex[0], t_to_s=ex[1])
    if grid.size < 120:
        return None
    smooth = centred_mean(values, width_n=int(EOV_SMOOTH_S))
    x = (grid - grid[0]) / (grid[-1] - grid[0])
    trend = np.polynomial.polynomial.polyval(x, np.polynomial.polynomial.polyfit(x, values, EOV_TREND_DEGREE))
    trend = np.maximum(trend, 0.05 * float(np.mean(values)))
    rel = smooth / trend - 1.0
    peaks = _peaks(rel, distance_n=int(EOV_PERIOD_RANGE_S[0] * 0.8), prominence=EOV_AMPLITUDE_FRACTION / 2)
    found: list[tuple[float, float, float, float, float] | None] = []
    for a, b in itertools.pairwise(peaks):
        length = float(grid[b] - grid[a])
        trough = a + int(np.argmin(rel[a:b]))
        swing = 0.5 * float(rel[a] + rel[b]) - float(rel[trough])
        swing_l = 0.5 * float(smooth[a] + smooth[b]) - float(smooth[trough])
        ok = EOV_PERIOD_RANGE_S[0] <= length <= EOV_PERIOD_RANGE_S[1] and swing >= EOV_AMPLITUDE_FRACTION
        found.append((length, swing, swing_l, float(grid[a]), float(grid[b])) if ok else None)
    kept = _regular_runs(found)
    lengths = [c[0] for c in kept]
    swings = [c[1] for c in kept]
    swings_l = [c[2] for c in kept]
    spans = [(c[3], c[4]) for c in kept]
    duration = float(ex[1] - ex[0])
    covered = _covered_s(spans, lengths, t_from_s=ex[0], t_to_s=ex[1])
    fraction = min(covered / duration, 1.0)
    step = int(EOV_SERIES_STEP_S)
    return Oscillation(
        present=fraction >= EOV_DURATION_FRACTION,
        fraction_of_exercise=fraction,
        cycles=len(lengths),
        period_s=float(np.median(lengths)) if lengths else None,
        amplitude_pct=100.0 * float(np.median(swings)) if swings else None,
        amplitude_l_min=float(np.median(swings_l)) if swings_l else None,
        exercise_s=duration,
        series_t_s=tuple(grid[::step].tolist()),
        series_ve_l_min=tuple(round(v, 3) for v in smooth[::step].tolist()),
        series_trend_l_min=tuple(round(v, 3) for v in trend[::step].tolist()),
        cycle_spans_s=tuple(spans),
    )


def oscillation_flag(oscillation: Oscillation | None) -> Flag | None:
    """The ``oscillatory_ventilation`` flag when :attr:`Oscillation.present` holds."""
    if oscillation is None or not oscillation.present:
        return None
    o = oscillation
    return flag(
        "oscillatory_ventilation", severity="abnormal",
        text=(
            f"Cyclic fluctuation of ventilation over {100 * o.fraction_of_exercise:.0f} % of exercise "
            f"(period about {o.period_s:.0f} s, swing {o.amplitude_pct:.0f} % of the mean)."
        ),
        value=100.0 * o.fraction_of_exercise, unit="% of exercise",
        limit=f"swing ≥ {EOV_AMPLITUDE_FRACTION:.0%} of the mean over ≥ {EOV_DURATION_FRACTION:.0%} of exercise",
        source=EOV_SOURCE,
    )
