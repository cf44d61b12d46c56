"""The two inputs of the simulator: who is tested (:class:`SubjectProfile`) and how
(:class:`ProtocolSpec`).

Both are frozen, keyword-only dataclasses that check their own values once, on creation, and
raise :class:`~analysis.errors.InvalidParameter` naming the field, what was expected and what
came. Derived model quantities (VO2 at VT1 and VT2, the VCO2-VO2 slope above VT1) are
properties, so tests and the simulator read them from one place.
"""

from __future__ import annotations

from dataclasses import dataclass

from analysis.errors import require

SEXES: tuple[str, ...] = ("male", "female")
MODES: tuple[str, ...] = ("cycle", "treadmill")
#: Stop rules: ``"max"`` volitional at VO2max; ``"fraction"`` when VO2 reaches
#: ``stop_fraction`` x VO2max; ``"rer"`` when the model RER reaches ``stop_rer``.
STOP_RULES: tuple[str, ...] = ("max", "fraction", "rer")


def _in(name: str, value: float, low: float, high: float, unit: str = "") -> None:
    if isinstance(value, (int, float)) and low <= float(value) <= high:
        return  # the usual case, without building the message
    unit = f" {unit}" if unit else ""
    require(
        isinstance(value, (int, float)) and low <= float(value) <= high,
        name,
        f"a number between {low:g} and {high:g}{unit}",
        value,
    )


@dataclass(frozen=True, kw_only=True)
class SubjectProfile:
    """A simulated person: body data and the physiological parameters of the model.

    Every person is fictional. The parameters are those of the model described in
    ``docs/simulation.md``; ranges checked here are generous adult ranges (common practice).

    Parameters
    ----------
    subject_id, display_name : str
        Code and (fictional) name of the person.
    sex : {"male", "female"}
    age_y, height_cm, body_mass_kg : float
        Age in years, height in cm, body mass in kg.
    hb_g_dl : float
        Haemoglobin concentration, g/dL.
    vo2_rest_ml_min, vo2max_ml_min : float
        Resting and maximal O2 uptake, mL/min.
    vt1_fraction : float
        VO2 at the first ventilatory threshold as a fraction of VO2max (the V-slope breakpoint).
    vt2_fraction : float or None
        VO2 at the respiratory compensation point as a fraction of VO2max; ``None``: no RCP
        within the test (VE keeps one slope against VCO2).
    hr_rest_bpm, hr_max_bpm : float
        Heart rate at rest and at VO2max, beats/min (HR is linear in VO2 between them).
    ve_vco2_slope : float
        Slope of VE (L/min) against VCO2 (L/min) below VT2.
    petco2_rest_mmhg : float
        End-tidal PCO2 at rest, mmHg.
    plateau : bool
        ``True``: VO2 levels off at VO2max for ``plateau_s`` while work keeps rising.
    mvv_l_min : float, optional
        Maximal voluntary ventilation, L/min (written to the session metadata when given).
    plateau_s : float
        Duration of the VO2 plateau before the person stops, s (plateau profiles only).
    vo2_work_slope_ml_min_w : float
        Cycle-ergometer O2 cost, ΔVO2/ΔWR in mL/min/W (≈ 10 in healthy adults, common practice;
        ATS/ACCP 2003). Lower values model poor O2 delivery.
    tau_on_s, tau_off_s : float
        Time constants of VO2 during exercise and in recovery, s.
    hr_tau_off_s : float
        Time constant of heart-rate recovery, s.
    rer_rest : float
        Respiratory exchange ratio at rest.
    vco2_slope_below_vt1 : float
        Slope of VCO2 against VO2 below VT1 (≈ 0.9-1.0).
    rer_peak : float
        RER the model reaches at VO2max; fixes the VCO2-VO2 slope above VT1.
    ve_intercept_l_min : float
        Intercept of the VE-VCO2 line, L/min.
    rc_ve_factor : float
        Factor by which the VE-VCO2 slope steepens above VT2 (respiratory compensation).
    petco2_rise_mmhg, petco2_fall_mmhg : float
        PETCO2 rise from rest to VT1, and fall from VT2 to VO2max, mmHg.
    rf_rest_bpm, rf_max_bpm : float
        Breathing frequency at rest and at peak ventilation, breaths/min.
    spo2_rest_pct, spo2_drop_pct : float
        Pulse-oximetry saturation at rest and its fall at VO2max, %.
    """

    subject_id: str
    display_name: str
    sex: str
    age_y: float
    height_cm: float
    body_mass_kg: float
    hb_g_dl: float
    vo2_rest_ml_min: float
    vo2max_ml_min: float
    vt1_fraction: float
    vt2_fraction: float | None
    hr_rest_bpm: float
    hr_max_bpm: float
    ve_vco2_slope: float
    petco2_rest_mmhg: float
    plateau: bool
    mvv_l_min: float | None = None
    plateau_s: float = 75.0
    vo2_work_slope_ml_min_w: float = 10.0
    tau_on_s: float = 35.0
    tau_off_s: float = 50.0
    hr_tau_off_s: float = 90.0
    rer_rest: float = 0.80
    vco2_slope_below_vt1: float = 0.95
    rer_peak: float = 1.15
    ve_intercept_l_min: float = 3.0
    rc_ve_factor: float = 1.6
    petco2_rise_mmhg: float = 5.0
    petco2_fall_mmhg: float = 6.0
    rf_rest_bpm: float = 14.0
    rf_max_bpm: float = 48.0
    spo2_rest_pct: float = 97.5
    spo2_drop_pct: float = 0.0

    def __post_init__(self) -> None:
        require(bool(str(self.subject_id).strip()), "subject_id", "a non-empty code", self.subject_id)
        require(self.sex in SEXES, "sex", f"one of {SEXES}", self.sex)
        _in("age_y", self.age_y, 10, 100, "years")
        _in("height_cm", self.height_cm, 120, 220, "cm")
        _in("body_mass_kg", self.body_mass_kg, 30, 200, "kg")
        _in("hb_g_dl", self.hb_g_dl, 7, 20, "g/dL")
        _in("vo2_rest_ml_min", self.vo2_rest_ml_min, 120, 600, "mL/min")
        _in("vo2max_ml_min", self.vo2max_ml_min, 2 * self.vo2_rest_ml_min, 7000, "mL/min")
        _in("vt1_fraction", self.vt1_fraction, 0.3, 0.85)
        if self.vt2_fraction is not None:
            _in("vt2_fraction", self.vt2_fraction, self.vt1_fraction + 0.05, 0.97)
        _in("hr_rest_bpm", self.hr_rest_bpm, 35, 110, "beats/min")
        _in("hr_max_bpm", self.hr_max_bpm, self.hr_rest_bpm + 20, 220, "beats/min")
        _in("ve_vco2_slope", self.ve_vco2_slope, 18, 70)
        _in("petco2_rest_mmhg", self.petco2_rest_mmhg, 20, 50, "mmHg")
        require(isinstance(self.plateau, bool), "plateau", "True or False", self.plateau)
        if self.mvv_l_min is not None:
            _in("mvv_l_min", self.mvv_l_min, 20, 300, "L/min")
        _in("plateau_s", self.plateau_s, 30, 180, "s")
        require(
            not self.plateau or self.plateau_s >= 2 * self.tau_on_s,
            "plateau_s",
            f"at least twice tau_on_s ({2 * self.tau_on_s:g} s) so that VO2 has levelled off",
            self.plateau_s,
        )
        _in("vo2_work_slope_ml_min_w", self.vo2_work_slope_ml_min_w, 6, 14, "mL/min/W")
        _in("tau_on_s", self.tau_on_s, 15, 90, "s")
        _in("tau_off_s", self.tau_off_s, 20, 150, "s")
        _in("hr_tau_off_s", self.hr_tau_off_s, 30, 300, "s")
        _in("rer_rest", self.rer_rest, 0.7, 0.95)
        _in("vco2_slope_below_vt1", self.vco2_slope_below_vt1, 0.8, 1.1)
        _in("rer_peak", self.rer_peak, 1.0, 1.4)
        _in("ve_intercept_l_min", self.ve_intercept_l_min, 0, 8, "L/min")
        _in("rc_ve_factor", self.rc_ve_factor, 1.1, 3.0)
        _in("petco2_rise_mmhg", self.petco2_rise_mmhg, 0, 12, "mmHg")
        _in("petco2_fall_mmhg", self.petco2_fall_mmhg, 0, 15, "mmHg")
        _in("rf_rest_bpm", self.rf_rest_bpm, 6, 30, "breaths/min")
        _in("rf_max_bpm", self.rf_max_bpm, self.rf_rest_bpm + 10, 70, "breaths/min")
        _in("spo2_rest_pct", self.spo2_rest_pct, 90, 100, "%")
        _in("spo2_drop_pct", self.spo2_drop_pct, 0, 10, "%")
        slope_above = self.vco2_slope_above_vt1
        require(
            1.1 <= slope_above <= 2.5 and slope_above >= self.vco2_slope_below_vt1 + 0.15,
            "rer_peak",
            "high enough for VCO2 to steepen above VT1 (a VCO2-VO2 slope above VT1 between "
            f"1.1 and 2.5 and at least 0.15 above {self.vco2_slope_below_vt1:g})",
            f"{self.rer_peak} (slope above VT1 would be {slope_above:.3f})",
        )

    # --- derived model quantities -------------------------------------------------------
    @property
    def vo2_vt1_ml_min(self) -> float:
        """VO2 at VT1, mL/min."""
        return self.vt1_fraction * self.vo2max_ml_min

    @property
    def vo2_vt2_ml_min(self) -> float | None:
        """VO2 at VT2 (RCP), mL/min, or ``None`` when the profile has no RCP."""
        return None if self.vt2_fraction is None else self.vt2_fraction * self.vo2max_ml_min

    @property
    def vco2_rest_ml_min(self) -> float:
        """VCO2 at rest, mL/min (``rer_rest`` x ``vo2_rest_ml_min``)."""
        return self.rer_rest * self.vo2_rest_ml_min

    @property
    def vco2_vt1_ml_min(self) -> float:
        """VCO2 at VT1, mL/min."""
        return self.vco2_rest_ml_min + self.vco2_slope_below_vt1 * (self.vo2_vt1_ml_min - self.vo2_rest_ml_min)

    @property
    def vco2_slope_above_vt1(self) -> float:
        """Slope of VCO2 against VO2 above VT1, chosen so RER = ``rer_peak`` at VO2max."""
        return (self.rer_peak * self.vo2max_ml_min - self.vco2_vt1_ml_min) / (
            self.vo2max_ml_min - self.vo2_vt1_ml_min
        )

    @property
    def vo2max_ml_kg_min(self) -> float:
        """VO2max per kg body mass, mL/kg/min."""
        return self.vo2max_ml_min / self.body_mass_kg


@dataclass(frozen=True, kw_only=True)
class ProtocolSpec:
    """How the test is run: phases, loads and the stop rule.

    Parameters
    ----------
    mode : {"cycle", "treadmill"}
    rest_s, warmup_s, recovery_s : float
        Durations of seated/standing rest, warm-up and recovery, s (warm-up may be 0).
    warmup_w, ramp_w_per_min, recovery_w : float
        Cycle only: warm-up load (W), ramp rate (W/min, starting from the warm-up load) and
        active-recovery load (W).
    start_w : float, optional
        Cycle only: load at the start of the incremental phase, W (a step up from the
        warm-up); ``None`` starts the incremental phase at ``warmup_w``.
    warmup_speed_kmh, warmup_grade_pct : float
        Treadmill only: warm-up speed (km/h) and grade (%).
    start_speed_kmh, speed_step_kmh_per_min, start_grade_pct, grade_step_pct_per_min : float
        Treadmill only: speed and grade at the start of the incremental phase and their
        increase per minute.
    recovery_speed_kmh, recovery_grade_pct : float
        Treadmill only: recovery walk (0 km/h: standing).
    stage_s : float
        0 for a continuous ramp; otherwise the load rises in steps of this length, s (each
        step adds ``stage_s / 60`` times the per-minute increment).
    stop : {"max", "fraction", "rer"}
        Stop rule: volitional at VO2max (after the plateau for plateau profiles); when VO2
        reaches ``stop_fraction`` x VO2max; or when the model RER reaches ``stop_rer``.
    stop_fraction, stop_rer : float
        Parameters of the submaximal stop rules.
    barometric_mmhg : float
        Barometric pressure of the lab, mmHg.
    max_exercise_s : float
        Upper limit of the incremental phase; a protocol that would need longer is rejected.
    """

    mode: str
    rest_s: float = 180.0
    warmup_s: float = 180.0
    recovery_s: float = 180.0
    warmup_w: float = 20.0
    ramp_w_per_min: float = 20.0
    recovery_w: float = 20.0
    start_w: float | None = None
    warmup_speed_kmh: float = 5.0
    warmup_grade_pct: float = 0.0
    start_speed_kmh: float = 8.0
    speed_step_kmh_per_min: float = 0.5
    start_grade_pct: float = 1.0
    grade_step_pct_per_min: float = 0.0
    recovery_speed_kmh: float = 3.0
    recovery_grade_pct: float = 0.0
    stage_s: float = 0.0
    stop: str = "max"
    stop_fraction: float = 0.85
    stop_rer: float = 1.05
    barometric_mmhg: float = 760.0
    max_exercise_s: float = 2400.0

    def __post_init__(self) -> None:
        require(self.mode in MODES, "mode", f"one of {MODES}", self.mode)
        _in("rest_s", self.rest_s, 30, 1200, "s")
        _in("warmup_s", self.warmup_s, 0, 1200, "s")
        _in("recovery_s", self.recovery_s, 0, 1200, "s")
        _in("warmup_w", self.warmup_w, 0, 400, "W")
        _in("ramp_w_per_min", self.ramp_w_per_min, 3, 100, "W/min")
        _in("recovery_w", self.recovery_w, 0, 200, "W")
        if self.start_w is not None:
            _in("start_w", self.start_w, 0, 600, "W")
        _in("warmup_speed_kmh", self.warmup_speed_kmh, 0, 20, "km/h")
        _in("warmup_grade_pct", self.warmup_grade_pct, 0, 25, "%")
        _in("start_speed_kmh", self.start_speed_kmh, 1, 25, "km/h")
        _in("speed_step_kmh_per_min", self.speed_step_kmh_per_min, 0, 3, "km/h per min")
        _in("start_grade_pct", self.start_grade_pct, 0, 25, "%")
        _in("grade_step_pct_per_min", self.grade_step_pct_per_min, 0, 5, "% per min")
        require(
            self.mode == "cycle" or self.speed_step_kmh_per_min > 0 or self.grade_step_pct_per_min > 0,
            "speed_step_kmh_per_min",
            "above 0 (or a grade step above 0) so that the treadmill load rises",
            self.speed_step_kmh_per_min,
        )
        _in("recovery_speed_kmh", self.recovery_speed_kmh, 0, 8, "km/h")
        _in("recovery_grade_pct", self.recovery_grade_pct, 0, 25, "%")
        _in("stage_s", self.stage_s, 0, 600, "s")
        require(self.stop in STOP_RULES, "stop", f"one of {STOP_RULES}", self.stop)
        _in("stop_fraction", self.stop_fraction, 0.4, 0.99)
        _in("stop_rer", self.stop_rer, 0.85, 1.3)
        _in("barometric_mmhg", self.barometric_mmhg, 450, 800, "mmHg")
        _in("max_exercise_s", self.max_exercise_s, 120, 7200, "s")

    def describe(self) -> str:
        """One-line human description, used as the session's ``protocol`` metadata."""
        stepping = f", {self.stage_s:g}-s stages" if self.stage_s else ""
        if self.mode == "cycle":
            text = f"cycle ramp {self.ramp_w_per_min:g} W/min from {self.warmup_w:g} W{stepping}"
            if self.start_w is not None:
                text = f"cycle ramp {self.ramp_w_per_min:g} W/min from {self.start_w:g} W after {self.warmup_w:g} W{stepping}"
        else:
            parts = [f"treadmill from {self.start_speed_kmh:g} km/h at {self.start_grade_pct:g} %"]
            if self.speed_step_kmh_per_min:
                parts.append(f"+{self.speed_step_kmh_per_min:g} km/h per min")
            if self.grade_step_pct_per_min:
                parts.append(f"+{self.grade_step_pct_per_min:g} % grade per min")
            text = ", ".join(parts) + stepping
        if self.stop == "fraction":
            text += f"; stopped at {self.stop_fraction:.0%} of VO2max"
        elif self.stop == "rer":
            text += f"; stopped at RER {self.stop_rer:g}"
        return text
