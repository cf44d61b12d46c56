"""Two tests of one person side by side: are they comparable, and how do they compare at the same
load (or the same time) — with typical errors that fit the population tested.

Pure functions on the typed results (:class:`analysis.results.TestResults`) and the averaged
frames; nothing here reads a file or a database. The Progress page shows the warnings,
the iso-load table and the typical errors with their sources.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import require
from analysis.interpretation.lag import NOT_A_RAMP_NOTE, RAMP_RISING_SHARE
from analysis.progress import TYPICAL_ERRORS, TypicalError
from analysis.results import TestResults

#: Two ramps whose rates differ by more than this (% of the slower) are flagged: the ramp rate
#: changes VO2peak, the thresholds' loads and the submaximal values at a given load
#: (Buchfuhrer et al. 1983, from memory; common practice to repeat the same protocol).
RAMP_RATE_TOLERANCE_PCT = 10.0

#: Populations whose typical errors are known here, with their reader-facing names.
POPULATIONS: dict[str, str] = {
    "healthy": "healthy adults and athletes",
    "patients": "patients (e.g. heart failure, chronic lung disease)",
}


@dataclass(frozen=True)
class IsoTypicalError:
    """Typical test-retest error of a value read at the same load or time, % of the value."""

    pct: float
    provenance: str


#: Typical errors of submaximal values at the same load, per population (% of the value).
#: Recalled figures, marked "from memory"; confirm before relying on them clinically.
ISO_TYPICAL_ERRORS: dict[str, dict[str, IsoTypicalError]] = {
    "healthy": {
        C.HR_BPM: IsoTypicalError(2.0, "about 1-3 % for heart rate at a fixed submaximal load in healthy adults (from memory)"),
        C.VO2_ML_MIN: IsoTypicalError(4.0, "about 3-5 % for VO2 at a fixed submaximal load in healthy adults (from memory)"),
        C.VE_L_MIN: IsoTypicalError(6.0, "about 5-8 % for VE at a fixed submaximal load in healthy adults (from memory)"),
        "rer": IsoTypicalError(3.0, "about 2-4 % for RER at a fixed submaximal load in healthy adults (from memory)"),
    },
    "patients": {
        C.HR_BPM: IsoTypicalError(
            4.0, "about 3-5 % for heart rate at a fixed submaximal load in patients; larger than in healthy adults "
            "(medication timing, arrhythmia; from memory, no single source)"
        ),
        C.VO2_ML_MIN: IsoTypicalError(
            6.0, "about 5-7 % for VO2 at a fixed submaximal load in heart-failure patients (from memory, no single source)"
        ),
        C.VE_L_MIN: IsoTypicalError(
            9.0, "about 8-10 % for VE at a fixed submaximal load in heart-failure and lung patients (from memory, no "
            "single source)"
        ),
        "rer": IsoTypicalError(4.0, "about 3-5 % for RER at a fixed submaximal load in patients (from memory, no single source)"),
    },
}

#: Values compared at the iso load or time: column, label, unit, decimals.
ISO_VALUES: tuple[tuple[str, str, str, int], ...] = (
    (C.HR_BPM, "Heart rate", "beats/min", 0),
    (C.VO2_ML_MIN, "VO2", "mL/min", 0),
    (C.VE_L_MIN, "VE", "L/min", 1),
    ("rer", "RER", "", 2),
)


@dataclass(frozen=True)
class ProtocolFacts:
    """What decides whether two tests are comparable: mode, protocol text, ramp rate, steps."""

    mode: str | None = None
    protocol: str | None = None
    ramp_rate_per_min: float | None = None
    load: str | None = None  # "work_w" or "speed_kmh" (the ramp's load)
    steps: bool = False  # the load rises in steps (no lag correction for that reason)


def _ramp_rate(avg: pd.DataFrame, load: str) -> float | None:
    """Slope of the load (per min) over exercise up to its highest value, when it rises as a ramp."""
    if load not in avg.columns or C.T_S not in avg.columns:
        return None
    ex = avg.loc[avg[C.PHASE].astype(str) == "exercise"] if C.PHASE in avg.columns else avg
    t, y = ex[C.T_S].to_numpy(dtype=float), ex[load].to_numpy(dtype=float)
    ok = np.isfinite(t) & np.isfinite(y)
    t, y = t[ok], y[ok]
    if t.size < 8 or (np.diff(y) > 0).mean() < RAMP_RISING_SHARE:
        return None
    top = int(np.argmax(y)) + 1
    rate = float(np.polyfit(t[:top] / 60.0, y[:top], 1)[0]) if top >= 4 else 0.0
    return rate if rate > 0 else None


def protocol_facts(results: TestResults) -> ProtocolFacts:
    """The :class:`ProtocolFacts` of one analysed test (subject record, ``interpretation.lag`` or
    the averaged load when the lag was not corrected, notes)."""
    lag = results.interpretation.lag if results.interpretation is not None else None
    load = lag.load if lag is not None else (C.WORK_W if results.subject.mode == "cycle" else C.SPEED_KMH)
    rate = lag.ramp_rate_per_min if lag is not None else _ramp_rate(results.averaged, load)
    return ProtocolFacts(
        mode=results.subject.mode,
        protocol=results.subject.protocol,
        ramp_rate_per_min=rate if rate is not None and rate > 0 else None,
        load=load if rate is not None else None,
        steps=any(NOT_A_RAMP_NOTE in str(w) for w in results.warnings),
    )


def comparability_warnings(
    a: ProtocolFacts, b: ProtocolFacts, *, a_label: str = "the first test", b_label: str = "the second test"
) -> tuple[str, ...]:
    """Why two tests may not be comparable: mode, protocol text, ramp rate, ramp against steps.

    Parameters
    ----------
    a, b : ProtocolFacts
        Of the two tests (:func:`protocol_facts`).
    a_label, b_label : str, keyword-only
        How the warnings name the tests.

    Returns
    -------
    tuple of str
        Plain-language warnings, empty when nothing differs.

    Notes
    -----
    Ramp rates differ when the faster is more than :data:`RAMP_RATE_TOLERANCE_PCT` % above the
    slower. Changes between tests on different protocols mix the person's change with the
    protocol's effect (common practice; Buchfuhrer et al. 1983 for the ramp rate, from memory).

    Examples
    --------
    >>> base = ProtocolFacts("cycle", "ramp", 10.0, "work_w")
    >>> comparability_warnings(base, ProtocolFacts("cycle", "ramp", 12.0, "work_w"), a_label="baseline",
    ...                        b_label="week 12")[0][:60]
    'Ramp rates differ: 10 W/min in baseline, 12 W/min in week 12'
    """
    out: list[str] = []
    if a.mode and b.mode and a.mode != b.mode:
        out.append(
            f"Different modes: {a_label} on a {a.mode}, {b_label} on a {b.mode}. Peak VO2 is usually higher on a "
            "treadmill than on a cycle, so the change mixes the person's change with the mode's (common practice)."
        )
    if a.protocol and b.protocol and a.protocol.strip().lower() != b.protocol.strip().lower():
        out.append(f"Different protocols recorded: '{a.protocol}' ({a_label}) and '{b.protocol}' ({b_label}).")
    if a.mode == b.mode or not (a.mode and b.mode):
        rate_a, rate_b = a.ramp_rate_per_min, b.ramp_rate_per_min
        if rate_a is not None and rate_b is not None:
            low, high = sorted((rate_a, rate_b))
            if 100.0 * (high - low) / low > RAMP_RATE_TOLERANCE_PCT:
                unit = "W/min" if a.load == "work_w" else "km/h per min"
                digits = 0 if unit == "W/min" else 1
                out.append(
                    f"Ramp rates differ: {rate_a:.{digits}f} {unit} in {a_label}, {rate_b:.{digits}f} {unit} in {b_label} "
                    f"(more than {RAMP_RATE_TOLERANCE_PCT:g} % apart). A faster ramp raises the load reached and the "
                    "loads at the thresholds; compare VO2 and heart rate rather than loads (Buchfuhrer et al. 1983, "
                    "from memory)."
                )
        elif (rate_a is None and a.steps and rate_b is not None) or (rate_b is None and b.steps and rate_a is not None):
            steps, ramp = (a_label, b_label) if rate_a is None else (b_label, a_label)
            out.append(f"Different protocols: {ramp} is a ramp, {steps} rises in steps; values at a given load differ between them.")
    return tuple(out)


@dataclass(frozen=True)
class IsoValue:
    """One value read in both tests at the same load (or time)."""

    column: str
    label: str
    unit: str
    value_a: float | None
    value_b: float | None
    change: float | None
    change_pct: float | None
    typical_error_pct: float
    beyond_typical_error: bool | None
    source: str


@dataclass(frozen=True)
class IsoComparison:
    """Values of two tests at the highest load both reached (cycle) or at the same exercise time."""

    basis: str  # "work_rate" or "time"
    level: float  # W (work_rate) or s since the start of exercise (time)
    level_unit: str
    values: tuple[IsoValue, ...]
    population: str
    note: str


def _exercise(frame: pd.DataFrame) -> pd.DataFrame:
    if C.PHASE in frame.columns:
        ex = frame.loc[frame[C.PHASE].astype(str) == "exercise"]
        if len(ex):
            return ex
    return frame


def _values_at(ex: pd.DataFrame, t_s: float) -> dict[str, float | None]:
    """Each compared value interpolated in the averaged exercise rows at ``t_s``."""
    t = ex[C.T_S].to_numpy(dtype=float)
    out: dict[str, float | None] = {}
    for col, *_ in ISO_VALUES:
        if col == "rer" and col not in ex.columns and {C.VO2_ML_MIN, C.VCO2_ML_MIN} <= set(ex.columns):
            y = (ex[C.VCO2_ML_MIN] / ex[C.VO2_ML_MIN]).to_numpy(dtype=float)
        elif col in ex.columns:
            y = ex[col].to_numpy(dtype=float)
        else:
            out[col] = None
            continue
        ok = np.isfinite(t) & np.isfinite(y)
        out[col] = float(np.interp(t_s, t[ok], y[ok])) if ok.sum() >= 2 and t[ok].min() <= t_s <= t[ok].max() else None
    return out


def _first_time_at(ex: pd.DataFrame, col: str, level: float) -> float:
    t = ex[C.T_S].to_numpy(dtype=float)
    load = ex[col].to_numpy(dtype=float)
    ok = np.isfinite(t) & np.isfinite(load)
    t, load = t[ok], load[ok]
    hits = np.flatnonzero(load >= level)
    i = int(hits[0])
    if i == 0 or load[i - 1] >= level:
        return float(t[i])
    return float(t[i - 1] + (level - load[i - 1]) / (load[i] - load[i - 1]) * (t[i] - t[i - 1]))


def iso_comparison(avg_a: pd.DataFrame, avg_b: pd.DataFrame, *, population: str = "healthy") -> IsoComparison | None:
    """HR, VO2, VE and RER of two tests at the highest work rate both reached (iso-work rate), or
    at the same time since the start of exercise when a test has no work rate (isotime).

    Parameters
    ----------
    avg_a, avg_b : pandas.DataFrame
        Averaged frames of the two tests (``t_s``, ``phase``, ``work_w`` on a cycle, VO2, VCO2,
        VE, HR, ``rer``).
    population : {'healthy', 'patients'}, keyword-only
        Which typical errors (:data:`ISO_TYPICAL_ERRORS`) judge the change.

    Returns
    -------
    IsoComparison or None
        ``None`` when either test has no exercise rows. A change is beyond the typical error when
        it lies outside ± 1.96 × √2 × TE of the first test's value (Hopkins 2000, from memory).

    References
    ----------
    Hopkins WG. Measures of reliability in sports medicine and science. Sports Med 2000;30:1-15
    (from memory).

    Examples
    --------
    >>> t = np.arange(0.0, 600.0, 10.0)
    >>> a = pd.DataFrame({"t_s": t, "phase": "exercise", "work_w": 20 + t / 6, "hr_bpm": 80 + t / 6,
    ...                   "vo2_ml_min": 500 + 10 * t / 6, "vco2_ml_min": 450 + 10 * t / 6, "ve_l_min": 15 + t / 20})
    >>> b = a.assign(work_w=20 + t / 5, hr_bpm=70 + t / 6)
    >>> iso = iso_comparison(a, b)
    >>> iso.basis, round(iso.level, 1), [round(v.change, 1) for v in iso.values][:1]
    ('work_rate', 118.3, [-26.4])
    """
    require(population in ISO_TYPICAL_ERRORS, "population", f"one of {sorted(ISO_TYPICAL_ERRORS)}", population)
    ex_a, ex_b = _exercise(avg_a), _exercise(avg_b)
    if len(ex_a) == 0 or len(ex_b) == 0:
        return None

    def top(ex: pd.DataFrame) -> float | None:
        if C.WORK_W not in ex.columns:
            return None
        w = ex[C.WORK_W].to_numpy(dtype=float)
        w = w[np.isfinite(w)]
        return float(w.max()) if w.size and w.max() > 0 else None

    top_a, top_b = top(ex_a), top(ex_b)
    if top_a is not None and top_b is not None:
        level = min(top_a, top_b)
        t_a, t_b = _first_time_at(ex_a, C.WORK_W, level), _first_time_at(ex_b, C.WORK_W, level)
        basis, unit = "work_rate", "W"
        note = (
            f"At {level:.0f} W, the highest work rate both tests reached: values of the averaged data where each "
            "test first reached it."
        )
    else:
        start_a, start_b = float(ex_a[C.T_S].min()), float(ex_b[C.T_S].min())
        level = min(float(ex_a[C.T_S].max()) - start_a, float(ex_b[C.T_S].max()) - start_b)
        t_a, t_b = start_a + level, start_b + level
        basis, unit = "time", "s"
        note = (
            f"At {level:.0f} s into exercise (isotime: the shorter test's length, as there is no work rate in both "
            "tests): values of the averaged data."
        )
    va, vb = _values_at(ex_a, t_a), _values_at(ex_b, t_b)
    errors = ISO_TYPICAL_ERRORS[population]
    values = []
    for col, label, u, _digits in ISO_VALUES:
        a_v, b_v = va[col], vb[col]
        te = errors[col]
        if a_v is None or b_v is None or a_v == 0:
            change = pct = None
            beyond = None
        else:
            change = b_v - a_v
            pct = 100.0 * change / a_v
            half = 1.96 * math.sqrt(2.0) * te.pct / 100.0 * abs(a_v)
            beyond = abs(change) > half
        values.append(IsoValue(col, label, u, a_v, b_v, change, pct, te.pct, beyond, te.provenance))
    return IsoComparison(basis, level, unit, tuple(values), population, note)


def suggested_population(flag_codes: Sequence[Iterable[str]]) -> tuple[str, str]:
    """The population whose typical errors fit a person's tests, with the reason (the reviewer
    may choose otherwise).

    ``flag_codes`` holds the flag codes of each test. ``patients`` when any test carries a
    ``vo2peak_low``, ``ve_vco2_slope_high`` or ``oscillatory_ventilation`` flag
    (docs/interpretation.md), else ``healthy``.

    Examples
    --------
    >>> suggested_population([[], ["ve_vco2_slope_high"]])[0]
    'patients'
    """
    codes = {"vo2peak_low", "ve_vco2_slope_high", "oscillatory_ventilation"}
    for test_codes in flag_codes:
        found = sorted(set(test_codes) & codes)
        if found:
            return "patients", f"a test carries the flag(s) {', '.join(found)}"
    return "healthy", "no test carries a low-VO2peak, high-VE/VCO2-slope or oscillation flag"


#: Typical errors of the followed results per population (:data:`analysis.progress.TYPICAL_ERRORS`
#: is the healthy set). Recalled figures, marked "from memory".
TYPICAL_ERRORS_BY_POPULATION: dict[str, dict[str, TypicalError]] = {
    "healthy": dict(TYPICAL_ERRORS),
    "patients": {
        "vo2_peak_ml_min": TypicalError(
            "vo2_peak_ml_min", 6.0,
            "about 5-7 % for peak VO2 on repeated tests in chronic heart failure, larger than in healthy adults "
            "(from memory; Bensimhon et al., Chest 2008, reproducibility in HF-ACTION)",
        ),
        "vo2_peak_ml_kg_min": TypicalError(
            "vo2_peak_ml_kg_min", 6.0, "as peak VO2 in heart failure (about 5-7 %, from memory); body-mass changes add to it",
        ),
        "vt1_vo2_ml_min": TypicalError(
            "vt1_vo2_ml_min", 12.0,
            "about 10-15 % for VO2 at VT1 in heart failure: the threshold is harder to read and sometimes not found "
            "(from memory, no single source)",
        ),
        "ve_vco2_slope_whole_exercise": TypicalError(
            "ve_vco2_slope_whole_exercise", 7.0,
            "about 6-8 % for the VE/VCO2 slope on repeated tests in heart failure (from memory, no single source)",
        ),
        "o2_pulse_peak_ml_beat": TypicalError(
            "o2_pulse_peak_ml_beat", 7.0,
            "about 7 % for peak O2 pulse in patients, combining the peak VO2 and peak heart-rate errors (from memory)",
        ),
    },
}
