"""Pulse-oximetry saturation during the test: rest, sustained minimum, peak, desaturation."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from analysis.errors import require
from analysis.interpretation._series import inside_means, on_grid, span_of
from analysis.interpretation.flags import Flag, flag
from analysis.records import described

#: A fall of SpO2 from rest by at least this many percentage points is a desaturation
#: (ATS/ACCP 2003, from memory).
DESATURATION_FALL_POINTS = 4.0
#: A sustained SpO2 at or below this level is a desaturation (ATS/ACCP 2003, from memory).
DESATURATION_LEVEL_PCT = 88.0
#: Width of the means a fall is judged on, s: a sustained fall, not one breath or a probe
#: artefact (common practice).
SATURATION_WINDOW_S = 30.0

ATS_ACCP_2003 = "ATS/ACCP statement on cardiopulmonary exercise testing, Am J Respir Crit Care Med 2003;167:211-277"

SATURATION_METHOD = (
    f"SpO2 at rest (mean of the rest phase), lowest and end-of-exercise {SATURATION_WINDOW_S:g}-s means inside "
    f"exercise; desaturation when the fall is ≥ {DESATURATION_FALL_POINTS:g} points or a value ≤ "
    f"{DESATURATION_LEVEL_PCT:g} % (ATS/ACCP 2003, from memory)"
)


@dataclass(frozen=True)
class Saturation:
    """SpO2 at rest, its lowest sustained value during exercise and its value at peak."""

    spo2_rest_pct: float | None = described(unit="%", description="mean SpO2 of the rest phase (null without one)")
    spo2_min_pct: float = described(unit="%", description=f"lowest {SATURATION_WINDOW_S:g}-s mean during exercise")
    spo2_min_t_s: float = described(unit="s", key="spo2_min_time_s", description="centre of that window")
    spo2_peak_pct: float = described(unit="%", description=f"mean of the last {SATURATION_WINDOW_S:g} s of exercise")
    fall_points: float | None = described(unit="percentage points", description="`spo2_rest_pct - spo2_min_pct`")
    desaturation: bool = described(
        description=f"fall ≥ {DESATURATION_FALL_POINTS:g} points or a sustained value ≤ {DESATURATION_LEVEL_PCT:g} %",
        method="ATS/ACCP 2003, from memory",
    )


def spo2_summary(
    t_s: ArrayLike, spo2_pct: ArrayLike, phases: ArrayLike, *, window_s: float = SATURATION_WINDOW_S
) -> Saturation | None:
    """SpO2 at rest, minimum and peak, judged on sustained (time-averaged) values.

    Parameters
    ----------
    t_s, spo2_pct : array_like
        Breath times (s) and pulse-oximetry saturation (%).
    phases : array_like of str
        Phase label of every breath (``rest``, ``warmup``, ``exercise``, ``recovery``).
    window_s : float, keyword-only
        Width of the means judged, s (default 30): one low breath or a probe slipping for a few
        seconds does not make a desaturation.

    Returns
    -------
    Saturation or None
        ``None`` without SpO2 values during exercise, or an exercise shorter than one window.

    Notes
    -----
    SpO2 is interpolated on a 1-s grid; the minimum and the peak value are means of
    ``window_s`` wholly inside the exercise phase; the rest value is the mean of the rest
    phase. Desaturation: rest - minimum ≥ 4 points, or minimum ≤ 88 %.

    References
    ----------
    ATS/ACCP Statement on cardiopulmonary exercise testing. Am J Respir Crit Care Med
    2003;167:211-277 (limits from memory).

    Examples
    --------
    >>> t = list(range(0, 600, 3)); lab = ["rest"] * 40 + ["exercise"] * 160
    >>> s = [97.0] * 40 + [97.0 - 6.0 * i / 159 for i in range(160)]
    >>> r = spo2_summary(t, s, lab)
    >>> round(r.fall_points, 1), r.desaturation
    (5.8, True)
    """
    t = np.asarray(t_s, dtype=float)
    y = np.asarray(spo2_pct, dtype=float)
    labels = np.asarray(phases).astype(str)
    require(t.shape == y.shape == labels.shape, "spo2_pct", f"one value and one phase per time ({t.size})", y.size)
    finite = y[np.isfinite(y)]
    require(bool(np.all((finite >= 0) & (finite <= 100))), "spo2_pct", "saturations from 0 to 100 %", spo2_pct)
    require(np.isfinite(window_s) and 5 <= window_s <= 120, "window_s", "a window from 5 to 120 s", window_s)
    ex = span_of(t, labels, "exercise")
    if ex is None:
        return None
    ex_mask = (labels == "exercise") & np.isfinite(y)
    if ex_mask.sum() < 3:
        return None
    grid, values = on_grid(t[ex_mask], y[ex_mask], t_from_s=ex[0], t_to_s=ex[1])
    width = round(window_s)
    means = inside_means(values, width_n=width)
    if means.size == 0:
        return None
    i_min = int(np.argmin(means))
    rest_values = y[(labels == "rest") & np.isfinite(y)]
    rest = float(np.mean(rest_values)) if rest_values.size else None
    low = float(means[i_min])
    fall = rest - low if rest is not None else None
    desat = (fall is not None and fall >= DESATURATION_FALL_POINTS) or low <= DESATURATION_LEVEL_PCT
    return Saturation(
        spo2_rest_pct=rest, spo2_min_pct=low, spo2_min_t_s=float(grid[i_min] + (width - 1) / 2.0),
        spo2_peak_pct=float(means[-1]), fall_points=fall, desaturation=bool(desat),
    )


def desaturation_flag(saturation: Saturation | None) -> Flag | None:
    """The ``desaturation`` flag when :attr:`Saturation.desaturation` holds."""
    if saturation is None or not saturation.desaturation:
        return None
    s = saturation
    if s.fall_points is not None and s.fall_points >= DESATURATION_FALL_POINTS:
        text = f"SpO2 fell {s.fall_points:.1f} points during exercise ({s.spo2_rest_pct:.0f} % at rest, lowest {s.spo2_min_pct:.0f} %)."
        value, unit = s.fall_points, "percentage points"
    else:
        text = f"SpO2 reached {s.spo2_min_pct:.0f} % during exercise (sustained {SATURATION_WINDOW_S:g}-s mean)."
        value, unit = s.spo2_min_pct, "%"
    return flag(
        "desaturation", severity="abnormal", text=text + " Check the probe signal before relying on it.", value=value,
        unit=unit, limit=f"fall ≥ {DESATURATION_FALL_POINTS:g} points or SpO2 ≤ {DESATURATION_LEVEL_PCT:g} %",
        source="ATS/ACCP 2003 (from memory)",
    )
