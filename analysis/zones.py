"""Three training zones bounded by VT1 and VT2 (two when VT2 is missing)."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Protocol

from analysis.errors import InvalidParameter
from analysis.records import described

#: Reader-facing method sentence (shown under ``methods``).
ZONES_METHOD = "three zones bounded by VT1 and VT2, values read from the averaged data (common practice)"
#: Added to it when the power/speed bounds at VT1 and VT2 are the ramp's steady-state equivalents.
ZONES_LAG_METHOD = (
    "; on a ramp the work-rate or speed bounds at VT1 and VT2 are the steady-state equivalents (load at the "
    "threshold minus ramp rate × VO2 mean response time, Whipp et al. 1981), heart rate and VO2 bounds as read"
)

#: ``ZoneSet.load_basis`` values.
LOAD_BASES = ("as_recorded", "steady_state_equivalent")


def zones_method(*, load_basis: str) -> str:
    """The reader-facing method sentence of zones made on ``load_basis`` (:data:`LOAD_BASES`)."""
    return ZONES_METHOD + (ZONES_LAG_METHOD if load_basis == "steady_state_equivalent" else "")


@dataclass(frozen=True)
class Zone:
    """One training zone. ``*_low`` is ``None`` for the open lower end of zone 1.

    Attributes
    ----------
    number : int
    name : str
    description : str
    hr_low_bpm, hr_high_bpm : float or None
        Heart rate, beats/min.
    work_low_w, work_high_w : float or None
        Work rate, W (cycle tests).
    speed_low_kmh, speed_high_kmh : float or None
        Treadmill speed, km/h.
    grade_low_pct, grade_high_pct : float or None
        Treadmill grade, %.
    vo2_low_ml_min, vo2_high_ml_min : float or None
        O2 uptake, mL/min.
    """

    number: int = described(description="1, 2 or 3")
    name: str = described(description="the zone's name")
    description: str = described(description="the zone in plain words")
    hr_low_bpm: float | None = described(default=None, unit="beats/min", description="lower heart rate (null: open end)")
    hr_high_bpm: float | None = described(default=None, unit="beats/min", description="upper heart rate")
    work_low_w: float | None = described(default=None, unit="W", description="lower work rate (cycle)")
    work_high_w: float | None = described(default=None, unit="W", description="upper work rate (cycle)")
    speed_low_kmh: float | None = described(default=None, unit="km/h", description="lower treadmill speed")
    speed_high_kmh: float | None = described(default=None, unit="km/h", description="upper treadmill speed")
    grade_low_pct: float | None = described(default=None, unit="%", description="lower treadmill grade")
    grade_high_pct: float | None = described(default=None, unit="%", description="upper treadmill grade")
    vo2_low_ml_min: float | None = described(default=None, unit="mL/min", description="lower O2 uptake")
    vo2_high_ml_min: float | None = described(default=None, unit="mL/min", description="upper O2 uptake")


@dataclass(frozen=True)
class ZoneSet:
    """The zones and a note on how they were made (or why fewer than three)."""

    zones: tuple[Zone, ...] = described(default=(), description="the zones, lowest first")
    note: str = described(default="", description="how the zones were made, or why fewer than three")
    load_basis: str = described(
        default="as_recorded",
        description="`steady_state_equivalent`: work-rate/speed bounds at VT1 and VT2 are lag-corrected "
        "(Whipp et al. 1981); `as_recorded`: read from the ramp as recorded",
    )


class ZoneBound(Protocol):
    """What a zone boundary is read from: a threshold's or the peak's values."""

    @property
    def vo2_ml_min(self) -> float: ...
    @property
    def hr_bpm(self) -> float | None: ...
    @property
    def work_w(self) -> float | None: ...
    @property
    def speed_kmh(self) -> float | None: ...
    @property
    def grade_pct(self) -> float | None: ...


def _between(number: int, name: str, description: str, low: ZoneBound | None, high: ZoneBound) -> Zone:
    def lo(attr: str) -> float | None:
        return getattr(low, attr) if low is not None else None

    return Zone(
        number=number,
        name=name,
        description=description,
        hr_low_bpm=lo("hr_bpm"),
        hr_high_bpm=high.hr_bpm,
        work_low_w=lo("work_w"),
        work_high_w=high.work_w,
        speed_low_kmh=lo("speed_kmh"),
        speed_high_kmh=high.speed_kmh,
        grade_low_pct=lo("grade_pct"),
        grade_high_pct=high.grade_pct,
        vo2_low_ml_min=lo("vo2_ml_min"),
        vo2_high_ml_min=high.vo2_ml_min,
    )


def training_zones(*, vt1: ZoneBound | None, vt2: ZoneBound | None, peak: ZoneBound) -> ZoneSet:
    """Training zones from the values read at VT1, VT2 and peak in the averaged data.

    Parameters
    ----------
    vt1, vt2 : ZoneBound or None, keyword-only
        Values at the thresholds (:func:`analysis.indices.point_values`).
    peak : ZoneBound, keyword-only
        The top of the test: the pipeline passes the peak HR and the highest load reached
        during exercise (with VO2peak).

    Returns
    -------
    ZoneSet
        Zone 1 "below VT1" (open lower end), zone 2 "VT1 to VT2", zone 3 "VT2 to peak". Without
        VT2: zone 1 and "VT1 to peak", with a note. Without VT1: no zones, with a note.

    Raises
    ------
    InvalidParameter
        VT2 at a lower VO2 than VT1.

    Notes
    -----
    The three-zone model anchors intensity to the two ventilatory thresholds (common practice).
    Ranges are read on a ramp, where HR and work rate at a given VO2 differ from steady
    exercise (VO2 lags the ramp), so they are starting points for a coach, not prescriptions.

    References
    ----------
    Seiler KS, Kjerland GØ. Quantifying training intensity distribution in elite endurance
    athletes: is there evidence for an "optimal" distribution? Scand J Med Sci Sports
    2006;16:49-56 (three-zone model by ventilatory thresholds, from memory).
    """
    if vt1 is None:
        return ZoneSet((), "VT1 was not identified, so training zones cannot be given.")
    if vt2 is not None and vt2.vo2_ml_min < vt1.vo2_ml_min:
        raise InvalidParameter("vt2", f"a VO2 above VT1 ({vt1.vo2_ml_min:.0f} mL/min)", vt2.vo2_ml_min)
    z1 = _between(1, "Zone 1 (below VT1)", "Easy, sustained aerobic work: below the first ventilatory threshold.", None, vt1)
    if vt2 is None:
        z2 = _between(2, "Zone 2 (above VT1)", "Above the first threshold, up to peak; VT2 unknown.", vt1, peak)
        return ZoneSet((z1, z2), "VT2 was not identified, so two zones are given (below and above VT1).")
    z2 = _between(2, "Zone 2 (VT1 to VT2)", "Moderate to hard, between the two ventilatory thresholds.", vt1, vt2)
    z3 = _between(3, "Zone 3 (above VT2)", "Severe intensity: above the respiratory compensation point, up to peak.", vt2, peak)
    return ZoneSet((z1, z2, z3), "Three zones bounded by VT1 and VT2 from the averaged ramp data.")


def lag_corrected_zones(
    zones: ZoneSet, *, load: str, vt1_load: float | None, vt2_load: float | None, ramp_rate_per_min: float,
    mean_response_time_s: float,
) -> ZoneSet:
    """The zones with their work-rate (``load='work_w'``) or speed (``'speed_kmh'``) bounds at VT1
    and VT2 replaced by the steady-state equivalents of a ramp.

    On a ramp VO2 trails the load by the mean response time (MRT), so the load shown at a
    threshold is higher than the constant load that gives the same VO2 in steady exercise:
    ``load - ramp rate × MRT``. Heart rate and VO2 bounds stay as read; the top of zone 3 stays
    the highest load reached.

    Parameters
    ----------
    zones : ZoneSet
        From :func:`training_zones`.
    load : {'work_w', 'speed_kmh'}, keyword-only
    vt1_load, vt2_load : float or None, keyword-only
        Steady-state equivalent loads at VT1 and VT2 (W or km/h); ``None`` keeps the bound.
    ramp_rate_per_min, mean_response_time_s : float, keyword-only
        For the note (W/min or km/h per min; s).

    Returns
    -------
    ZoneSet
        With ``load_basis='steady_state_equivalent'`` and a note saying so.

    References
    ----------
    Whipp BJ, Davis JA, Torres F, Wasserman K. A test to determine parameters of aerobic function
    during exercise. J Appl Physiol 1981;50:217-221 (from memory).

    Examples
    --------
    >>> z = ZoneSet((Zone(1, "Zone 1", "", work_high_w=180.0), Zone(2, "Zone 2", "", work_low_w=180.0, work_high_w=250.0)))
    >>> out = lag_corrected_zones(z, load="work_w", vt1_load=165.0, vt2_load=None, ramp_rate_per_min=25.0,
    ...                           mean_response_time_s=36.0)
    >>> [(x.work_low_w, x.work_high_w) for x in out.zones], out.load_basis
    ([(None, 165.0), (165.0, 250.0)], 'steady_state_equivalent')
    """
    if not zones.zones or (vt1_load is None and vt2_load is None):
        return zones
    stem = {"work_w": "work", "speed_kmh": "speed"}.get(load)
    if stem is None:
        raise InvalidParameter("load", "'work_w' or 'speed_kmh'", load)
    low, high = f"{stem}_low_{load.split('_')[-1]}", f"{stem}_high_{load.split('_')[-1]}"
    # zone 1 tops at VT1; zone 2 from VT1 (to VT2 when three zones); zone 3 from VT2
    bounds: dict[int, dict[str, float | None]] = {1: {high: vt1_load}, 2: {low: vt1_load}}
    if len(zones.zones) == 3:
        bounds[2][high] = vt2_load
        bounds[3] = {low: vt2_load}
    out = []
    for z in zones.zones:
        change = {k: v for k, v in bounds.get(z.number, {}).items() if v is not None}
        out.append(replace(z, **change))  # type: ignore[arg-type]
    unit = "W" if load == "work_w" else "km/h"
    digits = 0 if load == "work_w" else 1
    shift = ramp_rate_per_min * mean_response_time_s / 60.0
    note = (
        f"{zones.note} Work-rate/speed bounds at the thresholds are steady-state equivalents: the ramp's value minus "
        f"ramp rate × VO2 mean response time ({ramp_rate_per_min:.{max(digits, 1)}f} {unit}/min × {mean_response_time_s:.0f} s "
        f"= {shift:.{digits}f} {unit} lower; Whipp et al. 1981)."
    ).strip()
    return ZoneSet(tuple(out), note, "steady_state_equivalent")
