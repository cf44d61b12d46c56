"""The demo cast of the fictional Saltmarsh Exercise Lab and their tests.

Every person here is invented. Parameters are chosen to look like the groups they stand for
(trained cyclist, recreational runner, cardiac-rehab patient, heart-failure patient, office
worker on a submaximal screen), not taken from anyone.
"""

from __future__ import annotations

from pathlib import Path
from typing import NamedTuple

from analysis.simulation.profiles import ProtocolSpec, SubjectProfile
from analysis.simulation.simulate import simulate_session

#: Trained road cyclist, 66 mL/kg/min, clear VO2 plateau.
TRAINED_CYCLIST = SubjectProfile(
    subject_id="SEL-0107",
    display_name="Tomas Verrall",
    sex="male",
    age_y=29,
    height_cm=181,
    body_mass_kg=71.5,
    hb_g_dl=15.4,
    vo2_rest_ml_min=340,
    vo2max_ml_min=4700,
    vt1_fraction=0.62,
    vt2_fraction=0.86,
    hr_rest_bpm=48,
    hr_max_bpm=189,
    ve_vco2_slope=26.0,
    petco2_rest_mmhg=39,
    plateau=True,
    mvv_l_min=195,
    plateau_s=80,
    tau_on_s=30,
    tau_off_s=40,
    hr_tau_off_s=70,
    rer_peak=1.16,
    petco2_rise_mmhg=6.0,
    rf_max_bpm=52,
)

#: Recreational runner, 53 mL/kg/min, treadmill, no plateau.
RECREATIONAL_RUNNER = SubjectProfile(
    subject_id="SEL-0212",
    display_name="Priya Ashdown",
    sex="female",
    age_y=34,
    height_cm=166,
    body_mass_kg=58.0,
    hb_g_dl=13.6,
    vo2_rest_ml_min=250,
    vo2max_ml_min=3100,
    vt1_fraction=0.66,
    vt2_fraction=0.87,
    hr_rest_bpm=58,
    hr_max_bpm=186,
    ve_vco2_slope=27.5,
    petco2_rest_mmhg=37,
    plateau=False,
    mvv_l_min=128,
    tau_on_s=35,
    rer_peak=1.13,
    rf_max_bpm=50,
)

#: Cardiac-rehab patient (after myocardial infarction, on a beta-blocker) at baseline.
REHAB_BASELINE = SubjectProfile(
    subject_id="SEL-0318",
    display_name="Gordon Pellow",
    sex="male",
    age_y=61,
    height_cm=176,
    body_mass_kg=88.0,
    hb_g_dl=13.8,
    vo2_rest_ml_min=310,
    vo2max_ml_min=1650,
    vt1_fraction=0.57,
    vt2_fraction=0.84,
    hr_rest_bpm=66,
    hr_max_bpm=132,
    ve_vco2_slope=33.5,
    petco2_rest_mmhg=35,
    plateau=False,
    mvv_l_min=135,
    vo2_work_slope_ml_min_w=9.0,
    tau_on_s=55,
    tau_off_s=75,
    hr_tau_off_s=150,
    rer_peak=1.12,
    petco2_rise_mmhg=4.0,
    petco2_fall_mmhg=4.0,
    rf_max_bpm=40,
)

#: The same patient after 12 weeks of rehabilitation: higher VO2peak and VT1, lower VE/VCO2.
REHAB_FOLLOWUP = SubjectProfile(
    subject_id="SEL-0318",
    display_name="Gordon Pellow",
    sex="male",
    age_y=61,
    height_cm=176,
    body_mass_kg=85.5,
    hb_g_dl=14.0,
    vo2_rest_ml_min=300,
    vo2max_ml_min=1950,
    vt1_fraction=0.60,
    vt2_fraction=0.85,
    hr_rest_bpm=62,
    hr_max_bpm=136,
    ve_vco2_slope=30.0,
    petco2_rest_mmhg=36,
    plateau=False,
    mvv_l_min=138,
    vo2_work_slope_ml_min_w=9.5,
    tau_on_s=45,
    tau_off_s=65,
    hr_tau_off_s=120,
    rer_peak=1.14,
    petco2_rise_mmhg=4.5,
    petco2_fall_mmhg=4.5,
    rf_max_bpm=42,
)

#: Heart-failure-like profile: low VO2peak, steep VE/VCO2 slope, no respiratory
#: compensation within the test, slight desaturation.
HEART_FAILURE = SubjectProfile(
    subject_id="SEL-0425",
    display_name="Edith Carrow",
    sex="female",
    age_y=67,
    height_cm=160,
    body_mass_kg=70.0,
    hb_g_dl=12.1,
    vo2_rest_ml_min=260,
    vo2max_ml_min=1050,
    vt1_fraction=0.62,
    vt2_fraction=None,
    hr_rest_bpm=76,
    hr_max_bpm=124,
    ve_vco2_slope=42.0,
    petco2_rest_mmhg=31,
    plateau=False,
    mvv_l_min=85,
    vo2_work_slope_ml_min_w=8.0,
    tau_on_s=70,
    tau_off_s=90,
    hr_tau_off_s=180,
    rer_peak=1.11,
    petco2_rise_mmhg=2.0,
    rf_rest_bpm=17,
    rf_max_bpm=42,
    spo2_rest_pct=96.5,
    spo2_drop_pct=3.0,
)

#: Office worker on a submaximal screening test (stopped before RER reaches 1.10).
SUBMAX_SCREEN = SubjectProfile(
    subject_id="SEL-0531",
    display_name="Ruth Ingleby",
    sex="female",
    age_y=45,
    height_cm=170,
    body_mass_kg=66.0,
    hb_g_dl=13.2,
    vo2_rest_ml_min=260,
    vo2max_ml_min=2350,
    vt1_fraction=0.52,
    vt2_fraction=0.80,
    hr_rest_bpm=70,
    hr_max_bpm=176,
    ve_vco2_slope=29.0,
    petco2_rest_mmhg=36,
    plateau=False,
    mvv_l_min=112,
    tau_on_s=40,
    rer_peak=1.15,
)

CYCLE_RAMP_30 = ProtocolSpec(mode="cycle", warmup_w=80, ramp_w_per_min=30, recovery_w=40)
TREADMILL_RAMP = ProtocolSpec(
    mode="treadmill",
    warmup_speed_kmh=7.5,
    warmup_grade_pct=0.0,
    start_speed_kmh=8.0,
    speed_step_kmh_per_min=0.5,
    start_grade_pct=1.0,
    grade_step_pct_per_min=0.5,
    recovery_speed_kmh=4.0,
    stage_s=60,
)
CYCLE_RAMP_10 = ProtocolSpec(mode="cycle", warmup_w=10, ramp_w_per_min=10, recovery_w=10)
CYCLE_RAMP_12 = ProtocolSpec(mode="cycle", warmup_w=10, ramp_w_per_min=12, recovery_w=10)
CYCLE_RAMP_8 = ProtocolSpec(mode="cycle", rest_s=240, warmup_w=0, ramp_w_per_min=8, recovery_w=0)
CYCLE_SUBMAX = ProtocolSpec(mode="cycle", warmup_w=25, ramp_w_per_min=20, recovery_w=25, stop="rer", stop_rer=1.04)


class DemoTest(NamedTuple):
    """One demo session: file stem, who, how, random seed, date, a note and extra metadata."""

    stem: str
    profile: SubjectProfile
    protocol: ProtocolSpec
    seed: int
    test_date: str
    notes: str
    meta_extra: tuple[tuple[str, str], ...] = ()


def _stem(profile: SubjectProfile, test_date: str, kind: str) -> str:
    return f"{profile.subject_id}_{test_date}_{kind}"


DEMO_TESTS: tuple[DemoTest, ...] = (
    DemoTest(
        _stem(TRAINED_CYCLIST, "2026-02-03", "cycle-ramp"), TRAINED_CYCLIST, CYCLE_RAMP_30, 1107, "2026-02-03",
        "Pre-season test, trained road cyclist. Simulated demo data (fictional person).",
    ),
    DemoTest(
        _stem(RECREATIONAL_RUNNER, "2026-02-10", "treadmill-ramp"), RECREATIONAL_RUNNER, TREADMILL_RAMP, 2212,
        "2026-02-10", "Recreational runner, half-marathon block; jogging warm-up. Simulated demo data (fictional person).",
    ),
    DemoTest(
        _stem(REHAB_BASELINE, "2025-11-12", "rehab-baseline"), REHAB_BASELINE, CYCLE_RAMP_10, 3318, "2025-11-12",
        "Cardiac rehabilitation entry test, on beta-blocker. Simulated demo data (fictional person).",
        (("beta_blocker", "yes"),),
    ),
    DemoTest(
        _stem(REHAB_FOLLOWUP, "2026-02-04", "rehab-week12"), REHAB_FOLLOWUP, CYCLE_RAMP_12, 3319, "2026-02-04",
        "Cardiac rehabilitation, 12-week follow-up. Simulated demo data (fictional person).",
    ),
    DemoTest(
        _stem(HEART_FAILURE, "2026-01-21", "cycle-ramp"), HEART_FAILURE, CYCLE_RAMP_8, 4425, "2026-01-21",
        "Heart-failure clinic referral, supervised test. Simulated demo data (fictional person).",
    ),
    DemoTest(
        _stem(SUBMAX_SCREEN, "2026-02-17", "submax"), SUBMAX_SCREEN, CYCLE_SUBMAX, 5531, "2026-02-17",
        "Submaximal screening test, stopped before RER 1.10. Simulated demo data (fictional person).",
    ),
)


def generate_demo(out_dir: str | Path) -> list[Path]:
    """Write every :data:`DEMO_TESTS` session to ``out_dir`` as ``<stem>.session.csv``.

    The output is deterministic: the same files, byte for byte, on every run.

    Parameters
    ----------
    out_dir : str or Path
        Folder to write to (created when missing).

    Returns
    -------
    list of Path
        The written files, in :data:`DEMO_TESTS` order.
    """
    from analysis.io.session_file import write_session  # the writer is only needed here

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for demo in DEMO_TESTS:
        session = simulate_session(
            demo.profile, demo.protocol, seed=demo.seed, noise=1.0, artifacts=3, test_date=demo.test_date, notes=demo.notes,
            meta_extra=dict(demo.meta_extra) or None,
        )
        paths.append(write_session(session, out / f"{demo.stem}.session.csv"))
    return paths
