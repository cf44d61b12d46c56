"""One person across tests: change from baseline, typical-error bands and aligned series.

Pure functions on result records and pandas frames: the inputs are the typed results of each
test (:class:`analysis.results.TestResults`; a stored version is read back with
:func:`analysis.results.results_from_json`) and, for overlays, the averaged breath frames.
Nothing here reads a file or a database.

Typical (test-retest) errors are kept in :data:`TYPICAL_ERRORS` with their provenance, so the
page and the report can state the figure used and where it comes from.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter, require

if TYPE_CHECKING:
    from analysis.results import TestResults


@dataclass(frozen=True)
class TypicalError:
    """Test-retest typical error of one result, as a percentage of the value.

    Attributes
    ----------
    metric : str
        Key in :data:`METRICS`.
    pct : float
        Typical error (within-subject SD of repeated tests) in % of the value.
    provenance : str
        Where the figure comes from, including "from memory" when it was recalled rather
        than looked up.
    """

    metric: str
    pct: float
    provenance: str


@dataclass(frozen=True)
class Metric:
    """A result followed across tests: its label, unit and how it is read from the result record."""

    key: str
    label: str
    unit: str
    read: Callable[[TestResults], float | None]


def _vt1_vo2(results: TestResults) -> float | None:
    return None if results.vt1 is None else results.vt1.vo2_ml_min


#: Results followed on the Progress page. ``read`` takes the value from the result record.
METRICS: dict[str, Metric] = {
    m.key: m
    for m in (
        Metric("vo2_peak_ml_min", "VO2peak", "mL/min", lambda r: r.vo2_peak_ml_min),
        Metric("vo2_peak_ml_kg_min", "VO2peak per kg", "mL/kg/min", lambda r: r.vo2_peak_ml_kg_min),
        Metric("vt1_vo2_ml_min", "VO2 at VT1", "mL/min", _vt1_vo2),
        # One fixed span per metric: the whole-exercise slope exists for every test, while the
        # headline slope's span (to VT2, or the whole exercise without a VT2) can differ
        # between two tests of the same person.
        Metric(
            "ve_vco2_slope_whole_exercise", "VE/VCO2 slope (whole exercise)", "",
            lambda r: r.indices.ve_vco2_slope_whole_exercise,
        ),
        Metric("o2_pulse_peak_ml_beat", "Peak O2 pulse", "mL/beat", lambda r: r.indices.o2_pulse_peak_ml_beat),
    )
}

#: Typical test-retest error per followed result (% of the value). All recalled figures are
#: marked "from memory"; confirm against the source before relying on them clinically.
TYPICAL_ERRORS: dict[str, TypicalError] = {
    "vo2_peak_ml_min": TypicalError(
        "vo2_peak_ml_min",
        4.0,
        "about 3-5 % for VO2peak on repeated maximal tests in trained and untrained adults "
        "(from memory; midpoint used)",
    ),
    "vo2_peak_ml_kg_min": TypicalError(
        "vo2_peak_ml_kg_min",
        4.0,
        "as VO2peak (about 3-5 %, from memory); body-mass changes add to it",
    ),
    "vt1_vo2_ml_min": TypicalError(
        "vt1_vo2_ml_min",
        8.0,
        "about 6-10 % for VO2 at the first ventilatory threshold, larger than for VO2peak "
        "because the pick itself varies (from memory)",
    ),
    "ve_vco2_slope_whole_exercise": TypicalError(
        "ve_vco2_slope_whole_exercise",
        5.0,
        "about 4-6 % for the VE/VCO2 slope on repeated tests (from memory)",
    ),
    "o2_pulse_peak_ml_beat": TypicalError(
        "o2_pulse_peak_ml_beat",
        5.0,
        "about 5 % for peak O2 pulse, combining the VO2peak and peak heart-rate errors "
        "(from memory)",
    ),
}

#: How the band is built: a change between two tests has a SD of sqrt(2) x typical error,
#: and 1.96 of those SDs span 95 % (Hopkins WG, Measures of reliability in sports medicine
#: and science, Sports Med 2000;30:1-15 — from memory).
BAND_Z: float = 1.96
BAND_METHOD: str = (
    "baseline ± 1.96 × √2 × typical error (95 % limits for the change between two tests; "
    "Hopkins 2000, from memory)"
)


def metric_value(results: TestResults, metric: str) -> float | None:
    """Read one followed result from a result record.

    Parameters
    ----------
    results : TestResults
        The typed result of one test.
    metric : str
        A key of :data:`METRICS`.

    Returns
    -------
    float or None
        The value, or ``None`` when the test has no such result (e.g. no VT1 found).
    """
    require(metric in METRICS, "metric", f"one of {sorted(METRICS)}", metric)
    value = METRICS[metric].read(results)
    return None if value is None or not math.isfinite(value) else float(value)


@dataclass(frozen=True)
class TestRecord:
    """One stored test of a person: its id, date and typed result."""

    __test__ = False  # not a pytest class

    test_id: int
    test_date: str
    results: TestResults
    label: str = ""


#: Columns of :func:`progress_table`.
PROGRESS_COLUMNS: tuple[str, ...] = (
    "test_id",
    "test_date",
    "label",
    "metric",
    "metric_label",
    "unit",
    "value",
    "is_baseline",
    "change",
    "change_pct",
    "band_low",
    "band_high",
    "beyond_typical_error",
    "typical_error_pct",
)


def change_band(baseline: float, *, typical_error_pct: float, z: float = BAND_Z) -> tuple[float, float]:
    """Limits around a baseline within which a retest value is compatible with no real change.

    Parameters
    ----------
    baseline : float
        The baseline value (any unit).
    typical_error_pct : float
        Typical test-retest error in % of the value (> 0).
    z : float, default 1.96
        Width in standard deviations of the change (1.96 → 95 %).

    Returns
    -------
    (low, high) : tuple of float
        ``baseline ∓ z · √2 · TE``, with ``TE = typical_error_pct / 100 · |baseline|``.

    Notes
    -----
    The difference between two tests each carrying a typical error TE has a standard deviation
    of √2·TE, so ``z`` of those spans the chosen coverage.

    References
    ----------
    Hopkins WG. Measures of reliability in sports medicine and science. Sports Med
    2000;30:1-15 (from memory).

    Examples
    --------
    >>> low, high = change_band(3000.0, typical_error_pct=4.0)
    >>> round(low, 1), round(high, 1)
    (2667.4, 3332.6)
    """
    require(math.isfinite(baseline), "baseline", "a finite number", baseline)
    require(typical_error_pct > 0, "typical_error_pct", "a percentage above 0", typical_error_pct)
    require(z > 0, "z", "a positive number of standard deviations", z)
    half = z * math.sqrt(2.0) * typical_error_pct / 100.0 * abs(baseline)
    return baseline - half, baseline + half


def progress_table(
    tests: Sequence[TestRecord],
    *,
    baseline_test_id: int | None = None,
    metrics: Sequence[str] | None = None,
    typical_errors: Mapping[str, TypicalError] | None = None,
) -> pd.DataFrame:
    """Tidy table of each followed result per test, with the change from a baseline test.

    Parameters
    ----------
    tests : sequence of TestRecord
        The person's tests (any order; sorted by date, then id).
    baseline_test_id : int, optional
        The test every change is measured from. Default: the earliest test.
    metrics : sequence of str, optional
        Keys of :data:`METRICS` (default: all).
    typical_errors : mapping, optional
        Replacement typical errors (default :data:`TYPICAL_ERRORS`).

    Returns
    -------
    pandas.DataFrame
        Columns :data:`PROGRESS_COLUMNS`, one row per test and metric. ``change`` is in the
        metric's unit, ``change_pct`` in % of baseline; the band is the one of
        :func:`change_band`; ``beyond_typical_error`` is True when the value lies outside it.
        Values missing in a test, or a missing baseline value, give NaN changes.

    Raises
    ------
    InvalidParameter
        Unknown metric, empty ``tests``, or a ``baseline_test_id`` not among the tests.
    """
    require(len(tests) > 0, "tests", "at least one test", len(tests))
    metrics = list(metrics) if metrics is not None else list(METRICS)
    for m in metrics:
        require(m in METRICS, "metrics", f"keys of {sorted(METRICS)}", m)
    errors = dict(TYPICAL_ERRORS) | dict(typical_errors or {})
    ordered = sorted(tests, key=lambda t: (str(t.test_date), t.test_id))
    ids = [t.test_id for t in ordered]
    if baseline_test_id is None:
        baseline_test_id = ids[0]
    if baseline_test_id not in ids:
        raise InvalidParameter("baseline_test_id", f"one of the person's tests {ids}", baseline_test_id)
    baseline = next(t for t in ordered if t.test_id == baseline_test_id)

    rows: list[dict[str, Any]] = []
    for m in metrics:
        spec = METRICS[m]
        te = errors.get(m)
        base_value = metric_value(baseline.results, m)
        if base_value is not None and te is not None and base_value != 0:
            low, high = change_band(base_value, typical_error_pct=te.pct)
        else:
            low = high = math.nan
        for t in ordered:
            value = metric_value(t.results, m)
            v = math.nan if value is None else value
            if base_value is None or value is None:
                change = change_pct = math.nan
            else:
                change = v - base_value
                change_pct = 100.0 * change / base_value if base_value != 0 else math.nan
            beyond = bool(np.isfinite(low) and value is not None and not (low <= v <= high))
            rows.append(
                {
                    "test_id": t.test_id,
                    "test_date": str(t.test_date),
                    "label": t.label or str(t.test_date),
                    "metric": m,
                    "metric_label": spec.label,
                    "unit": spec.unit,
                    "value": v,
                    "is_baseline": t.test_id == baseline_test_id,
                    "change": change,
                    "change_pct": change_pct,
                    "band_low": low,
                    "band_high": high,
                    "beyond_typical_error": beyond,
                    "typical_error_pct": te.pct if te is not None else math.nan,
                }
            )
    return pd.DataFrame(rows, columns=list(PROGRESS_COLUMNS))


#: Overlay kinds for :func:`aligned_series`: (x column, y column, align time at exercise start?).
OVERLAYS: dict[str, tuple[str, str, bool]] = {
    "vo2_time": (C.T_S, C.VO2_ML_MIN, True),
    "vco2_vo2": (C.VO2_ML_MIN, C.VCO2_ML_MIN, False),
}


def exercise_start_s(frame: pd.DataFrame) -> float:
    """Time of the first exercise row (``phase == "exercise"``), else of the first row.

    Parameters
    ----------
    frame : pandas.DataFrame
        Breath or averaged frame with ``t_s`` and optionally ``phase``.

    Returns
    -------
    float
        Seconds, in the frame's own clock.
    """
    require(C.T_S in frame.columns and len(frame) > 0, "frame", "a non-empty frame with t_s", list(frame.columns))
    if C.PHASE in frame.columns:
        ex = frame.loc[frame[C.PHASE] == "exercise", C.T_S]
        if len(ex):
            return float(ex.min())
    return float(frame[C.T_S].min())


def aligned_series(frames: Mapping[str, pd.DataFrame], *, overlay: str = "vo2_time") -> pd.DataFrame:
    """Stack two or more tests into one tidy frame ready to overlay.

    Parameters
    ----------
    frames : mapping of label -> DataFrame
        Averaged (or breath) frames of each test, in canonical columns.
    overlay : {"vo2_time", "vco2_vo2"}
        ``vo2_time``: VO2 against time since the start of exercise (so tests with different
        rest periods line up); ``vco2_vo2``: VCO2 against VO2 (V-slope plane, no alignment).

    Returns
    -------
    pandas.DataFrame
        Columns ``test`` (label), ``x``, ``y``, ``phase`` (or empty). Rows with a missing x or
        y are left out (they cannot be drawn).
    """
    require(overlay in OVERLAYS, "overlay", f"one of {sorted(OVERLAYS)}", overlay)
    x_col, y_col, align = OVERLAYS[overlay]
    parts = []
    for label, frame in frames.items():
        require(
            x_col in frame.columns and y_col in frame.columns,
            "frames",
            f"frames with columns {x_col} and {y_col}",
            f"{label}: {list(frame.columns)}",
        )
        x = frame[x_col].astype(float)
        if align:
            x = x - exercise_start_s(frame)
        part = pd.DataFrame(
            {
                "test": label,
                "x": x.to_numpy(),
                "y": frame[y_col].astype(float).to_numpy(),
                "phase": frame[C.PHASE].astype(str).to_numpy() if C.PHASE in frame.columns else "",
            }
        )
        parts.append(part.dropna(subset=["x", "y"]))
    if not parts:
        return pd.DataFrame(columns=["test", "x", "y", "phase"])
    return pd.concat(parts, ignore_index=True)
