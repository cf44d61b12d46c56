"""Analysis settings: every choice a reviewer can make, frozen and JSON-round-trippable.

The JSON form (:meth:`AnalysisSettings.to_dict`) is what the store saves with each analysis and
what the dashboard keeps in its state, so it is versioned (``"version"``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields
from typing import Any

from analysis.breaths import DEFAULT_AVERAGING, AveragingSpec
from analysis.errors import InvalidParameter, require
from analysis.maximality import DEFAULT_PEAK_WINDOW_S, DEFAULT_PLATEAU_ML_MIN

#: Version of the JSON layout written by :meth:`AnalysisSettings.to_dict`.
SETTINGS_VERSION = 1

#: Default outlier test: 9-breath window, 3 local SDs (Lamarra et al. 1987, from memory).
DEFAULT_OUTLIER_WINDOW_BREATHS = 9
DEFAULT_OUTLIER_K_SD = 3.0


def _finite(name: str, value: Any, low: float, high: float, unit: str) -> float:
    try:
        f = float(value)
    except (TypeError, ValueError):
        raise InvalidParameter(name, f"a number from {low:g} to {high:g} {unit}".rstrip(), value) from None
    require(math.isfinite(f) and low <= f <= high, name, f"a number from {low:g} to {high:g} {unit}".rstrip(), value)
    return f


@dataclass(frozen=True)
class ThresholdOverride:
    """A reviewer's placement of VT1 or VT2: by time or by VO2 (exactly one), with a reason.

    Attributes
    ----------
    t_s : float or None
        Time of the threshold, s.
    vo2_ml_min : float or None
        VO2 at the threshold, mL/min.
    reason : str
        Why the reviewer moved it (kept in the audit trail and the report).
    """

    t_s: float | None = None
    vo2_ml_min: float | None = None
    reason: str = ""

    def __post_init__(self) -> None:
        require(
            (self.t_s is None) != (self.vo2_ml_min is None),
            "override",
            "exactly one of t_s or vo2_ml_min",
            {"t_s": self.t_s, "vo2_ml_min": self.vo2_ml_min},
        )
        if self.t_s is not None:
            object.__setattr__(self, "t_s", _finite("t_s", self.t_s, -86400, 86400, "s"))
        if self.vo2_ml_min is not None:
            object.__setattr__(self, "vo2_ml_min", _finite("vo2_ml_min", self.vo2_ml_min, 1, 10000, "mL/min"))
        require(isinstance(self.reason, str), "reason", "text", self.reason)

    def to_dict(self) -> dict[str, Any]:
        return {"t_s": self.t_s, "vo2_ml_min": self.vo2_ml_min, "reason": self.reason}

    @classmethod
    def from_dict(cls, data: Any) -> ThresholdOverride:
        require(isinstance(data, dict), "override", "a mapping with t_s or vo2_ml_min", data)
        unknown = set(data) - {"t_s", "vo2_ml_min", "reason"}
        require(not unknown, "override", "only the keys t_s, vo2_ml_min, reason", sorted(unknown))
        return cls(t_s=data.get("t_s"), vo2_ml_min=data.get("vo2_ml_min"), reason=str(data.get("reason") or ""))


#: Plausible ranges of the metadata a reviewer may override (common practice, generous).
_META_RANGES: dict[str, tuple[float, float, str]] = {
    "body_mass_kg": (20.0, 300.0, "kg"),
    "age_y": (5.0, 110.0, "years"),
    "height_cm": (100.0, 250.0, "cm"),
    "hb_g_dl": (3.0, 25.0, "g/dL"),
    "mvv_l_min": (10.0, 400.0, "L/min"),
    "fev1_l": (0.3, 8.0, "L"),
}


@dataclass(frozen=True)
class MetadataOverrides:
    """Values that replace (or fill in) the session's metadata for this analysis only.

    ``None`` means "use the session's own value". ``sex`` is ``'male'`` or ``'female'``;
    ``mode`` is ``'cycle'`` or ``'treadmill'``; ``beta_blocker`` is ``'yes'`` or ``'no'`` (the
    heart-rate criterion of maximality does not apply under beta-blockade).
    """

    body_mass_kg: float | None = None
    age_y: float | None = None
    sex: str | None = None
    height_cm: float | None = None
    hb_g_dl: float | None = None
    mvv_l_min: float | None = None
    fev1_l: float | None = None
    mode: str | None = None
    beta_blocker: str | None = None

    def __post_init__(self) -> None:
        from analysis.reference import mode_code
        from analysis.subject import reference_sex

        for name, (low, high, unit) in _META_RANGES.items():
            v = getattr(self, name)
            if v is not None:
                object.__setattr__(self, name, _finite(name, v, low, high, unit))
        if self.sex is not None:
            object.__setattr__(self, "sex", reference_sex(self.sex))
        if self.mode is not None:
            object.__setattr__(self, "mode", mode_code(self.mode))
        if self.beta_blocker is not None:
            object.__setattr__(self, "beta_blocker", yes_no(self.beta_blocker, name="beta_blocker"))

    def to_dict(self) -> dict[str, Any]:
        """Only the values that are set."""
        return {f.name: getattr(self, f.name) for f in fields(self) if getattr(self, f.name) is not None}

    @classmethod
    def from_dict(cls, data: Any) -> MetadataOverrides:
        require(isinstance(data, dict), "metadata", "a mapping", data)
        names = {f.name for f in fields(cls)}
        unknown = set(data) - names
        require(not unknown, "metadata", f"keys from {sorted(names)}", sorted(unknown))
        return cls(**data)

    def apply(self, meta: dict[str, Any]) -> dict[str, Any]:
        """A copy of ``meta`` with the set values replaced."""
        out = dict(meta)
        out.update(self.to_dict())
        return out


#: Spellings read as yes / no for a metadata flag such as ``beta_blocker`` (common practice).
YES_WORDS = frozenset({"yes", "y", "true", "1", "ja", "oui", "si", "sí"})
NO_WORDS = frozenset({"no", "n", "false", "0", "nein", "non"})


def yes_no(value: Any, *, name: str) -> str:
    """``'yes'`` or ``'no'`` from the usual spellings (also ``True`` / ``False``).

    Raises
    ------
    InvalidParameter
        Any other value, naming the key.
    """
    if isinstance(value, bool):
        return "yes" if value else "no"
    text = str(value).strip().lower()
    if text in YES_WORDS:
        return "yes"
    if text in NO_WORDS:
        return "no"
    raise InvalidParameter(name, "yes or no", value)


def _rows(name: str, values: Any) -> tuple[int, ...]:
    expected = "a list of whole source row numbers ≥ 1"
    if isinstance(values, (str, bytes)):
        raise InvalidParameter(name, expected, values)
    try:
        floats = [float(v) for v in values]
    except (TypeError, ValueError):
        raise InvalidParameter(name, expected, values) from None
    require(all(math.isfinite(v) and v >= 1 and v.is_integer() for v in floats), name, expected, values)
    return tuple(sorted({int(v) for v in floats}))


#: Reference sets of the interpretation's predicted values (analysis.interpretation.predicted).
REFERENCE_SET_CODES: tuple[str, ...] = ("friend2018", "hansen1984", "jones1985")
DEFAULT_REFERENCE_SET = "friend2018"


@dataclass(frozen=True)
class AnalysisSettings:
    """Everything that shapes one analysis of a session.

    Attributes
    ----------
    averaging : AveragingSpec
        How breaths are averaged (default :data:`analysis.breaths.DEFAULT_AVERAGING`).
    outlier_window_breaths : int
        Odd window of the automatic outlier test, breaths (default 9).
    outlier_k_sd : float
        Local SDs beyond which a breath is excluded automatically (default 3).
    excluded_rows : tuple of int
        Extra breaths the reviewer excluded (source rows of the original file).
    restored_rows : tuple of int
        Automatically excluded breaths the reviewer put back.
    vt1_override, vt2_override : ThresholdOverride or None
        Manual threshold placements.
    plateau_threshold_ml_min : float
        VO2 rise below which the last minute counts as a plateau (default 150 mL/min).
    peak_window_s : float
        Centred window over which the averaged VO2 and RER are meaned for peak values
        (default 30 s; 0 = the averaged rows as they are).
    metadata : MetadataOverrides
        Replacements for the session's body mass, age, sex, height, Hb, MVV, FEV1, mode.
    oxygen : dict
        Conditions for the oxygen-transport comparison, interpreted by :mod:`analysis.oxygen`
        (for example temperature and pH per state). Must be JSON-safe.
    reference_set : {"friend2018", "hansen1984", "jones1985"}
        The reference equations of the interpretation's predicted peak values (default
        FRIEND 2018); named beside every % predicted (:mod:`analysis.interpretation.predicted`).
    """

    averaging: AveragingSpec = DEFAULT_AVERAGING
    outlier_window_breaths: int = DEFAULT_OUTLIER_WINDOW_BREATHS
    outlier_k_sd: float = DEFAULT_OUTLIER_K_SD
    excluded_rows: tuple[int, ...] = ()
    restored_rows: tuple[int, ...] = ()
    vt1_override: ThresholdOverride | None = None
    vt2_override: ThresholdOverride | None = None
    plateau_threshold_ml_min: float = DEFAULT_PLATEAU_ML_MIN
    peak_window_s: float = DEFAULT_PEAK_WINDOW_S
    metadata: MetadataOverrides = field(default_factory=MetadataOverrides)
    oxygen: dict[str, Any] = field(default_factory=dict)
    reference_set: str = DEFAULT_REFERENCE_SET

    def __post_init__(self) -> None:
        require(isinstance(self.averaging, AveragingSpec), "averaging", "an AveragingSpec", self.averaging)
        w = self.outlier_window_breaths
        require(
            isinstance(w, int) and not isinstance(w, bool) and 5 <= w <= 51 and w % 2 == 1,
            "outlier_window_breaths",
            "an odd whole number of breaths from 5 to 51",
            w,
        )
        object.__setattr__(self, "outlier_k_sd", _finite("outlier_k_sd", self.outlier_k_sd, 1, 10, "SD"))
        object.__setattr__(self, "excluded_rows", _rows("excluded_rows", self.excluded_rows))
        object.__setattr__(self, "restored_rows", _rows("restored_rows", self.restored_rows))
        for name in ("vt1_override", "vt2_override"):
            v = getattr(self, name)
            require(v is None or isinstance(v, ThresholdOverride), name, "a ThresholdOverride or None", v)
        object.__setattr__(
            self,
            "plateau_threshold_ml_min",
            _finite("plateau_threshold_ml_min", self.plateau_threshold_ml_min, 10, 1000, "mL/min"),
        )
        object.__setattr__(self, "peak_window_s", _finite("peak_window_s", self.peak_window_s, 0, 120, "s"))
        require(isinstance(self.metadata, MetadataOverrides), "metadata", "a MetadataOverrides", self.metadata)
        require(isinstance(self.oxygen, dict), "oxygen", "a mapping of oxygen conditions", self.oxygen)
        require(self.reference_set in REFERENCE_SET_CODES, "reference_set", f"one of {', '.join(REFERENCE_SET_CODES)}", self.reference_set)

    def to_dict(self) -> dict[str, Any]:
        """JSON-safe dict with a ``version`` key; :meth:`from_dict` reads it back."""
        return {
            "version": SETTINGS_VERSION,
            "averaging": self.averaging.to_dict(),
            "outliers": {"window_breaths": self.outlier_window_breaths, "k_sd": self.outlier_k_sd},
            "excluded_rows": list(self.excluded_rows),
            "restored_rows": list(self.restored_rows),
            "vt1_override": self.vt1_override.to_dict() if self.vt1_override else None,
            "vt2_override": self.vt2_override.to_dict() if self.vt2_override else None,
            "plateau_threshold_ml_min": self.plateau_threshold_ml_min,
            "peak_window_s": self.peak_window_s,
            "metadata": self.metadata.to_dict(),
            "oxygen": dict(self.oxygen),
            # written only when changed, so settings saved before the field existed keep their form
            **({"reference_set": self.reference_set} if self.reference_set != DEFAULT_REFERENCE_SET else {}),
        }

    @classmethod
    def from_dict(cls, data: Any) -> AnalysisSettings:
        """Settings from :meth:`to_dict` output. Missing keys take their defaults.

        Raises
        ------
        InvalidParameter
            Unknown keys, a newer version than this Tidemark understands, or a bad value.
        """
        require(isinstance(data, dict), "settings", "a mapping", data)
        known = {
            "version", "averaging", "outliers", "excluded_rows", "restored_rows",
            "vt1_override", "vt2_override", "plateau_threshold_ml_min", "peak_window_s", "metadata", "oxygen",
            "reference_set",
        }
        unknown = set(data) - known
        require(not unknown, "settings", f"keys from {sorted(known)}", sorted(unknown))
        version = data.get("version", SETTINGS_VERSION)
        require(
            isinstance(version, int) and 1 <= version <= SETTINGS_VERSION,
            "version",
            f"a settings version from 1 to {SETTINGS_VERSION} (update Tidemark to read newer settings)",
            version,
        )
        outliers = data.get("outliers") or {}
        require(isinstance(outliers, dict), "outliers", "a mapping with window_breaths and k_sd", outliers)
        kw: dict[str, Any] = {}
        if data.get("averaging") is not None:
            kw["averaging"] = AveragingSpec.from_dict(data["averaging"])
        if "window_breaths" in outliers:
            kw["outlier_window_breaths"] = outliers["window_breaths"]
        if "k_sd" in outliers:
            kw["outlier_k_sd"] = outliers["k_sd"]
        for name in ("excluded_rows", "restored_rows"):
            if data.get(name) is not None:
                kw[name] = data[name]
        for name in ("vt1_override", "vt2_override"):
            if data.get(name) is not None:
                kw[name] = ThresholdOverride.from_dict(data[name])
        if data.get("plateau_threshold_ml_min") is not None:
            kw["plateau_threshold_ml_min"] = data["plateau_threshold_ml_min"]
        if data.get("peak_window_s") is not None:
            kw["peak_window_s"] = data["peak_window_s"]
        if data.get("metadata"):
            kw["metadata"] = MetadataOverrides.from_dict(data["metadata"])
        if data.get("oxygen"):
            kw["oxygen"] = dict(data["oxygen"])
        if data.get("reference_set") is not None:
            kw["reference_set"] = data["reference_set"]
        return cls(**kw)
