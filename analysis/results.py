"""The results of one analysis (:class:`TestResults`) and their stable JSON form.

Every key of :meth:`TestResults.to_json_dict` is documented in ``docs/results.md`` with its unit
and method; the ``methods`` map inside the JSON names the method behind every number.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field, is_dataclass
from typing import Any

import numpy as np
import pandas as pd

from analysis.indices.point_values import PointValues
from analysis.maximality import MaximalityReport
from analysis.settings import AnalysisSettings
from analysis.thresholds.results import ThresholdPick, ThresholdReport
from analysis.zones import ZoneSet

#: Version of the JSON layout of :meth:`TestResults.to_json_dict`.
RESULTS_SCHEMA_VERSION = 1

#: Cautions that travel with every result (shown by the CLI, the dashboard and reports).
CAUTIONS: tuple[str, ...] = (
    "Tidemark is not a medical device. Values are estimates computed by the stated published "
    "methods from the data supplied.",
    "Predicted values, classes, estimated cardiac output and venous values are population or "
    "model estimates, not measurements.",
    "Exercise testing, its supervision and the interpretation of these results belong to "
    "qualified staff working under local protocols.",
)

#: Stable top-level keys (tests assert that they are always present).
TOP_LEVEL_KEYS: tuple[str, ...] = (
    "schema_version",
    "subject",
    "vo2_peak_ml_min",
    "vo2_peak_ml_kg_min",
    "rer_peak",
    "hr_peak_bpm",
    "ve_vco2_slope",
    "ve_vco2_slope_to_vt2",
    "ve_vco2_slope_whole_exercise",
    "oues",
    "o2_pulse_peak_ml_beat",
    "vt1",
    "vt2",
    "peak",
    "maximality",
    "indices",
    "predicted",
    "classes",
    "zones",
    "phases",
    "thresholds",
    "averaging",
    "breaths",
    "excluded_breaths",
    "oxygen",
    "warnings",
    "cautions",
    "methods",
    "settings",
)


def json_safe(value: Any) -> Any:
    """Plain JSON types: NaN/inf -> ``None``, numpy scalars -> Python, dataclasses -> dicts."""
    kind = type(value)  # exact built-in types first: they are most of a results tree
    if kind is float:
        return value if math.isfinite(value) else None
    if kind is str or kind is int or kind is bool or value is None:
        return value
    if kind is dict:
        return {str(k): json_safe(v) for k, v in value.items()}
    if kind is list:
        return [json_safe(v) for v in value]
    if is_dataclass(value) and not isinstance(value, type):
        value = asdict(value)
    if isinstance(value, dict):
        return {str(k): json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_safe(v) for v in value]
    if isinstance(value, np.ndarray):
        return [json_safe(v) for v in value.tolist()]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        f = float(value)
        return f if math.isfinite(f) else None
    return value


def _records(frame: pd.DataFrame) -> list[dict[str, Any]]:
    """``frame.to_dict(orient="records")`` with Python values, built column-wise (quicker)."""
    names = [str(c) for c in frame.columns]
    columns = [frame[c].tolist() for c in frame.columns]
    return [dict(zip(names, row, strict=True)) for row in zip(*columns, strict=True)]


def threshold_json(pick: ThresholdPick | None, point: PointValues | None) -> dict[str, Any] | None:
    """A threshold as reported: the pick's method and source plus the values read at it."""
    if pick is None or point is None:
        return None
    return json_safe(
        {
            "time_s": point.t_s,
            "vo2_ml_min": point.vo2_ml_min,
            "vo2_ml_kg_min": point.vo2_ml_kg_min,
            "pct_vo2_peak": point.pct_vo2_peak,
            "hr_bpm": point.hr_bpm,
            "work_w": point.work_w,
            "speed_kmh": point.speed_kmh,
            "grade_pct": point.grade_pct,
            "rer": point.rer,
            "ve_l_min": point.ve_l_min,
            "method": pick.method,
            "source": pick.source,
            "confidence": pick.confidence,
            "note": pick.note,
            "index": int(pick.index),
        }
    )


def point_json(point: PointValues | None) -> dict[str, Any] | None:
    """Values at a point (peak) with ``time_s`` as the time key."""
    if point is None:
        return None
    d = point.to_dict()
    d["time_s"] = d.pop("t_s")
    return json_safe(d)


@dataclass
class TestResults:
    """Everything :func:`analysis.pipeline.analyze_session` computed for one session.

    Attributes
    ----------
    source_name : str
        File name of the session.
    meta : dict
        Metadata used (the session's, with the settings' overrides applied).
    mode : str or None
        ``"cycle"`` or ``"treadmill"`` (from metadata, else from the load columns).
    settings : AnalysisSettings
    averaged : pandas.DataFrame
        Averaged breaths (with ``phase``), index 0..n-1; thresholds index into it.
    phases : pandas.Series
        Phase of every breath used (same index as the cleaned breaths).
    phase_times : dict
        ``phase -> {"start_s", "end_s"}``.
    thresholds : ThresholdReport
    excluded_breaths : pandas.DataFrame
        ``source_row, t_s, column, value, reason, by`` (``by`` is ``"auto"`` or ``"reviewer"``).
    breaths_total, breaths_used : int
    peak : PointValues
    vt1, vt2 : PointValues or None
        Values read at the thresholds in use.
    maximality : MaximalityReport
    rer_peak, hr_peak_bpm : float or None
    indices : dict
        Scalar indices (see ``docs/results.md``).
    predicted : dict
        Reference values and % predicted.
    classes : dict
        ``{"weber": ..., "ventilatory": ...}``.
    zones : ZoneSet
    oxygen : dict or None
        :meth:`analysis.oxygen.OxygenComparison.to_json_dict` when Hb was known.
    methods : dict
        Result key -> method text.
    warnings : list of str
    """

    __test__ = False  # not a pytest test class despite its name

    source_name: str
    meta: dict[str, Any]
    mode: str | None
    settings: AnalysisSettings
    averaged: pd.DataFrame
    phases: pd.Series
    phase_times: dict[str, dict[str, float]]
    thresholds: ThresholdReport
    excluded_breaths: pd.DataFrame
    breaths_total: int
    breaths_used: int
    peak: PointValues
    vt1: PointValues | None
    vt2: PointValues | None
    maximality: MaximalityReport
    rer_peak: float | None
    hr_peak_bpm: float | None
    indices: dict[str, Any] = field(default_factory=dict)
    predicted: dict[str, Any] = field(default_factory=dict)
    classes: dict[str, Any] = field(default_factory=dict)
    zones: ZoneSet = field(default_factory=ZoneSet)
    oxygen: dict[str, Any] | None = None
    methods: dict[str, str] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)

    @property
    def vo2_peak_ml_min(self) -> float:
        return self.peak.vo2_ml_min

    @property
    def vo2_peak_ml_kg_min(self) -> float | None:
        return self.peak.vo2_ml_kg_min

    def to_json_dict(self) -> dict[str, Any]:
        """JSON-safe dict with the stable keys :data:`TOP_LEVEL_KEYS` (documented in docs/results.md)."""
        excluded = self.excluded_breaths
        subject = {
            k: self.meta.get(k)
            for k in ("subject_id", "sex", "age_y", "height_cm", "body_mass_kg", "hb_g_dl", "test_date", "protocol")
            if self.meta.get(k) is not None
        }
        subject["mode"] = self.mode
        subject["source_name"] = self.source_name
        out = {
            "schema_version": RESULTS_SCHEMA_VERSION,
            "subject": subject,
            "vo2_peak_ml_min": self.peak.vo2_ml_min,
            "vo2_peak_ml_kg_min": self.peak.vo2_ml_kg_min,
            "rer_peak": self.rer_peak,
            "hr_peak_bpm": self.hr_peak_bpm,
            "ve_vco2_slope": self.indices.get("ve_vco2_slope"),
            "ve_vco2_slope_to_vt2": self.indices.get("ve_vco2_slope_to_vt2"),
            "ve_vco2_slope_whole_exercise": self.indices.get("ve_vco2_slope_whole_exercise"),
            "oues": self.indices.get("oues"),
            "o2_pulse_peak_ml_beat": self.indices.get("o2_pulse_peak_ml_beat"),
            "vt1": threshold_json(self.thresholds.vt1, self.vt1),
            "vt2": threshold_json(self.thresholds.vt2, self.vt2),
            "peak": point_json(self.peak),
            "maximality": self.maximality.to_dict(),
            "indices": dict(self.indices),
            "predicted": dict(self.predicted),
            "classes": dict(self.classes),
            "zones": self.zones.to_dict(),
            "phases": self.phase_times,
            "thresholds": self.thresholds.to_dict(),
            "averaging": {**self.settings.averaging.to_dict(), "label": self.settings.averaging.label},
            "breaths": {
                "total": self.breaths_total,
                "used": self.breaths_used,
                "excluded": len(excluded),
            },
            "excluded_breaths": _records(excluded),
            "oxygen": self.oxygen,
            "warnings": list(self.warnings),
            "cautions": list(CAUTIONS),
            "methods": dict(self.methods),
            "settings": self.settings.to_dict(),
        }
        return json_safe(out)
