"""Automatic VT1 and VT2 (RCP) detection on averaged data, with a consensus per threshold."""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.thresholds.oscillation import average_over_period, oscillation_period_s
from analysis.thresholds.results import ThresholdPick, ThresholdReport, VSlopeFit
from analysis.thresholds.segments import TurnUp, best_turn_up, best_two_lines, split_table
from analysis.thresholds.uncertainty import MAX_CI_FRACTION, hull, profile_accept
from analysis.thresholds.vslope import F_TEST_ALPHA, vslope_fit
from analysis.thresholds.vslope import f_test_p as _f_test_p

# Method names, as shown to the user (and used as keys of the candidate dictionaries).
VSLOPE = "V-slope (Beaver 1986)"
EQUIVALENTS = "ventilatory equivalents"
PETO2_NADIR = "PETO2 nadir"
EXCESS_CO2 = "excess CO2 (Gaskill 2001)"
VE_VCO2_BREAK = "VE vs VCO2 breakpoint"
VE_VCO2_RISE = "VE/VCO2 nadir-rise"
PETCO2_FALL = "PETCO2 fall"
CONSENSUS = "consensus"

VT1_METHODS: tuple[str, ...] = (VSLOPE, EQUIVALENTS, PETO2_NADIR, EXCESS_CO2)
VT2_METHODS: tuple[str, ...] = (VE_VCO2_BREAK, VE_VCO2_RISE, PETCO2_FALL)
#: When groups of agreeing picks are equally large, the group holding the earlier method in
#: this order wins (ordered by accuracy measured on the project simulator, docs/thresholds.md).
TIE_ORDER: tuple[str, ...] = (VSLOPE, PETO2_NADIR, EQUIVALENTS, EXCESS_CO2, PETCO2_FALL, VE_VCO2_BREAK, VE_VCO2_RISE)

#: The first minute of exercise is left out of the V-slope and VE-vs-VCO2 fits: VCO2 lags VO2
#: while CO2 stores fill (Beaver et al. 1986 leave out the early, kinetic part).
EARLY_EXCLUDE_S = 60.0
ONSET_EXCLUDE_S = 60.0
OSC_VT1 = True
#: Threshold fits use points at least this many seconds apart: a finer averaged frame (e.g.
#: 10 s bins) is merged into bins of this width first (weighted by breaths). Measured on the
#: project simulator (docs/thresholds.md): 20 s points gave the most accurate VT1 at high noise.
FIT_BIN_S = 20.0
MIN_FIT_BIN_S = 10.0
SHORT_TEST_POINTS = 24.0
#: V-slope runs on a centred running mean of this many points: noise in VO2 (the x axis)
#: flattens both least-squares lines and pulls their crossing to lower VO2 (regression
#: dilution, common practice); measured bias -3.5 % without it, about 0 % with it.
VSLOPE_SMOOTH_POINTS = 3
#: ... and each of its two lines holds at least this many fit points (140 s of 20 s bins). With
#: fewer, a noisy test's V-slope placed its break early, on the first few points (measured on the
#: simulator suite and the demo profiles, docs/thresholds.md: 5 points gave VT1 p90 8.2 % of VO2max
#: on the hard kinds and 16.6 % of VT1 on the demo profiles at noise 2; 7 points 7.8 % and 11.9 %).
VSLOPE_MIN_SEGMENT = 7
#: A VT1 reading within this long before a VT2 estimate is taken for the first breaths of
#: respiratory compensation (VT2 is uncertain by a bin or two), and VT1 is read again in a
#: window ending this long before VT2.
VT2_MARGIN_S = 60.0
#: A VT1 this close to VT2 that cannot be read again below VT2 is not determinable: VT1 and VT2
#: are separated by a stretch of isocapnic buffering (Whipp et al. 1989, from memory), and a
#: reading that close marks the rise at VT2 (measured on the simulator's short ramps: such
#: readings were 23-24 % of VO2max above the planted VT1).
SAME_RISE_S = 30.0
#: A VT2 less than this share of the test's VO2 range (exercise, lowest to highest fit bin) above
#: VT1 is not determinable, for the same reason. Measured on the simulator suite and the demo
#: profiles (594 tests, docs/thresholds.md): of the VT2 readings that close, two were reported
#: where there is no compensation point (oscillating heart failure) and four were 9-20 % of
#: VO2max off; the closest well-placed VT2 lay 15 % of the range above VT1.
MIN_VT_GAP_FRACTION = 0.14
#: Fewest averaged points needed in the exercise phase before any threshold is sought.
MIN_EXERCISE_POINTS = 12
#: Picks agree when within this fraction of the test's VO2 range (exercise, lowest to highest
#: averaged VO2) of each other, and at least AGREE_MIN_ML_MIN (measured on the simulator suite,
#: docs/thresholds.md).
AGREE_RANGE_FRACTION = 0.10
AGREE_MIN_ML_MIN = 50.0
#: Each method's say in the consensus: its share of picks within 5 % of VO2max of the planted
#: threshold on the project simulator's suite of 15 kinds (docs/thresholds.md, measured after the
#: on-transient was left out of the fits).
RELIABILITY: dict[str, float] = {
    "V-slope (Beaver 1986)": 0.76,
    "PETO2 nadir": 0.76,
    "ventilatory equivalents": 0.67,
    "excess CO2 (Gaskill 2001)": 0.60,
    "PETCO2 fall": 0.89,
    "VE vs VCO2 breakpoint": 0.83,
    "VE/VCO2 nadir-rise": 0.79,
}
#: Excess CO2 (VCO2^2/VO2 - VCO2) is read from the same VO2 and VCO2 as V-slope: in a group that
#: holds V-slope it adds this share of its weight only (the two agreeing is not two independent
#: readings; measured on the simulator suite and demo profiles, docs/thresholds.md, its picks
#: also lie late: median +2.9 % of VO2max, +7.5 % at noise 2).
SAME_SIGNALS: dict[str, str] = {EXCESS_CO2: VSLOPE}
SAME_SIGNALS_SHARE = 0.4
#: A VT2 needs at least one of these in its group of agreeing picks: respiratory compensation
#: is VE rising against CO2 output with PETCO2 falling (Whipp et al. 1989; Wasserman et al.,
#: textbook; from memory). VE steepening against VCO2 alone is also what rapid shallow breathing
#: late in heart-failure tests gives (a rising dead-space fraction, Sullivan et al. 1988, from
#: memory); measured on the simulator suite, a VT2 read by the VE-vs-VCO2 breakpoint alone was
#: wrong (no compensation point) 9 times and right 5 times (p90 error 18 % of VO2max).
VT2_CONFIRMING: frozenset[str] = frozenset({VE_VCO2_RISE, PETCO2_FALL})
#: Each side of a consensus interval is scaled by this factor for its confidence. The members'
#: own profile intervals say how sharply each fit placed its break, not how far the methods may
#: disagree: measured on the simulator suite with cart noise (450 tests; the factor that makes
#: 90 % of the planted thresholds fall inside, docs/thresholds.md), low-confidence readings (one
#: method) needed x2.06 (VT1) and x1.99 (VT2), moderate ones x0.89 / x0.97, high ones (three or
#: more methods agreeing) x0.52 / x0.48.
CONFIDENCE_WIDTH: dict[str, dict[str, float]] = {
    "vt1": {"low": 2.0, "moderate": 0.85, "high": 0.45},
    "vt2": {"low": 2.0, "moderate": 1.0, "high": 0.55},
}
#: A consensus interval reaches at least this many fit bins on each side of the reading: a break
#: is placed on a grid of fit bins, so it cannot be located more finely than that, however well
#: the methods agree.
MIN_HALF_WIDTH_BINS: dict[str, float] = {"vt1": 1.5, "vt2": 0.0}
#: ... and this many load stages: in a stepped protocol the break can only be placed on the
#: grid of the stages.
MIN_HALF_WIDTH_STAGES = 0.5
#: A VT1 that one method alone gives is not reported when another method's pick (after the
#: on-transient) lies more than this many agreement windows away: the methods contradict each
#: other. Measured on the simulator suite with cart noise (450 tests, docs/thresholds.md): such
#: lone readings had a median error of 7.8 % of VO2max and a p90 of 19 %; VT1 p90 over the hard
#: kinds 10.3 -> 8.5 % at 1.5 windows (7.5 % at 1 window, with 12 more tests not determinable).
CONTRADICTION_WINDOWS = 1.5
#: An interval this wide (fraction of the test's VO2 range) gives a pick its method's reliability
#: as its weight; narrower counts more, wider less.
WIDTH_REFERENCE = 0.15
EVIDENCE_CLIP = 1.5
MIN_POINTS_BELOW_SINGLE = 4
#: A turn in a ratio or end-tidal pressure counts when the slope after it exceeds this many
#: standard errors (ours: a strict level, since every pair of split points is searched).
TURN_MIN_T = 3.5
#: ... and at least these absolute sizes (ours, chosen above the noise of 10-20 s bins).
MIN_RISE = {"ve_vo2": 1.0, "ve_vco2": 1.0, "peto2_mmhg": 2.0, "petco2_mmhg": 1.5, "excess_co2": 30.0}
#: VE levels off against VCO2 (ventilatory ceiling) when its upper slope is at most this share of
#: the lower one (ours).
CEILING_SLOPE_RATIO = 0.5
CEILING_MARGIN_S = 120.0
#: VE must steepen against VCO2 by at least this factor at the RCP (ours; the simulator's
#: demo profiles steepen 1.6 times).
VE_VCO2_STEEPENING = 1.15


@dataclass(frozen=True)
class _Ex:
    """Rows of the (merged) averaged frame, sorted by time, as plain arrays."""

    row: np.ndarray
    t: np.ndarray
    vo2: np.ndarray
    vco2: np.ndarray
    ve: np.ndarray
    cols: dict[str, np.ndarray]

    def take(self, mask: np.ndarray) -> _Ex:
        return _Ex(
            self.row[mask], self.t[mask], self.vo2[mask], self.vco2[mask], self.ve[mask],
            {k: v[mask] for k, v in self.cols.items()},
        )

    def col(self, name: str) -> np.ndarray | None:
        v = self.cols.get(name)
        return v if v is not None and np.isfinite(v).sum() >= MIN_EXERCISE_POINTS else None


def _phase_labels(avg: pd.DataFrame, phases: pd.Series | np.ndarray | None) -> np.ndarray:
    if phases is not None:
        if len(phases) != len(avg):
            raise InvalidParameter("phases", f"one label per averaged row ({len(avg)})", len(phases))
        return np.asarray(phases).astype(str)
    if C.PHASE in avg.columns:
        return avg[C.PHASE].fillna("exercise").to_numpy(dtype=object).astype(str)
    return np.full(len(avg), "exercise")


def _coarsen(avg: pd.DataFrame, ph: np.ndarray, bin_s: float) -> tuple[dict[str, np.ndarray], np.ndarray]:
    """Merge averaged rows into ``bin_s`` bins within each phase (weighted by ``n_breaths``).

    Returns the numeric columns as arrays (with ``_avg_row``: the row of ``avg`` nearest each
    bin's time) and their phase labels. Rows already ``0.75 * bin_s`` apart or more are kept
    as they are.
    """
    numeric = [c for c in avg.columns if c in C.NUMERIC]
    vals = np.column_stack([avg[c].to_numpy(dtype=float) for c in numeric]) if numeric else np.zeros((len(avg), 0))
    n = vals.shape[0]
    t = vals[:, numeric.index(C.T_S)]
    if n < 2 or float(np.nanmedian(np.diff(t))) >= 0.75 * bin_s:
        cols = {c: vals[:, j] for j, c in enumerate(numeric)}
        cols["_avg_row"] = np.arange(n)
        return cols, ph
    w = avg["n_breaths"].to_numpy(dtype=float) if "n_breaths" in avg.columns else np.ones(n)
    w = np.where(np.isfinite(w) & (w > 0), w, 1.0)
    key_bin = np.floor(t / bin_s).astype(np.int64)
    change = np.flatnonzero((np.diff(key_bin) != 0) | (ph[1:] != ph[:-1])) + 1
    starts = np.concatenate([[0], change])
    ok = np.isfinite(vals)
    wsum = np.add.reduceat(np.where(ok, w[:, None], 0.0), starts, axis=0)
    vsum = np.add.reduceat(np.where(ok, vals * w[:, None], 0.0), starts, axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        merged = np.where(wsum > 0, vsum / wsum, np.nan)
    cols = {c: merged[:, j] for j, c in enumerate(numeric)}
    # nearest original row to each merged time (rows are sorted by time)
    centre = cols[C.T_S]
    right = np.clip(np.searchsorted(t, centre), 1, n - 1)
    cols["_avg_row"] = np.where(np.abs(t[right - 1] - centre) <= np.abs(t[right] - centre), right - 1, right)
    return cols, ph[starts]


def _fit_bin_s(avg: pd.DataFrame, labels: np.ndarray) -> float:
    """Width of the fit bins: :data:`FIT_BIN_S`, finer for a short exercise phase.

    A short steep ramp (a few minutes) gains several % of VO2max per 20 s bin, so a bin's
    width alone would set the error; such tests are fitted on bins of
    ``duration / SHORT_TEST_POINTS`` (at least :data:`MIN_FIT_BIN_S`).
    """
    t = avg[C.T_S].to_numpy(dtype=float)[labels == "exercise"]
    t = t[np.isfinite(t)]
    if t.size < 2:
        return FIT_BIN_S
    return float(np.clip((t.max() - t.min()) / SHORT_TEST_POINTS, MIN_FIT_BIN_S, FIT_BIN_S))


def _rows(cols: dict[str, np.ndarray], keep: np.ndarray) -> _Ex:
    """Rows selected by ``keep`` with finite, positive gases, sorted by time."""
    t, vo2, vco2, ve = (cols[c] for c in (C.T_S, C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN))
    ok = keep & np.isfinite(t) & np.isfinite(ve) & (vo2 > 0) & (vco2 > 0)
    rows = np.flatnonzero(ok)
    rows = rows[np.argsort(t[rows], kind="stable")]
    sub = {k: v[rows] for k, v in cols.items()}
    return _Ex(sub["_avg_row"].astype(int), sub[C.T_S], sub[C.VO2_ML_MIN], sub[C.VCO2_ML_MIN], sub[C.VE_L_MIN], sub)


def _smooth(v: np.ndarray, w: int = 5) -> np.ndarray:
    """Centred running mean over ``w`` points (fewer at the ends; missing values skipped)."""
    n = v.size
    ok = np.isfinite(v)
    cs = np.concatenate([[0.0], np.cumsum(np.where(ok, v, 0.0))])
    cn = np.concatenate([[0], np.cumsum(ok)])
    i = np.arange(n)
    lo = np.clip(i - w // 2, 0, n)
    hi = np.clip(i + (w - 1 - w // 2) + 1, 0, n)
    cnt = cn[hi] - cn[lo]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(cnt > 0, (cs[hi] - cs[lo]) / np.where(cnt > 0, cnt, 1), np.nan)


def vo2_at_time(t: np.ndarray, vo2: np.ndarray, t_s: float, *, half_window_s: float = 45.0) -> float:
    """VO2 at ``t_s`` from a local straight line through the points within ``half_window_s``."""
    near = np.abs(t - t_s) <= half_window_s
    if near.sum() >= 3 and np.ptp(t[near]) > 0:
        slope, icpt = np.polyfit(t[near], vo2[near], 1)
        return float(slope * t_s + icpt)
    return float(np.interp(t_s, t, vo2))


def time_at_level(t: np.ndarray, values: np.ndarray, level: float) -> float:
    """First time a smoothed rising series reaches ``level`` (linear between points)."""
    s = _smooth(values)
    above = np.flatnonzero(s >= level)
    if above.size == 0:
        return float(t[-1])
    i = int(above[0])
    if i == 0:
        return float(t[0])
    f = (level - s[i - 1]) / (s[i] - s[i - 1]) if s[i] != s[i - 1] else 1.0
    return float(t[i - 1] + f * (t[i] - t[i - 1]))


def _pick(
    kind: str,
    method: str,
    ex: _Ex,
    t_s: float,
    note: str,
    *,
    vo2: float | None = None,
    ci_t: tuple[float, float] | None = None,
    ci_vo2: tuple[float, float] | None = None,
) -> ThresholdPick:
    """One method's pick; an interval given in time or in VO2 is translated into the other."""
    i = int(np.argmin(np.abs(ex.t - t_s)))
    v = vo2 if vo2 is not None else vo2_at_time(ex.t, ex.vo2, t_s)
    if ci_t is not None and ci_vo2 is None:
        ci_vo2 = hull(np.array([vo2_at_time(ex.t, ex.vo2, x) for x in ci_t]), including=v)
    elif ci_vo2 is not None and ci_t is None:
        ci_t = hull(np.array([time_at_level(ex.t, ex.vo2, x) for x in ci_vo2]), including=t_s)
    return ThresholdPick(
        kind, float(t_s), float(v), method, "auto", "moderate", note, int(ex.row[i]),  # type: ignore[arg-type]
        ci90_vo2_ml_min=ci_vo2, ci90_t_s=ci_t,
    )


#: How each turn's size is written for the reader: unit and number format.
_RISE_UNIT = {"ve_vo2": ("", ".2f"), "ve_vco2": ("", ".2f"), "peto2_mmhg": (" mmHg", ".1f"),
              "petco2_mmhg": (" mmHg", ".1f"), "excess_co2": (" mL/min", ".0f")}


def _size(key: str, value: float) -> str:
    unit, fmt = _RISE_UNIT[key]
    return f"{value:{fmt}}{unit}"


def _turn(
    kind: str, method: str, ex: _Ex, y: np.ndarray, key: str, what: str, reasons: list[str], *, falling: bool = False
) -> ThresholdPick | None:
    """A turn up in ``y`` (``falling``: ``y`` is the negated series, and the words say "falls")."""
    rose, low, change = ("fell", "highest", "fall") if falling else ("rose", "lowest", "rise")
    ok = np.isfinite(y)
    if ok.sum() < MIN_EXERCISE_POINTS:
        reasons.append(
            f"{method}: only {int(ok.sum())} averaged exercise points have {what} "
            f"(at least {MIN_EXERCISE_POINTS} needed)"
        )
        return None
    fit = best_turn_up(ex.t[ok], y[ok], min_segment=4)
    if fit is None:
        reasons.append(f"{method}: {what} never {'starts to fall' if falling else 'turns upward'} after a level stretch")
        return None
    if fit.rise < MIN_RISE[key] or fit.t_stat_after < TURN_MIN_T:
        why = []
        if fit.rise < MIN_RISE[key]:
            why.append(
                f"{what} {rose} by only {_size(key, fit.rise)} after its {low} point at {fit.t_break:.0f} s "
                f"(at least {_size(key, MIN_RISE[key])} needed)"
            )
        if fit.t_stat_after < TURN_MIN_T:
            why.append(
                f"the {change} after {fit.t_break:.0f} s is not clear of the noise (its slope is "
                f"{fit.t_stat_after:.1f} standard errors; at least {TURN_MIN_T:g} needed)"
            )
        reasons.append(f"{method}: " + "; ".join(why))
        return None
    note = f"{what} {'starts to fall' if falling else 'turns upward'} at {fit.t_break:.0f} s ({'falls' if falling else 'rises'} {_size(key, fit.rise)} by the end)"
    return _pick(kind, method, ex, fit.t_break, note, ci_t=_turn_interval(ex.t[ok], fit))


def _turn_interval(t: np.ndarray, fit: TurnUp) -> tuple[float, float] | None:
    """90 % profile interval of a turn's time (positions of the last line's first point)."""
    keep = profile_accept(fit.profile, n_points=t.size, n_params=6)
    if keep is None or not keep.any():
        return None
    j = fit.profile_start + np.flatnonzero(keep)
    return hull(np.array([t[j.min() - 1], t[j.max()]]), including=fit.t_break)


# ---------------------------------------------------------------- VT2 (respiratory compensation)


def _ve_vco2_break(ex: _Ex, reasons: list[str]) -> ThresholdPick | None:
    late = ex.t >= ex.t[0] + EARLY_EXCLUDE_S
    sub = ex.take(late) if late.sum() >= MIN_EXERCISE_POINTS else ex
    order = np.argsort(sub.vco2, kind="stable")
    xs, ys = sub.vco2[order], sub.ve[order]
    if xs.size < 8:
        reasons.append(f"{VE_VCO2_BREAK}: only {xs.size} averaged points with VE and VCO2 (at least 8 needed)")
        return None
    table = split_table(xs, ys, min_segment=4)
    rules = np.zeros(0, dtype=bool)
    fit = None
    if table is not None:
        with np.errstate(invalid="ignore"):
            rules = (table.s1 > 0) & (table.s2 >= VE_VCO2_STEEPENING * table.s1)
        fit = table.best(rules)
    if fit is None or table is None:
        reasons.append(
            f"{VE_VCO2_BREAK}: VE never becomes at least {VE_VCO2_STEEPENING - 1:.0%} steeper against VCO2 "
            "(no sign of respiratory compensation)"
        )
        return None
    p_value = _f_test_p(fit.sse_one_line, fit.sse, xs.size)
    if p_value >= F_TEST_ALPHA:
        reasons.append(
            f"{VE_VCO2_BREAK}: VE against VCO2 is as well described by one straight line as by two, "
            f"so no break was accepted (F test p = {p_value:.3g}; below {F_TEST_ALPHA:g} needed)"
        )
        return None
    t_s = time_at_level(sub.t, sub.vco2, fit.x_cross)
    ci_t = None
    keep = profile_accept(np.where(rules, table.total, np.inf), n_points=xs.size, n_params=4)
    if keep is not None and keep.any():
        k = table.k[keep]
        ci_t = hull(np.array([time_at_level(sub.t, sub.vco2, x) for x in (xs[k.min() - 1], xs[k.max()])]), including=t_s)
    return _pick("vt2", VE_VCO2_BREAK, ex, t_s, f"VE steepens against VCO2 at VCO2 {fit.x_cross:.0f} mL/min", ci_t=ci_t)


def _vt2_candidates(ex: _Ex, reasons: list[str]) -> dict[str, ThresholdPick | None]:
    out: dict[str, ThresholdPick | None] = {VE_VCO2_BREAK: _ve_vco2_break(ex, reasons)}
    out[VE_VCO2_RISE] = _turn("vt2", VE_VCO2_RISE, ex, 1000.0 * ex.ve / ex.vco2, "ve_vco2", "VE/VCO2", reasons)
    petco2 = ex.col(C.PETCO2_MMHG)
    if petco2 is not None:
        out[PETCO2_FALL] = _turn("vt2", PETCO2_FALL, ex, -petco2, "petco2_mmhg", "PETCO2", reasons, falling=True)
    return out


# ---------------------------------------------------------------- VT1 (gas-exchange threshold)


def _vt1_window(cols: dict[str, np.ndarray], ph: np.ndarray) -> _Ex:
    """Rows searched for VT1: the warm-up after its first minute, then the exercise phase.

    Warm-up rows are below VT1 by design and give the lower line its points (a treadmill test
    that starts at a running speed can cross VT1 within the first minute of exercise). Without
    a warm-up, the first minute of exercise is left out instead (Beaver et al. 1986 leave out
    the early, kinetic part, where VCO2 lags while CO2 stores fill).
    """
    t = cols[C.T_S]
    warm = ph == "warmup"
    exer = ph == "exercise"
    keep = exer.copy()
    if warm.sum() >= 3:
        keep |= warm & (t >= t[warm].min() + EARLY_EXCLUDE_S)
    if exer.any():
        keep &= ~(exer & (t < t[exer].min() + ONSET_EXCLUDE_S))
    win = _rows(cols, keep)
    return win if win.t.size >= MIN_EXERCISE_POINTS else _rows(cols, exer)


def _vslope(ex: _Ex, reasons: list[str]) -> tuple[ThresholdPick | None, VSlopeFit | None]:
    fit = vslope_fit(
        _smooth(ex.vo2, VSLOPE_SMOOTH_POINTS), _smooth(ex.vco2, VSLOPE_SMOOTH_POINTS), min_segment=VSLOPE_MIN_SEGMENT
    )
    if not fit.valid:
        reasons.append(f"{VSLOPE}: {fit.reason}")
        return None, fit
    t_s = time_at_level(ex.t, ex.vo2, fit.vo2_break_ml_min)
    note = (
        f"VCO2 against VO2 steepens from a slope of {fit.slope_below:.2f} to {fit.slope_above:.2f} "
        f"at VO2 {fit.vo2_break_ml_min:.0f} mL/min"
    )
    return _pick("vt1", VSLOPE, ex, t_s, note, vo2=fit.vo2_break_ml_min, ci_vo2=fit.ci90_vo2_ml_min), fit


def _equivalents(ex: _Ex, reasons: list[str]) -> ThresholdPick | None:
    ve_vo2 = 1000.0 * ex.ve / ex.vo2
    pick = _turn("vt1", EQUIVALENTS, ex, ve_vo2, "ve_vo2", "VE/VO2", reasons)
    if pick is None:
        return None
    # VE/VCO2 must stay flat while VE/VO2 rises (otherwise this is the RCP, not VT1).
    after = (ex.t >= pick.t_s) & (ex.t <= pick.t_s + 120.0)
    if after.sum() >= 4:
        ve_vco2 = 1000.0 * ex.ve / ex.vco2
        s_co2 = np.polyfit(ex.t[after], ve_vco2[after], 1)[0]
        s_o2 = np.polyfit(ex.t[after], ve_vo2[after], 1)[0]
        if s_o2 <= 0 or s_co2 > 0.5 * s_o2:
            reasons.append(
                f"{EQUIVALENTS}: VE/VO2 rose after {pick.t_s:.0f} s, but VE/VCO2 rose with it "
                "(at VT1 VE/VCO2 stays level), so it was not taken as VT1"
            )
            return None
    return pick


def _vt1_candidates(ex: _Ex, reasons: list[str]) -> tuple[dict[str, ThresholdPick | None], VSlopeFit | None]:
    vs, fit = _vslope(ex, reasons)
    out: dict[str, ThresholdPick | None] = {VSLOPE: vs, EQUIVALENTS: _equivalents(ex, reasons)}
    peto2 = ex.col(C.PETO2_MMHG)
    if peto2 is not None:
        out[PETO2_NADIR] = _turn("vt1", PETO2_NADIR, ex, peto2, "peto2_mmhg", "PETO2", reasons)
    excess = ex.vco2**2 / ex.vo2 - ex.vco2
    out[EXCESS_CO2] = _turn("vt1", EXCESS_CO2, ex, excess, "excess_co2", "excess CO2", reasons)
    return out, fit


# ---------------------------------------------------------------- consensus


def agreement_tolerance_ml_min(vo2_range_ml_min: float) -> float:
    """Agreement window between picks: :data:`AGREE_RANGE_FRACTION` of the test's VO2 range.

    Parameters
    ----------
    vo2_range_ml_min : float
        Highest minus lowest averaged VO2 of exercise, mL/min.

    Returns
    -------
    float
        The window in mL/min (at least :data:`AGREE_MIN_ML_MIN`).

    Notes
    -----
    A fixed window (150 mL/min) is 4 % of VO2max in an athlete but 11 % in a patient with a
    VO2max of 1.4 L/min, and lets late picks group together there; a share of the test's own
    range scales with the test (common practice: observers' readings differ by a few % of
    VO2max).

    References
    ----------
    Common practice (no single source).
    """
    span = float(vo2_range_ml_min)
    if not (math.isfinite(span) and span >= 0):
        raise InvalidParameter("vo2_range_ml_min", "a VO2 range of 0 mL/min or more", vo2_range_ml_min)
    return max(AGREE_MIN_ML_MIN, AGREE_RANGE_FRACTION * span)


def _weight(p: ThresholdPick, scale_ml_min: float) -> float:
    """A pick's say in the consensus: the method's measured reliability x the evidence of its fit.

    The evidence is the narrowness of the pick's 90 % interval relative to the test's VO2 range
    (an interval of :data:`WIDTH_REFERENCE` of the range counts 1; limited to 0.25-4).
    """
    reliability = RELIABILITY.get(p.method, 0.5)
    if p.ci90_vo2_ml_min is None or scale_ml_min <= 0:
        return reliability
    width = max(p.ci90_vo2_ml_min[1] - p.ci90_vo2_ml_min[0], 1e-9) / scale_ml_min
    return reliability * float(np.clip(WIDTH_REFERENCE / width, 1.0 / EVIDENCE_CLIP, EVIDENCE_CLIP))


def _consensus(
    kind: str, cands: dict[str, ThresholdPick | None], ex: _Ex, *, onset_end_s: float = -np.inf
) -> tuple[ThresholdPick | None, str]:
    tried = len(cands)
    found = [p for p in cands.values() if p is not None]
    early = [p for p in found if p.t_s < onset_end_s]
    valid = [p for p in found if p not in early]
    if not valid:
        why = f"none of the {tried} methods found a {kind.upper()}"
        if early:
            why += f" after the on-transient of exercise ({', '.join(p.method for p in early)} fell inside it)"
        return None, why
    scale = float(np.max(ex.vo2) - np.min(ex.vo2))
    tol = agreement_tolerance_ml_min(scale)
    vo2 = np.array([p.vo2_ml_min for p in valid])
    # VT2 picks count by reliability alone: weighing them by their intervals too made VT2 worse
    # on the simulator suite (p90 5.7 against 4.8 % of VO2max)
    w = np.array([_weight(p, scale if kind == "vt1" else 0.0) for p in valid])
    support = [[q for q in range(len(valid)) if abs(vo2[q] - vo2[p]) <= tol] for p in range(len(valid))]
    rank = [TIE_ORDER.index(p.method) if p.method in TIE_ORDER else len(TIE_ORDER) for p in valid]
    centres = list(range(len(valid)))
    if kind == "vt2":  # respiratory compensation shows in VE/VCO2 or PETCO2 (see VT2_CONFIRMING)
        centres = [p for p in centres if any(valid[q].method in VT2_CONFIRMING for q in support[p])]
        if not centres:
            names = ", ".join(p.method for p in valid)
            return None, (
                f"only {names} found a VT2, and neither a VE/VCO2 rise nor a PETCO2 fall agrees with it (VE "
                "steepening against VCO2 alone, as rapid shallow breathing gives, is not taken as respiratory "
                "compensation)"
            )
    methods = [p.method for p in valid]

    def group_weights(group: list[int]) -> np.ndarray:
        """Weights within a group: a method reading the same signals as another member counts less."""
        names = {methods[q] for q in group}
        return np.array([w[q] * (SAME_SIGNALS_SHARE if SAME_SIGNALS.get(methods[q]) in names else 1.0) for q in group])

    best = max(centres, key=lambda p: (round(float(group_weights(support[p]).sum()), 9), -rank[p]))
    members = support[best]
    cluster = [valid[q] for q in members]
    wm = group_weights(members)
    # weighted mean: it averages the agreeing readings' noise (a weighted median of two picks
    # is one of them); measured on the simulator suite VT1 1.94 / 9.31 -> 1.77 / 8.56 % of VO2max
    v = float(np.average(vo2[members], weights=wm))
    t_s = float(np.average(np.array([p.t_s for p in cluster]), weights=wm))
    size = len(cluster)
    confidence = "high" if size >= 3 else ("moderate" if size == 2 else "low")
    names = ", ".join(p.method for p in cluster)
    left = [p.method for p in valid if p not in cluster]
    if size > 1:
        agree = f"{size} of {tried} methods agree within {tol:.0f} mL/min ({names})"
    elif len(valid) == 1:
        agree = f"only 1 of {tried} methods found a {kind.upper()} ({names})"
    else:
        agree = (
            f"no two of the {len(valid)} picks agree within {tol:.0f} mL/min; {names} was used "
            "(most reliable on simulated tests, weighed by how sharply its fit placed the break)"
        )
    if left:
        agree += f"; not in agreement, set aside: {', '.join(left)}"
    if early:
        agree += f"; inside the on-transient of exercise, not counted: {', '.join(p.method for p in early)}"
    missing = [m for m, p in cands.items() if p is None]
    if missing:
        agree += f"; found nothing: {', '.join(missing)}"
    note = (
        f"weighted mean of {size} agreeing methods: {names}"
        if size > 1
        else (f"found by one method only: {names}" if len(valid) == 1 else f"one method, no other agreeing: {names}")
    )
    if confidence == "low":
        note += " (check the charts before relying on it)"
    i = int(np.argmin(np.abs(ex.t - t_s)))
    ci_vo2, ci_t = _cluster_interval(cluster, v, t_s)
    pick = ThresholdPick(
        kind, t_s, v, CONSENSUS, "auto", confidence, note, int(ex.row[i]),  # type: ignore[arg-type]
        ci90_vo2_ml_min=ci_vo2, ci90_t_s=ci_t,
    )
    return pick, agree


def _scaled(ci: tuple[float, float] | None, centre: float, factor: float) -> tuple[float, float] | None:
    """``ci`` with each side's distance from ``centre`` multiplied by ``factor``."""
    if ci is None:
        return None
    return centre - factor * (centre - ci[0]), centre + factor * (ci[1] - centre)


def _at_least(ci: tuple[float, float] | None, centre: float, half: float) -> tuple[float, float] | None:
    """``ci`` reaching at least ``half`` on each side of ``centre``."""
    if ci is None or not half > 0:
        return ci
    return min(ci[0], centre - half), max(ci[1], centre + half)


def _calibrated(
    pick: ThresholdPick | None, *, bin_s: float = 0.0, stage_s: float = 0.0, vo2_per_s: float = 0.0
) -> ThresholdPick | None:
    """A consensus pick with its intervals scaled for its confidence (:data:`CONFIDENCE_WIDTH`).

    Each side then reaches at least :data:`MIN_HALF_WIDTH_BINS` fit bins (``bin_s``) and
    :data:`MIN_HALF_WIDTH_STAGES` load stages (``stage_s``); in VO2, the exercise phase's VO2 gain
    per second ``vo2_per_s`` times that time. Applied last: whether a reading is determinable is
    judged on the fits' own intervals."""
    if pick is None or pick.method != CONSENSUS:
        return pick
    f = CONFIDENCE_WIDTH[pick.kind][pick.confidence]
    half_t = max(MIN_HALF_WIDTH_BINS[pick.kind] * bin_s, MIN_HALF_WIDTH_STAGES * stage_s)
    ci_vo2 = _at_least(_scaled(pick.ci90_vo2_ml_min, pick.vo2_ml_min, f), pick.vo2_ml_min, half_t * vo2_per_s)
    ci_t = _at_least(_scaled(pick.ci90_t_s, pick.t_s, f), pick.t_s, half_t)
    return replace(pick, ci90_vo2_ml_min=ci_vo2, ci90_t_s=ci_t)


def _cluster_interval(
    cluster: list[ThresholdPick], v: float, t_s: float
) -> tuple[tuple[float, float] | None, tuple[float, float] | None]:
    """Interval of a consensus: middle (median) lower and upper ends of its members' intervals."""
    out: list[tuple[float, float] | None] = []
    for attr, centre in (("ci90_vo2_ml_min", v), ("ci90_t_s", t_s)):
        ends = [getattr(p, attr) for p in cluster if getattr(p, attr) is not None]
        if not ends:
            out.append(None)
            continue
        lo = float(np.median([e[0] for e in ends]))
        hi = float(np.median([e[1] for e in ends]))
        out.append((min(lo, centre), max(hi, centre)))
    return out[0], out[1]


def detect_thresholds(avg: pd.DataFrame, *, phases: pd.Series | np.ndarray | None = None) -> ThresholdReport:
    """Find VT1 and VT2 (RCP) on averaged data by several methods and agree on one value each.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged frame from :func:`analysis.breaths.average_breaths` with ``t_s``,
        ``vo2_ml_min``, ``vco2_ml_min``, ``ve_l_min`` and, when available, ``peto2_mmhg``,
        ``petco2_mmhg`` and ``phase``.
    phases : pandas.Series or numpy.ndarray, optional
        One phase label per row of ``avg`` (e.g. ``detect_phases(avg)``). When omitted, the
        ``phase`` column is used, else every row counts as exercise.

    Returns
    -------
    ThresholdReport
        Consensus VT1 / VT2 (or ``None`` with the reasons), every method's pick, the V-slope
        fit and plain-language agreement notes.

    Notes
    -----
    Averaged rows closer than 15 s are first merged into fit bins (20 s; exercise duration / 24,
    at least 10 s, for a short test), weighted by breaths, so every fit sees the same resolution
    whatever averaging the reviewer chose for display. When ventilation oscillates
    (:func:`analysis.thresholds.oscillation.oscillation_period_s`), the series are first averaged
    over one period. Only exercise rows are used. VT2 is sought first, over the whole exercise
    phase:

    * VE vs VCO2 breakpoint: two-line fit of VE on VCO2; VE must steepen by 15 %.
    * VE/VCO2 nadir-rise: three-line fit of VE/VCO2 on time, the last line rising.
    * PETCO2 fall: the same fit on -PETCO2.

    VT1 is then sought below the VT2 time (unless VT2 rests on a single method), over the
    warm-up after its first minute plus the exercise phase after its first minute (the
    on-transient, Beaver et al. 1986), ending where ventilation levels off against VCO2 when
    there is no VT2; a VT1 that lands within 60 s of VT2 is read again in a window ending 60 s
    before VT2 (as Beaver et al. restrict V-slope to the part below the respiratory
    compensation point), and one within :data:`SAME_RISE_S` of VT2 that cannot be read again
    there is not determinable:

    * V-slope: :func:`vslope_fit` of VCO2 on VO2 (3-point running means, against regression
      dilution by VO2 noise; each line at least :data:`VSLOPE_MIN_SEGMENT` points).
    * Ventilatory equivalents: VE/VO2 turns up while VE/VCO2 stays flat.
    * PETO2 nadir: PETO2 turns up.
    * Excess CO2: VCO2^2/VO2 - VCO2 turns up.

    VT2 picks at or below the VT1 consensus are then set aside. A turn is a three-line fit whose
    last line rises after a line at most 0.3 times as steep; it counts when the last line's
    slope is at least 3.5 standard errors and its rise exceeds a minimum size. Picks inside the
    on-transient do not count. The consensus is taken from the group of picks
    within :func:`agreement_tolerance_ml_min` (10 % of the test's VO2 range) of each other with
    the largest summed weight (:data:`RELIABILITY`, times the sharpness of each VT1 fit; excess
    CO2 beside V-slope, read from the same signals, counts :data:`SAME_SIGNALS_SHARE` of its
    weight), and its value and time are the weighted means of that group; ties
    go to the more accurate method (:data:`TIE_ORDER`). A VT2 group must hold a VE/VCO2 rise or
    a PETCO2 fall (:data:`VT2_CONFIRMING`): VE steepening against VCO2 alone is not taken as
    respiratory compensation. Confidence is high with 3 or more
    agreeing methods, moderate with 2, low with 1; a VT1 read by one method alone that another
    method contradicts (a pick more than :data:`CONTRADICTION_WINDOWS` agreement windows away)
    is "not determinable". Every pick carries a 90 % interval
    (:mod:`analysis.thresholds.uncertainty`); too wide an interval, or a lone VT1 reading right
    after the on-transient, is "not determinable" (the pick moves to ``vt1_undetermined``).
    VT1 comes before VT2 in the result (read again, else the less supported one is dropped,
    with the reason). A VT2 less than :data:`MIN_VT_GAP_FRACTION` of the test's VO2 range above
    VT1 is not determinable (isocapnic buffering separates the two). "None found" is a valid result (common in patients and in tests stopped
    early).

    These are estimates for qualified staff to review against the charts; they are not a
    diagnosis.

    References
    ----------
    Beaver WL, Wasserman K, Whipp BJ (1986). J Appl Physiol 60:2020-2027 (V-slope).
    Gaskill SE, Ruby BC, Walker AJ, et al. (2001). Validity and reliability of combining three
    methods to determine ventilatory threshold. Med Sci Sports Exerc 33:1841-1848 (excess CO2;
    from memory).
    Ventilatory equivalents and end-tidal pressures: common practice.
    Lerman PM (1980). Fitting segmented regression models by grid search. Appl Stat 29:77-84
    (the profile intervals; from memory).
    """
    for c in (C.T_S, C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN):
        if c not in avg.columns:
            raise InvalidParameter("avg", f"an averaged frame with a '{c}' column", list(avg.columns))
    labels = _phase_labels(avg, phases)
    bin_s = _fit_bin_s(avg, labels)
    work, ph = _coarsen(avg, labels, bin_s)
    ex = _rows(work, ph == "exercise")
    report = ThresholdReport()
    exer_rows = labels == "exercise"
    period = oscillation_period_s(avg[C.T_S].to_numpy(dtype=float)[exer_rows], avg[C.VE_L_MIN].to_numpy(dtype=float)[exer_rows])
    ex_vt2 = ex
    if period is not None:
        smooth_work, smooth_ph = _coarsen(average_over_period(avg, labels, period), labels, bin_s)
        ex_smooth = _rows(smooth_work, smooth_ph == "exercise")
        if ex_smooth.t.size >= MIN_EXERCISE_POINTS:
            ex_vt2 = ex_smooth
            if OSC_VT1:
                work, ph, ex = smooth_work, smooth_ph, ex_smooth
    if ex.t.size < MIN_EXERCISE_POINTS:
        report.reasons.append(
            f"only {ex.t.size} averaged exercise points have VO2, VCO2 and VE "
            f"(at least {MIN_EXERCISE_POINTS} needed): no threshold was sought"
        )
        report.agreement = {"vt1": "not assessed", "vt2": "not assessed"}
        return report
    reasons: list[str] = []
    # VT2 first, over the whole exercise phase; then VT1 below it (as Beaver et al. keep the
    # V-slope fit below the respiratory compensation point).
    vt2_c = _vt2_candidates(ex_vt2, reasons)
    onset = float(ex.t[0]) + ONSET_EXCLUDE_S
    vt2, agree2 = _consensus("vt2", vt2_c, ex, onset_end_s=onset)
    win = _vt1_window(work, ph)
    if vt2 is None:
        ceiling = _ventilation_ceiling_t(ex)
        if ceiling is not None:
            ceiling += CEILING_MARGIN_S
        if ceiling is not None and ceiling > 0.5 * (ex.t[0] + ex.t[-1]) and (win.t < ceiling).sum() >= MIN_EXERCISE_POINTS:
            reasons.append(
                f"VT1: ventilation stops following VCO2 from about {ceiling:.0f} s (it levels off, as when "
                "breathing reaches its ceiling), so VT1 was sought before then"
            )
            win = win.take(win.t < ceiling)
    everything = np.ones(win.t.size, dtype=bool)
    below = everything
    if vt2 is not None and vt2.confidence != "low":
        below = win.t < vt2.t_s
        if below.sum() < MIN_EXERCISE_POINTS:
            reasons.append(
                f"VT1: fewer than {MIN_EXERCISE_POINTS} averaged points before VT2, so VT1 was sought over the whole exercise phase"
            )
            below = everything
    r1: list[str] = []
    same_rise = ""
    vt1_c, fit = _vt1_candidates(win.take(below), r1)
    vt1, agree1 = _consensus("vt1", vt1_c, ex, onset_end_s=onset)
    if vt1 is None and not below.all():
        r1 = []
        vt1_c, fit = _vt1_candidates(win, r1)
        vt1, agree1 = _consensus("vt1", vt1_c, ex, onset_end_s=onset)
    elif vt1 is not None and vt2 is not None and vt1.t_s > vt2.t_s - VT2_MARGIN_S:
        # VT1 read on the rise that VT2 (even a single-method VT2) marks: read again below it
        cut = win.t < vt2.t_s - VT2_MARGIN_S
        if cut.sum() >= MIN_EXERCISE_POINTS:
            r_cut: list[str] = []
            c_cut, f_cut = _vt1_candidates(win.take(cut), r_cut)
            v_cut, a_cut = _consensus("vt1", c_cut, ex, onset_end_s=onset)
            if v_cut is not None:
                r1 = [*r_cut, f"VT1: the first reading ({vt1.vo2_ml_min:.0f} mL/min) fell on the rise at VT2; read again below VT2"]
                vt1_c, fit, vt1, agree1 = c_cut, f_cut, v_cut, a_cut
            elif vt1.t_s > vt2.t_s - SAME_RISE_S:
                same_rise = (
                    f"the reading ({vt1.vo2_ml_min:.0f} mL/min at {vt1.t_s:.0f} s) lies within {SAME_RISE_S:.0f} s of VT2 "
                    f"({vt2.t_s:.0f} s), on the rise that VT2 marks, and read again below VT2 no method found a break"
                )
    reasons.extend(r1)
    if vt1 is not None:  # a VT2 pick at or below VT1 is not an RCP: set it aside
        late = {}
        for m, p in vt2_c.items():
            if p is not None and p.vo2_ml_min <= vt1.vo2_ml_min:
                reasons.append(f"{m}: its VT2 ({p.vo2_ml_min:.0f} mL/min) is at or below VT1, so it was set aside")
                p = None
            late[m] = p
        if late != vt2_c:
            vt2_c = late
            vt2, agree2 = _consensus("vt2", vt2_c, ex, onset_end_s=onset)
    if vt1 is None:
        reasons.append("VT1 not found: " + agree1)
    if vt2 is None:
        reasons.append("VT2 not found: " + agree2)
    if vt1 is not None and vt1.confidence == "low":
        below_n = int(np.sum((win.t >= onset) & (win.t < vt1.t_s)))
        if below_n < MIN_POINTS_BELOW_SINGLE:
            why = (
                f"found by one method only, {vt1.t_s - ex.t[0]:.0f} s into exercise with {below_n} averaged points "
                f"between the end of the on-transient and it (at least {MIN_POINTS_BELOW_SINGLE} needed to trust a lone reading)"
            )
            reasons.append(f"VT1 not determinable: {why}")
            report.vt1_undetermined = replace(vt1, determinable=False, reason=why)
            vt1 = None
    if vt1 is not None and same_rise:
        reasons.append(f"VT1 not determinable: {same_rise}")
        report.vt1_undetermined = replace(vt1, determinable=False, reason=same_rise)
        vt1 = None
    if vt1 is not None and vt1.confidence == "low":
        window = CONTRADICTION_WINDOWS * agreement_tolerance_ml_min(float(np.ptp(ex.vo2)))
        vt1, contradicted = _contradicted(vt1, vt1_c, onset, window)
        if contradicted is not None:
            reasons.append(f"VT1 not determinable: {contradicted.reason}")
            report.vt1_undetermined = contradicted
    vt1, undetermined = _determinable(vt1, ex, reasons)
    report.vt1_undetermined = undetermined or report.vt1_undetermined
    vt2, report.vt2_undetermined = _determinable(vt2, ex, reasons)
    if vt1 is not None and vt2 is not None and (vt1.vo2_ml_min >= vt2.vo2_ml_min or vt1.t_s >= vt2.t_s):
        vt1, vt2, why = _order(vt1, vt2, win, ex, onset)
        reasons.append(why)
    if vt1 is not None and vt2 is not None:
        vt2, close = _too_close(vt1, vt2, float(np.ptp(ex.vo2)))
        if close is not None:
            reasons.append(f"VT2 not determinable: {close.reason}")
            report.vt2_undetermined = close
    gain = {"bin_s": bin_s, "stage_s": _stage_s(avg, labels), "vo2_per_s": _vo2_gain_per_s(ex)}
    vt1, vt2 = _calibrated(vt1, **gain), _calibrated(vt2, **gain)
    report.vt1_undetermined = _calibrated(report.vt1_undetermined, **gain)
    report.vt2_undetermined = _calibrated(report.vt2_undetermined, **gain)
    report.vt1, report.vt2 = vt1, vt2
    report.vt1_auto, report.vt2_auto = vt1, vt2
    report.vt1_candidates, report.vt2_candidates = vt1_c, vt2_c
    report.vslope = fit
    report.agreement = {"vt1": agree1, "vt2": agree2}
    report.reasons = reasons
    return report


def _stage_s(avg: pd.DataFrame, labels: np.ndarray) -> float:
    """Typical time between changes of the load in exercise, s (0 without a load column).

    The upper quartile of the times between rows where work rate, speed or grade changes (an
    averaged row can hold half of a change, so a step may show as two changes one row apart):
    a ramp gives its row spacing, a stepped protocol its stage length.
    """
    exer = labels == "exercise"
    t = avg[C.T_S].to_numpy(dtype=float)[exer]
    changed = np.zeros(t.size, dtype=bool)
    for c in (C.WORK_W, C.SPEED_KMH, C.GRADE_PCT):
        if c in avg.columns:
            v = avg[c].to_numpy(dtype=float)[exer]
            changed[1:] |= np.isfinite(v[1:]) & np.isfinite(v[:-1]) & (np.abs(np.diff(v)) > 1e-6)
    when = t[changed]
    if when.size < 3:
        return 0.0
    return float(np.percentile(np.diff(when), 75))


def _vo2_gain_per_s(ex: _Ex) -> float:
    """VO2 gain of the exercise phase per second (least-squares slope; 0 when it does not rise)."""
    if ex.t.size < 3 or np.ptp(ex.t) <= 0:
        return 0.0
    return max(0.0, float(np.polyfit(ex.t, ex.vo2, 1)[0]))


def _ventilation_ceiling_t(ex: _Ex) -> float | None:
    """Time from which VE stops following VCO2 (levels off against it), or ``None``.

    A two-line fit of VE on VCO2 over exercise whose upper line is at most
    :data:`CEILING_SLOPE_RATIO` as steep as the lower one and beats one line by the F test
    (alpha as for the breakpoints). In a ventilation-limited test (no respiratory compensation,
    VE levelling off near its ceiling while CO2 is retained) the upper part is no longer the
    rise in VCO2 against VO2 that V-slope looks for.
    """
    order = np.argsort(ex.vco2, kind="stable")
    xs, ys = ex.vco2[order], ex.ve[order]
    if xs.size < 2 * MIN_EXERCISE_POINTS:
        return None
    fit = best_two_lines(
        xs, ys, min_segment=4, admissible=lambda s1, s2: (s1 > 0) & (s2 <= CEILING_SLOPE_RATIO * s1)
    )
    if fit is None or _f_test_p(fit.sse_one_line, fit.sse, xs.size) >= F_TEST_ALPHA:
        return None
    return time_at_level(ex.t, ex.vco2, fit.x_cross)


def _order(
    vt1: ThresholdPick, vt2: ThresholdPick, win: _Ex, ex: _Ex, onset: float
) -> tuple[ThresholdPick | None, ThresholdPick | None, str]:
    """VT1 must come before VT2: read VT1 again below VT2, else drop the less supported one."""
    first = f"VT1 ({vt1.vo2_ml_min:.0f} mL/min at {vt1.t_s:.0f} s) came out at or above VT2 ({vt2.vo2_ml_min:.0f} mL/min at {vt2.t_s:.0f} s)"
    cut = win.t < vt2.t_s - VT2_MARGIN_S
    if cut.sum() >= MIN_EXERCISE_POINTS:
        c_cut, _ = _vt1_candidates(win.take(cut), [])
        again, _ = _consensus("vt1", c_cut, ex, onset_end_s=onset)
        if again is not None and again.vo2_ml_min < vt2.vo2_ml_min and again.t_s < vt2.t_s:
            return again, vt2, f"{first}; VT1 was read again below VT2 and moved to {again.vo2_ml_min:.0f} mL/min"
    rank = {"high": 3, "moderate": 2, "low": 1}
    if rank[vt2.confidence] > rank[vt1.confidence]:
        return None, vt2, f"{first}; VT1 rests on fewer agreeing methods and was dropped (VT1 not found)"
    return vt1, None, f"{first}; VT2 rests on no more agreeing methods than VT1 and was dropped (VT2 not found)"


def _too_close(vt1: ThresholdPick, vt2: ThresholdPick, vo2_range_ml_min: float) -> tuple[ThresholdPick | None, ThresholdPick | None]:
    """(VT2 in use, VT2 set aside): a VT2 less than :data:`MIN_VT_GAP_FRACTION` of the test's
    VO2 range above VT1 is not reported (isocapnic buffering separates the two)."""
    gap = vt2.vo2_ml_min - vt1.vo2_ml_min
    if vo2_range_ml_min <= 0 or gap >= MIN_VT_GAP_FRACTION * vo2_range_ml_min:
        return vt2, None
    reason = (
        f"the reading ({vt2.vo2_ml_min:.0f} mL/min) lies only {gap:.0f} mL/min above VT1 ({vt1.vo2_ml_min:.0f} mL/min), "
        f"{100 * gap / vo2_range_ml_min:.0f} % of the test's VO2 range (at least {100 * MIN_VT_GAP_FRACTION:.0f} % expected: "
        "a stretch of isocapnic buffering separates VT1 from respiratory compensation), so no value is reported"
    )
    return None, replace(vt2, determinable=False, reason=reason)


def _contradicted(
    pick: ThresholdPick, cands: dict[str, ThresholdPick | None], onset_end_s: float, window_ml_min: float
) -> tuple[ThresholdPick | None, ThresholdPick | None]:
    """(pick in use, pick set aside): a reading of one method that another method contradicts
    (a pick more than ``window_ml_min`` away, after the on-transient) is not reported.

    Lone readings contradicted by another method were the VT1 tail on the simulator suite with
    cart noise (median error 7.8 % of VO2max, p90 19 %, against 1.4 % / 4.2 % for readings that
    three or more methods agree on; docs/thresholds.md).
    """
    others = [
        p for p in cands.values()
        if p is not None and p.t_s >= onset_end_s and abs(p.vo2_ml_min - pick.vo2_ml_min) > window_ml_min
    ]
    if not others:
        return pick, None
    listed = "; ".join(f"{p.method} {p.vo2_ml_min:.0f} mL/min" for p in others)
    reason = (
        f"the one reading ({pick.vo2_ml_min:.0f} mL/min) is contradicted by another method ({listed}): "
        "with the methods disagreeing, no value is reported (check the charts)"
    )
    return None, replace(pick, determinable=False, reason=reason)


def _determinable(
    pick: ThresholdPick | None, ex: _Ex, reasons: list[str]
) -> tuple[ThresholdPick | None, ThresholdPick | None]:
    """(pick in use, pick set aside as not determinable): too wide an interval is not reported."""
    if pick is None or pick.ci90_vo2_ml_min is None:
        return pick, None
    lo, hi = pick.ci90_vo2_ml_min
    peak = float(np.max(ex.vo2))
    if peak <= 0 or (hi - lo) <= MAX_CI_FRACTION * peak:
        return pick, None
    reason = (
        f"its 90 % interval runs from {lo:.0f} to {hi:.0f} mL/min, {100 * (hi - lo) / peak:.0f} % of the "
        f"highest VO2 of exercise (at most {100 * MAX_CI_FRACTION:.0f} % for a reading), so no value is reported"
    )
    reasons.append(f"{pick.kind.upper()} not determinable: {reason}")
    return None, replace(pick, determinable=False, reason=reason)


def _with_confidence(p: ThresholdPick, confidence: str) -> ThresholdPick:
    return replace(p, confidence=confidence)  # type: ignore[arg-type]

