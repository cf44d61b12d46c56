"""Work rate and speed at the thresholds corrected for the lag of VO2 behind a ramp."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.records import described

#: Shortest and longest mean response time accepted from a fit, s; outside it the fit is not
#: trusted (healthy adults about 30–45 s, patients longer; common practice).
MRT_RANGE_S: tuple[float, float] = (5.0, 150.0)
#: The note given when the load rises in steps (read by :mod:`analysis.progress_compare`).
NOT_A_RAMP_NOTE = "the protocol is not a ramp (the load rises in steps)"
#: Share of successive averaged rows whose load must rise for the protocol to count as a ramp.
RAMP_RISING_SHARE = 0.8

#: chi-squared quantile (1 degree of freedom, 90 %) for the response time's range.
CHI2_1DF_90 = 2.706
#: Widest 90 % range of the response time accepted, s: wider (or reaching past the longest
#: plausible response time) and the ramp does not determine it (slow, noisy ramps), so the loads
#: are not corrected.
MRT_MAX_RANGE_S = 90.0
#: Rows further than this many robust SDs off the first fit are left out of the second.
OUTLIER_K_MAD = 3.0
#: Response times tried by the fit, s (every 0.5 s; the fit is refused outside MRT_RANGE_S).
_TAU_GRID_S = np.arange(2.0, 200.0, 0.5)

LAG_METHOD = (
    "steady-state equivalent on a ramp = load - ramp rate × mean response time (Whipp et al. 1981); the mean "
    "response time is the time constant of a first-order response of VO2 to the recorded load, fitted by least "
    "squares from 90 s before the ramp to VT1 (with a fading term for a warm-up not yet steady)"
)


@dataclass(frozen=True)
class LagCorrection:
    """The ramp, its VO2 mean response time and the lag-corrected loads at the thresholds."""

    load: str = described(description="`work_w` (cycle) or `speed_kmh` (treadmill)")
    ramp_rate_per_min: float = described(description="rise of the load per minute (W/min or km/h per min)")
    mean_response_time_s: float = described(unit="s", description="time by which VO2 lags the ramp", method="Whipp et al. 1981")
    mean_response_time_ci90_s: tuple[float, float] = described(
        unit="s", description="90 % range of the response time (profile likelihood of the fit)"
    )
    vt1_raw: float | None = described(description="load at VT1 as recorded (W or km/h)")
    vt1_corrected: float | None = described(description="steady-state equivalent load at VT1")
    vt2_raw: float | None = described(description="load at VT2 as recorded")
    vt2_corrected: float | None = described(description="steady-state equivalent load at VT2")


def lag_corrected_load(load: float, *, ramp_rate_per_min: float, mean_response_time_s: float) -> float:
    """``load - ramp_rate × MRT``: the constant load whose steady VO2 equals the ramp's VO2.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. A test to determine parameters of aerobic function
    during exercise. J Appl Physiol 1981;50:217-221 (from memory).

    Examples
    --------
    >>> lag_corrected_load(200.0, ramp_rate_per_min=25.0, mean_response_time_s=40.0)
    183.33333333333334
    """
    return float(load - ramp_rate_per_min * mean_response_time_s / 60.0)


def _lagged(t_s: np.ndarray, u: np.ndarray, tau_s: np.ndarray) -> np.ndarray:
    """First-order response ``dx/dt = (u - x) / tau`` to ``u`` (linear between samples, exact
    first-order-hold steps), steady at ``u[0]`` at the start; one column per ``tau``."""
    x = np.empty((t_s.size, tau_s.size))
    x[0] = u[0]
    for i in range(1, t_s.size):
        dt = max(float(t_s[i] - t_s[i - 1]), 1e-9)
        a = np.exp(-dt / tau_s)
        ramp = (u[i] - u[i - 1]) * (1.0 - tau_s / dt * (1.0 - a))
        x[i] = a * x[i - 1] + (1.0 - a) * u[i - 1] + ramp
    return x


@dataclass(frozen=True)
class FirstOrderFit:
    """The fitted time constant and its 90 % range (s)."""

    tau_s: float
    ci90_s: tuple[float, float]


def _fit_every_tau(
    y: np.ndarray, x: np.ndarray, fade: np.ndarray, *, keep: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Least squares ``y = b + G × x[:, j] + c × fade[:, j]`` over the rows ``keep``, for every
    column ``j`` (one per ``tau``) at once.

    With the columns centred on their means over ``keep``, the intercept drops out and ``G``, ``c``
    solve a 2 × 2 system of normal equations (Cramer's rule); ``b`` follows from the means.

    Returns
    -------
    (sse, gain, resid)
        Squared error over ``keep`` and ``G`` per column; residuals of every row per column
        (``nan`` where ``y`` is).
    """
    xk, fk, yk = x[keep], fade[keep], y[keep]
    x_mean, f_mean, y_mean = xk.mean(axis=0), fk.mean(axis=0), yk.mean()
    xc, fc, yc = xk - x_mean, fk - f_mean, yk - y_mean
    sxx, sff, sxf = (xc * xc).sum(axis=0), (fc * fc).sum(axis=0), (xc * fc).sum(axis=0)
    sxy, sfy = yc @ xc, yc @ fc
    det = sxx * sff - sxf**2
    with np.errstate(divide="ignore", invalid="ignore"):  # a degenerate column gets sse = inf below
        gain = (sff * sxy - sxf * sfy) / det
        c = (sxx * sfy - sxf * sxy) / det
    resid = y[:, None] - (y_mean - gain * x_mean - c * f_mean) - gain * x - c * fade
    sse = (resid[keep] ** 2).sum(axis=0)
    return np.where(np.isfinite(sse), sse, np.inf), gain, resid


def first_order_fit(t_s: np.ndarray, load: np.ndarray, vo2_ml_min: np.ndarray) -> FirstOrderFit | None:
    """Time constant (s) of the first-order response of VO2 to the load that fits best.

    ``VO2 = b + G × x(t) + c × exp(-(t - t[0]) / tau)`` with ``x`` the load passed through a
    first-order lag of time constant ``tau`` (the last term: what is left of an earlier change,
    e.g. a warm-up not yet steady); ``b``, ``G`` and ``c`` by least squares for every ``tau`` of a
    0.5-s grid, the ``tau`` with the smallest squared error kept. On a ramp this ``tau`` is the mean response time: the
    response trails the ramp by it once the transient is over (Whipp et al. 1981).

    Returns
    -------
    FirstOrderFit or None
        The best ``tau`` and its 90 % range (the taus whose squared error stays within
        ``1 + 2.71 / (n - 4)`` of the best: profile likelihood, chi-squared with 1 degree of
        freedom); ``None`` when VO2 does not rise with the load (``G <= 0``) or the best ``tau``
        is at the grid's edge.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. J Appl Physiol 1981;50:217-221 (from memory).

    Examples
    --------
    >>> t = np.arange(0.0, 600.0, 10.0)
    >>> load = np.where(t < 60, 20.0, 20.0 + 0.5 * (t - 60))
    >>> vo2 = 600.0 + 10.0 * _lagged(t, load, np.array([40.0]))[:, 0]
    >>> first_order_fit(t, load, vo2).tau_s
    40.0
    """
    t = np.asarray(t_s, dtype=float)
    y = np.asarray(vo2_ml_min, dtype=float)
    x = _lagged(t, np.asarray(load, dtype=float), _TAU_GRID_S)
    # what is left of an earlier change (a warm-up not yet steady) fades with the same tau
    fade = np.exp(-(t[:, None] - t[0]) / _TAU_GRID_S[None, :])
    keep = np.isfinite(y)
    for _ in range(2):  # the second pass leaves out breaths far off the first fit (a cough, a sigh)
        sse, gain, resid = _fit_every_tau(y, x, fade, keep=keep)
        r = resid[:, int(np.argmin(sse))]
        mad = float(np.median(np.abs(r[keep] - np.median(r[keep]))))
        keep = np.isfinite(y) & (np.abs(r) <= OUTLIER_K_MAD * 1.4826 * max(mad, 1e-9))
    best = int(np.argmin(sse))
    if not np.isfinite(sse[best]) or gain[best] <= 0 or best in (0, _TAU_GRID_S.size - 1):
        return None
    # 90 % profile-likelihood range: taus whose error exceeds the best by less than chi2(1) = 2.71
    # residual variances (4 parameters fitted)
    n = int(keep.sum())
    limit = sse[best] * (1.0 + CHI2_1DF_90 / max(n - 4, 1))
    inside = np.flatnonzero(sse <= limit)
    return FirstOrderFit(float(_TAU_GRID_S[best]), (float(_TAU_GRID_S[inside.min()]), float(_TAU_GRID_S[inside.max()])))


def lag_correction(
    avg: pd.DataFrame, *, phases_avg: np.ndarray, vt1_t_s: float | None, vt1_load: float | None, vt2_load: float | None,
    mode: str | None,
) -> tuple[LagCorrection | None, tuple[str, ...]]:
    """Mean response time of VO2 on a ramp and the lag-corrected loads at VT1 and VT2.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data.
    phases_avg : numpy.ndarray, keyword-only
        Phase label of every averaged row.
    vt1_t_s : float or None, keyword-only
        Time of VT1 (the VO2 line is fitted up to it; else up to two thirds of exercise).
    vt1_load, vt2_load : float or None, keyword-only
        Work rate (cycle) or speed (treadmill) at VT1 and VT2 as recorded.
    mode : {'cycle', 'treadmill'} or None, keyword-only

    Returns
    -------
    (LagCorrection or None, notes)
        ``None`` with a note when the protocol is not a ramp or the response time is implausible.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. J Appl Physiol 1981;50:217-221 (from memory).
    """
    col = C.WORK_W if mode == "cycle" else C.SPEED_KMH if mode == "treadmill" else None
    if col is None or col not in avg:
        return None, ()
    t_all = avg[C.T_S].to_numpy(dtype=float)
    load_all = avg[col].to_numpy(dtype=float)
    ex_mask = phases_avg == "exercise"
    t, load = t_all[ex_mask], load_all[ex_mask]
    ok = np.isfinite(t) & np.isfinite(load)
    if ok.sum() < 8:
        return None, ()
    t, load = t[ok], load[ok]
    rising = np.diff(load) > 0
    if rising.mean() < RAMP_RISING_SHARE:
        return None, (f"Loads at the thresholds are not lag-corrected: {NOT_A_RAMP_NOTE}.",)
    top = int(np.argmax(load)) + 1  # the last averaged rows can hold the first breaths of recovery
    rate = float(np.polyfit(t[:top] / 60.0, load[:top], 1)[0]) if top >= 4 else 0.0
    t0 = float(t.min())
    t_end = vt1_t_s if vt1_t_s is not None and vt1_t_s > t0 + 120.0 else t0 + 2.0 / 3.0 * (t.max() - t0)
    vo2_all = avg[C.VO2_ML_MIN].to_numpy(dtype=float)
    span = (t_all >= t0 - 180.0) & (t_all <= t_end) & np.isfinite(load_all) & np.isfinite(vo2_all)
    if not (t_all[span] < t0).any() or (t_all[span] >= t0 + 60.0).sum() < 4 or rate <= 0:
        return None, ("Loads at the thresholds are not lag-corrected: no VO2 before the ramp or too short a ramp to fit.",)
    fit = first_order_fit(t_all[span], load_all[span], vo2_all[span])
    if fit is None:
        return None, ("Loads at the thresholds are not lag-corrected: VO2 did not rise with the ramp.",)
    mrt = fit.tau_s
    lo, hi = fit.ci90_s
    if hi - lo > MRT_MAX_RANGE_S or hi > MRT_RANGE_S[1]:
        return None, (
            f"Loads at the thresholds are not lag-corrected: this ramp does not determine the VO2 response time "
            f"(best {mrt:.0f} s, 90 % range {lo:.0f}–{hi:.0f} s; accepted: a range at most {MRT_MAX_RANGE_S:g} s wide "
            f"within {MRT_RANGE_S[0]:g}–{MRT_RANGE_S[1]:g} s).",
        )
    if not MRT_RANGE_S[0] <= mrt <= MRT_RANGE_S[1]:
        return None, (
            f"Loads at the thresholds are not lag-corrected: the VO2 response time fitted ({mrt:.0f} s) is outside "
            f"{MRT_RANGE_S[0]:g}–{MRT_RANGE_S[1]:g} s.",
        )

    def corr(v: float | None) -> float | None:
        return lag_corrected_load(v, ramp_rate_per_min=rate, mean_response_time_s=mrt) if v is not None else None

    return LagCorrection(
        load=col, ramp_rate_per_min=rate, mean_response_time_s=mrt, mean_response_time_ci90_s=(lo, hi), vt1_raw=vt1_load, vt1_corrected=corr(vt1_load),
        vt2_raw=vt2_load, vt2_corrected=corr(vt2_load),
    ), ()


def threshold_lag(
    avg: pd.DataFrame, *, phases_avg: np.ndarray, vt1: Any | None, vt2: Any | None, mode: str | None
) -> tuple[LagCorrection | None, tuple[str, ...]]:
    """:func:`lag_correction` for the thresholds of an analysis: the load of the test's mode
    (``work_w`` on a cycle, ``speed_kmh`` on a treadmill) read from ``vt1`` and ``vt2``
    (:class:`analysis.indices.threshold_values.ThresholdResult` or ``None``).

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. J Appl Physiol 1981;50:217-221 (from memory).
    """
    load = C.WORK_W if mode == "cycle" else C.SPEED_KMH
    return lag_correction(
        avg, phases_avg=phases_avg, vt1_t_s=vt1.t_s if vt1 is not None else None,
        vt1_load=getattr(vt1, load) if vt1 is not None else None, vt2_load=getattr(vt2, load) if vt2 is not None else None,
        mode=mode,
    )
