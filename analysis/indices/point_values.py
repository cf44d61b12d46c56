"""Values read from the averaged data at one point (a threshold or the peak)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import pandas as pd

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.numeric import finite_or_none
from analysis.records import described


@dataclass(frozen=True)
class PointValues:
    """What the averaged data show at one row.

    Attributes
    ----------
    index : int
        Row position label in the averaged frame (0..n-1 in the pipeline).
    t_s : float
        Time, s.
    vo2_ml_min : float
        O2 uptake, mL/min.
    vo2_ml_kg_min : float or None
        O2 uptake per kg, mL/kg/min (``None`` without body mass).
    pct_vo2_peak : float or None
        VO2 as % of VO2peak (``None`` without VO2peak).
    hr_bpm, work_w, speed_kmh, grade_pct : float or None
        Heart rate (beats/min), work rate (W), treadmill speed (km/h) and grade (%) when
        recorded.
    rer : float
        Respiratory exchange ratio VCO2/VO2 (dimensionless).
    ve_l_min : float
        Minute ventilation, L/min.
    """

    index: int = described(description="row of the averaged data the values are read at")
    t_s: float = described(unit="s", key="time_s", description="time of that row")
    vo2_ml_min: float = described(unit="mL/min", description="O2 uptake")
    vo2_ml_kg_min: float | None = described(unit="mL/kg/min", description="O2 uptake per kg body mass (null without body mass)")
    pct_vo2_peak: float | None = described(unit="%", description="O2 uptake as % of VO2peak")
    hr_bpm: float | None = described(unit="beats/min", description="heart rate")
    work_w: float | None = described(unit="W", description="work rate (cycle)")
    speed_kmh: float | None = described(unit="km/h", description="treadmill speed")
    grade_pct: float | None = described(unit="%", description="treadmill grade")
    rer: float | None = described(description="respiratory exchange ratio VCO2/VO2")
    ve_l_min: float | None = described(unit="L/min", description="minute ventilation")


def _opt(row: pd.Series, column: str) -> float | None:
    return finite_or_none(row[column]) if column in row.index else None


def point_values(
    avg: pd.DataFrame,
    index: Any,
    *,
    vo2_peak_ml_min: float | None,
    body_mass_kg: float | None,
) -> PointValues:
    """Read time, VO2 (absolute, per kg, % of peak), HR, work/speed/grade, RER and VE at a row.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged data in canonical columns (:mod:`analysis.columns`).
    index : object
        Row label in ``avg`` (as given by ``ThresholdPick.index`` or the peak's index).
    vo2_peak_ml_min : float or None, keyword-only
        VO2peak, mL/min, for ``pct_vo2_peak``.
    body_mass_kg : float or None, keyword-only
        Body mass, kg, for ``vo2_ml_kg_min``.

    Returns
    -------
    PointValues

    Raises
    ------
    InvalidParameter
        ``index`` is not a row of ``avg``.

    Notes
    -----
    ``RER = VCO2 / VO2``; ``pct_vo2_peak = 100 * VO2 / VO2peak``; ``vo2_ml_kg_min = VO2 / mass``
    (common practice).
    """
    if index not in avg.index:
        raise InvalidParameter("index", "a row label of the averaged data", index)
    row = avg.loc[index]
    if isinstance(row, pd.DataFrame):  # duplicated label: take the first
        row = row.iloc[0]
    vo2 = float(row[C.VO2_ML_MIN])
    vco2 = _opt(row, C.VCO2_ML_MIN)
    return PointValues(
        index=int(index),
        t_s=float(row[C.T_S]),
        vo2_ml_min=vo2,
        vo2_ml_kg_min=vo2 / body_mass_kg if body_mass_kg else None,
        pct_vo2_peak=100.0 * vo2 / vo2_peak_ml_min if vo2_peak_ml_min else None,
        hr_bpm=_opt(row, C.HR_BPM),
        work_w=_opt(row, C.WORK_W),
        speed_kmh=_opt(row, C.SPEED_KMH),
        grade_pct=_opt(row, C.GRADE_PCT),
        rer=vco2 / vo2 if vco2 is not None and vo2 > 0 else None,
        ve_l_min=_opt(row, C.VE_L_MIN),
    )
