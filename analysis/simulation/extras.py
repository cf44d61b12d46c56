"""What makes a simulated test hard: physiology beyond the base model (:class:`ModelExtras`)
and breath-level events of a real recording (:class:`BreathEvents`).

Both are frozen, keyword-only dataclasses that check their values on creation and raise
:class:`~analysis.errors.InvalidParameter` naming the field. Their defaults are neutral: a
session simulated with ``ModelExtras()`` and ``BreathEvents()`` has the base model's values
(and the extended truth keys, see ``docs/simulation.md``).
"""

from __future__ import annotations

from dataclasses import dataclass

from analysis.errors import require
from analysis.simulation.profiles import _in


@dataclass(frozen=True, kw_only=True)
class ModelExtras:
    """Physiology added on top of the base model (all neutral by default).

    Parameters
    ----------
    slow_component_fraction : float
        VO2 slow component: extra O2 cost above VT1 as a fraction of the demand above the VT1
        level (0 none; 0.10-0.25 in the hard kinds). It builds up with
        ``slow_component_tau_s`` and steepens the VO2-work relation above VT1.
    slow_component_tau_s : float
        Time constant of the slow component, s.
    co2_extra_tau_s : float
        Extra first-order lag of the exhaled VCO2 (and of VE, which follows it) behind the
        metabolic CO2 production, s: the CO2 stores fill after each rise in load. 0 none.
    overbreathing_ve_fraction : float
        Anxious over-breathing: VE raised by this fraction at rest (0 none; 0.4-0.9 in the
        over-breathing kind), fading after the first load with ``overbreathing_tau_s``.
    overbreathing_co2_fraction : float
        Extra exhaled VCO2 (CO2 washed out of the stores) at rest as a fraction of the
        metabolic VCO2; lifts the resting RER above 1 when large enough.
    overbreathing_petco2_drop_mmhg : float
        PETCO2 fall at rest caused by the over-breathing, mmHg.
    overbreathing_tau_s : float
        Time constant with which the over-breathing fades after the first load starts, s.
    oscillation_period_s : float or None
        Oscillating ventilation: period, s (``None``: no oscillation).
    oscillation_amplitude_fraction : float
        Half the peak-to-trough swing of VE as a fraction of its mean (VE x (1 ± A)).
    oscillation_phase_rad : float
        Phase of the oscillation at t = 0, rad.
    oscillation_end_fraction : float
        The oscillation runs from the start of the record to this fraction of the incremental
        phase (1: to the end of exercise); it then fades over one period.
    ve_ceiling_l_min : float or None
        Ventilatory limitation: VE cannot exceed this value (``None``: no ceiling). VE follows
        the demand up to ``ve_knee_fraction`` x the ceiling and then bends smoothly onto it;
        the CO2 that is not breathed off raises PETCO2 (CO2 retention).
    ve_knee_fraction : float
        Where the VE ceiling starts to bend the VE response, fraction of the ceiling.
    oscillation_period_jitter : float
        Cycle-to-cycle irregularity of the oscillation: SD of the instantaneous frequency as a
        fraction of the mean (0: a pure sine). The frequency wanders with a correlation time
        of one period; the mean period stays ``oscillation_period_s``.
    oscillation_amplitude_jitter : float
        The same for the amplitude: SD of its slow wander, fraction of the mean amplitude.
    oscillation_seed : int
        Seed of the two wanders (the same extras, the same oscillation).
    late_ve_rise_fraction : float
        Rapid shallow breathing late in exercise without acidosis (no compensation point): VE
        rises above what VCO2 asks for, by this fraction at the end of exercise, growing with
        the square of the time since ``late_ve_rise_start_fraction`` of the incremental phase
        (0 none); PETCO2 falls by half of that fraction. The rise fades in recovery (60 s).
    late_ve_rise_start_fraction : float
        Where the late rise starts, fraction of the incremental phase.

    Notes
    -----
    The equations are in ``docs/simulation.md`` ("The extra physiology"). The sizes chosen by
    the kinds are plausible values from memory, not fitted to any data set.

    References
    ----------
    Gaesser GA, Poole DC (1996). The slow component of oxygen uptake kinetics in humans. Exerc
    Sport Sci Rev 24:35-71 (the extra O2 cost above the threshold, from memory).
    Wasserman K, Hansen JE, Sue DY, et al. Principles of Exercise Testing and Interpretation
    (textbook; CO2 kinetics slower than O2 kinetics because of the CO2 stores, from memory).
    Leite JJ et al. (2003) J Am Coll Cardiol 41:2175-2181; Corrà U et al. (2006) Circulation
    (oscillatory ventilation: period and duration, from memory; cycles are not pure sines).
    Sullivan MJ, Higginbotham MB, Cobb FR (1988). Increased exercise ventilation in patients
    with chronic heart failure. Circulation 77:552-559 (rapid shallow breathing, a rising dead
    space fraction, from memory).
    ATS/ACCP Statement on cardiopulmonary exercise testing (2003). Am J Respir Crit Care Med
    167:211-277 (MVV, breathing reserve and CO2 retention in ventilatory limitation).
    """

    slow_component_fraction: float = 0.0
    slow_component_tau_s: float = 180.0
    co2_extra_tau_s: float = 0.0
    overbreathing_ve_fraction: float = 0.0
    overbreathing_co2_fraction: float = 0.0
    overbreathing_petco2_drop_mmhg: float = 0.0
    overbreathing_tau_s: float = 90.0
    oscillation_period_s: float | None = None
    oscillation_amplitude_fraction: float = 0.0
    oscillation_phase_rad: float = 0.0
    oscillation_end_fraction: float = 1.0
    ve_ceiling_l_min: float | None = None
    ve_knee_fraction: float = 0.75
    oscillation_period_jitter: float = 0.0
    oscillation_amplitude_jitter: float = 0.0
    oscillation_seed: int = 0
    late_ve_rise_fraction: float = 0.0
    late_ve_rise_start_fraction: float = 0.6

    def __post_init__(self) -> None:
        _in("slow_component_fraction", self.slow_component_fraction, 0, 0.4)
        _in("slow_component_tau_s", self.slow_component_tau_s, 60, 400, "s")
        _in("co2_extra_tau_s", self.co2_extra_tau_s, 0, 60, "s")
        _in("overbreathing_ve_fraction", self.overbreathing_ve_fraction, 0, 1.5)
        _in("overbreathing_co2_fraction", self.overbreathing_co2_fraction, 0, 0.6)
        _in("overbreathing_petco2_drop_mmhg", self.overbreathing_petco2_drop_mmhg, 0, 15, "mmHg")
        _in("overbreathing_tau_s", self.overbreathing_tau_s, 20, 300, "s")
        if self.oscillation_period_s is not None:
            _in("oscillation_period_s", self.oscillation_period_s, 20, 150, "s")
            _in("oscillation_amplitude_fraction", self.oscillation_amplitude_fraction, 0.02, 0.45)
        _in("oscillation_phase_rad", self.oscillation_phase_rad, -10, 10, "rad")
        _in("oscillation_end_fraction", self.oscillation_end_fraction, 0, 1)
        if self.ve_ceiling_l_min is not None:
            _in("ve_ceiling_l_min", self.ve_ceiling_l_min, 15, 250, "L/min")
        _in("ve_knee_fraction", self.ve_knee_fraction, 0.5, 0.95)
        _in("oscillation_period_jitter", self.oscillation_period_jitter, 0, 0.4)
        _in("oscillation_amplitude_jitter", self.oscillation_amplitude_jitter, 0, 0.6)
        require(
            isinstance(self.oscillation_seed, int) and not isinstance(self.oscillation_seed, bool) and self.oscillation_seed >= 0,
            "oscillation_seed",
            "a whole number >= 0",
            self.oscillation_seed,
        )
        _in("late_ve_rise_fraction", self.late_ve_rise_fraction, 0, 0.3)
        _in("late_ve_rise_start_fraction", self.late_ve_rise_start_fraction, 0.2, 0.95)

    @property
    def has_oscillation(self) -> bool:
        """True when the ventilation oscillates."""
        return self.oscillation_period_s is not None and self.oscillation_amplitude_fraction > 0


@dataclass(frozen=True, kw_only=True)
class BreathEvents:
    """Breath-level events of a real recording, planted after the breath noise.

    Counts are per test; each event's place is drawn from its own random stream, so the
    same seed gives the same events. Nothing in the breath table marks them; their times are
    in the metadata key ``truth_breath_events``.

    Parameters
    ----------
    sighs_per_10_min : float
        Mean number of sighs (one breath 2-3 x deeper, CO2 washed out, followed by a
        shallower breath) per 10 minutes.
    leak_runs : int
        Runs of 4-20 breaths with a mask leak: VE, VO2 and VCO2 x 0.55-0.85.
    merged_breaths : int
        Pairs of breaths the detector merged into one (duration and volume add; per-minute
        values are the duration-weighted mean).
    dropped_runs : int
        Runs of 1-3 breaths lost in the recording (a gap in time).
    impossible_breaths : int
        Isolated breaths no person can breathe (RER 1.8-2.6, or VE x 3.5 with the gases
        barely moved), as a cough or a valve artefact gives.
    """

    sighs_per_10_min: float = 0.0
    leak_runs: int = 0
    merged_breaths: int = 0
    dropped_runs: int = 0
    impossible_breaths: int = 0

    def __post_init__(self) -> None:
        _in("sighs_per_10_min", self.sighs_per_10_min, 0, 10)
        for name in ("leak_runs", "merged_breaths", "dropped_runs", "impossible_breaths"):
            value = getattr(self, name)
            require(
                isinstance(value, int) and not isinstance(value, bool) and 0 <= value <= 20,
                name,
                "a whole number between 0 and 20",
                value,
            )

    @property
    def any(self) -> bool:
        """True when at least one event is asked for."""
        return bool(
            self.sighs_per_10_min or self.leak_runs or self.merged_breaths or self.dropped_runs or self.impossible_breaths
        )
