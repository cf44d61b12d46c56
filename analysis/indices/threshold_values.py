"""Values read at VT1 and VT2: the step that turns a threshold pick into its result record."""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any, Literal

import pandas as pd

from analysis.indices.point_values import PointValues, point_values
from analysis.records import described


@dataclass(frozen=True)
class ThresholdResult:
    """VT1 or VT2 as reported: how it was placed, and the values read at it.

    The method fields (``method`` ... ``reason``) are the threshold pick's own
    (:class:`analysis.thresholds.ThresholdPick`), carried unchanged; the values are read from
    the averaged data at the pick by :func:`analysis.indices.threshold_values`.
    """

    kind: Literal["vt1", "vt2"] = described(description="`vt1` (gas-exchange threshold) or `vt2` (respiratory compensation point)")
    t_s: float = described(unit="s", key="time_s", description="time of the threshold")
    vo2_ml_min: float = described(unit="mL/min", description="O2 uptake at the threshold")
    vo2_ml_kg_min: float | None = described(unit="mL/kg/min", description="`vo2_ml_min` per kg body mass (null without body mass)")
    pct_vo2_peak: float | None = described(unit="%", description="`vo2_ml_min` as % of `vo2_peak_ml_min`")
    hr_bpm: float | None = described(unit="beats/min", description="heart rate at the threshold")
    work_w: float | None = described(unit="W", description="work rate at the threshold (cycle)")
    speed_kmh: float | None = described(unit="km/h", description="treadmill speed at the threshold")
    grade_pct: float | None = described(unit="%", description="treadmill grade at the threshold")
    rer: float | None = described(description="respiratory exchange ratio VCO2/VO2 at the threshold")
    ve_l_min: float | None = described(unit="L/min", description="minute ventilation at the threshold")
    method: str = described(description="`consensus`, a single method's name, or `manual`")
    source: Literal["auto", "manual"] = described(description="`auto` (detected) or `manual` (placed by the reviewer)")
    confidence: Literal["high", "moderate", "low"] = described(
        description="`high` (3 or more agreeing methods, or the reviewer's pick), `moderate` (2, or one "
        "method's own pick), `low` (1)"
    )
    note: str = described(description="which methods agreed, or the reviewer's placement and reason")
    index: int = described(description="row of the averaged data nearest the threshold")
    ci90_vo2_ml_min: tuple[float, float] | None = described(
        default=None, unit="mL/min", description="90 % interval of the threshold's VO2 (null when not estimated)"
    )
    ci90_t_s: tuple[float, float] | None = described(
        default=None, unit="s", description="90 % interval of the threshold's time (null when not estimated)"
    )
    determinable: bool = described(
        default=True, description="false when the interval is too wide for the threshold to be read"
    )
    reason: str = described(default="", description="why the threshold is not determinable (empty otherwise)")
    notes: tuple[str, ...] = described(
        default=(), description="notes on how the values were read (e.g. a typed time moved to a data point)"
    )


_RESULT_FIELDS = frozenset(f.name for f in fields(ThresholdResult))
_VALUE_FIELDS = frozenset(f.name for f in fields(PointValues))


def threshold_result(pick: Any, at: PointValues) -> ThresholdResult:
    """One record from a threshold pick and the values read at it.

    Every field of the pick that the result record declares (method, source, confidence,
    note, intervals, ...) is carried unchanged; the values come from ``at``.
    """
    carried = {f.name: getattr(pick, f.name) for f in fields(pick) if f.name in _RESULT_FIELDS and f.name not in _VALUE_FIELDS}
    values = {name: getattr(at, name) for name in _VALUE_FIELDS if name in _RESULT_FIELDS and name != "index"}
    return ThresholdResult(**{**carried, **values, "index": int(pick.index)})


def threshold_values(
    avg: pd.DataFrame, pick: Any | None, *, vo2_peak_ml_min: float | None, body_mass_kg: float | None
) -> ThresholdResult | None:
    """The result record of one threshold: its pick with the values read at it.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths, index 0..n-1 (the pick's ``index`` is a row of it).
    pick : ThresholdPick or None
        The threshold in use (consensus or the reviewer's); ``None`` gives ``None``.
    vo2_peak_ml_min, body_mass_kg : float or None, keyword-only
        For ``pct_vo2_peak`` and ``vo2_ml_kg_min``.

    Returns
    -------
    ThresholdResult or None
    """
    if pick is None:
        return None
    at = point_values(avg, avg.index[int(pick.index)], vo2_peak_ml_min=vo2_peak_ml_min, body_mass_kg=body_mass_kg)
    return threshold_result(pick, at)
