"""Training zones from threshold values (three-zone model, common practice)."""

import pandas as pd
import pytest

from analysis.errors import InvalidParameter
from analysis.indices import point_values
from analysis.records import to_json
from analysis.zones import lag_corrected_zones, training_zones, zones_method


def _avg():
    return pd.DataFrame(
        {
            "t_s": [100.0, 300.0, 500.0, 600.0],
            "vo2_ml_min": [1000.0, 2000.0, 3000.0, 3500.0],
            "vco2_ml_min": [850.0, 1900.0, 3150.0, 3900.0],
            "ve_l_min": [25.0, 50.0, 90.0, 130.0],
            "hr_bpm": [100.0, 140.0, 170.0, 185.0],
            "work_w": [50.0, 150.0, 250.0, 300.0],
        }
    )


def _pts(avg):
    kw = dict(vo2_peak_ml_min=3500.0, body_mass_kg=70.0)
    return point_values(avg, 1, **kw), point_values(avg, 2, **kw), point_values(avg, 3, **kw)


def test_three_zones_match_threshold_values_and_are_monotonic():
    avg = _avg()
    vt1, vt2, peak = _pts(avg)
    zs = training_zones(vt1=vt1, vt2=vt2, peak=peak).zones
    assert [z.number for z in zs] == [1, 2, 3]
    assert zs[0].hr_low_bpm is None and zs[0].hr_high_bpm == vt1.hr_bpm == 140.0
    assert (zs[1].hr_low_bpm, zs[1].hr_high_bpm) == (140.0, 170.0)
    assert (zs[2].hr_low_bpm, zs[2].hr_high_bpm) == (170.0, 185.0)
    assert (zs[1].work_low_w, zs[1].work_high_w) == (150.0, 250.0)
    highs = [z.hr_high_bpm for z in zs]
    assert highs == sorted(highs)
    for a, b in zip(zs, zs[1:]):
        assert a.hr_high_bpm == b.hr_low_bpm and a.work_high_w == b.work_low_w
    assert zs[0].speed_high_kmh is None


def test_two_zones_without_vt2():
    vt1, _, peak = _pts(_avg())
    zset = training_zones(vt1=vt1, vt2=None, peak=peak)
    assert len(zset.zones) == 2
    assert "VT2 was not identified" in zset.note
    assert zset.zones[1].hr_high_bpm == 185.0


def test_no_zones_without_vt1():
    _, vt2, peak = _pts(_avg())
    zset = training_zones(vt1=None, vt2=vt2, peak=peak)
    assert zset.zones == () and "VT1" in zset.note


def test_vt2_below_vt1_rejected():
    vt1, vt2, peak = _pts(_avg())
    with pytest.raises(InvalidParameter, match="vt2"):
        training_zones(vt1=vt2, vt2=vt1, peak=peak)


def test_to_dict_keys_for_reports():
    vt1, vt2, peak = _pts(_avg())
    d = to_json(training_zones(vt1=vt1, vt2=vt2, peak=peak))
    assert set(d) == {"zones", "note", "load_basis"} and d["load_basis"] == "as_recorded"
    assert {"name", "hr_low_bpm", "hr_high_bpm", "work_low_w", "work_high_w"} <= set(d["zones"][0])


def test_lag_corrected_zones_move_the_threshold_loads_only():
    # Whipp et al. 1981 (from memory): steady-state equivalent = ramp load - ramp rate x MRT;
    # 25 W/min x 36 s = 15 W below the ramp's 150 W and 250 W
    vt1, vt2, peak = _pts(_avg())
    raw = training_zones(vt1=vt1, vt2=vt2, peak=peak)
    out = lag_corrected_zones(raw, load="work_w", vt1_load=135.0, vt2_load=235.0, ramp_rate_per_min=25.0, mean_response_time_s=36.0)
    assert [(z.work_low_w, z.work_high_w) for z in out.zones] == [(None, 135.0), (135.0, 235.0), (235.0, 300.0)]
    assert [(z.hr_low_bpm, z.hr_high_bpm) for z in out.zones] == [(z.hr_low_bpm, z.hr_high_bpm) for z in raw.zones]
    assert out.load_basis == "steady_state_equivalent"
    assert "25.0 W/min × 36 s = 15 W lower" in out.note and "Whipp" in out.note
    assert "steady-state equivalents" in zones_method(load_basis=out.load_basis)
    assert zones_method(load_basis="as_recorded") == zones_method(load_basis="as_recorded").split(";")[0]
    two = lag_corrected_zones(training_zones(vt1=vt1, vt2=None, peak=peak), load="work_w", vt1_load=135.0, vt2_load=None,
                              ramp_rate_per_min=25.0, mean_response_time_s=36.0)
    assert [(z.work_low_w, z.work_high_w) for z in two.zones] == [(None, 135.0), (135.0, 300.0)]
    with pytest.raises(InvalidParameter, match="load"):
        lag_corrected_zones(raw, load="grade_pct", vt1_load=1.0, vt2_load=None, ramp_rate_per_min=1.0, mean_response_time_s=30.0)
