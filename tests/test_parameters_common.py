"""Common parameter checks over the public analysis API (in the spirit of scikit-learn's common tests).

Every public function of ``analysis`` (the names in each package's ``__all__`` and the public
functions of the top-level modules) is called once with valid example arguments; then, for each
parameter whose name says what it holds (units in names: ``*_kg``, ``age_y``, ``*_mmhg``,
``temperature_c``, ``method``, ...), with a value outside its range. The function must refuse it
with :class:`analysis.errors.InvalidParameter` — not compute a number from it, and not fail with
some other error.

What "outside the range" means is one small table by parameter name (``OUT_OF_RANGE``); the
valid example values are another (``VALID``). A public function whose required arguments cannot
be built from ``VALID`` (it takes records or files) is listed in ``NOT_WALKED`` with the reason;
a new public function that takes a range-checked parameter must either be callable from ``VALID``
or be listed there.
"""

from __future__ import annotations

import importlib
import inspect
import math
import pkgutil
from collections.abc import Callable, Iterator
from functools import cache
from typing import Any

import numpy as np
import pytest

import analysis
from analysis.errors import InvalidParameter

NAN = math.nan
UNKNOWN = "no-such-option"

#: Out-of-range values by parameter name (exact names first, then name endings). Ranges are the
#: physics (no negative mass, time span, flow, pressure or count; no temperature below absolute
#: zero; fractions within 0-1) and the project's option lists (an unknown option string).
OUT_OF_RANGE_EXACT: dict[str, tuple[Any, ...]] = {
    "age_y": (-1.0, NAN, 200.0),
    "temperature_c": (NAN, -300.0),
    "ambient_c": (NAN, -300.0),
    "ph": (NAN, 0.0, 14.5),
    "fio2": (NAN, -0.1, 1.5),
    "so2": (NAN, -0.1, 1.5),
    "sao2": (NAN, -0.1, 1.5),
    "svo2": (NAN, -0.1, 1.5),
    "so2_arterial": (NAN, -0.1, 1.5),
    "so2_venous": (NAN, -0.1, 1.5),
    "saturation": (NAN, -0.1, 1.5),
    "s": (NAN, -0.1, 1.5),
    "window_breaths": (0, -3),
    "k_sd": (NAN, 0.0, -1.0),
    "hill_n": (NAN, 0.0, -1.0),
    "huefner_ml_g": (NAN, 0.0, -1.0),
    "vo2_peak_ml_min": (-1.0, 0.0, NAN),
    "vo2_peak_ml_kg_min": (-1.0, NAN),
    "hr_max_bpm": (-1.0, 0.0, NAN),
    "hr_rest_bpm": (-1.0, NAN),
    "hr_peak_bpm": (-1.0, NAN),
    "vo2_range_ml_min": (-1.0, NAN),
    "t_end_exercise_s": (NAN,),
    "method": (UNKNOWN,),
    "model": (UNKNOWN,),
    "mode": (UNKNOWN,),
    "sex": (UNKNOWN,),
    "kind": (UNKNOWN,),
    "chart": (UNKNOWN,),
    "ve_condition": (UNKNOWN,),
    "gas_unit": (UNKNOWN,),
    "time_format": (UNKNOWN,),
    "from_condition": (UNKNOWN,),
    "to_condition": (UNKNOWN,),
    "reference_set": (UNKNOWN,),
}
OUT_OF_RANGE_SUFFIX: dict[str, tuple[Any, ...]] = {
    "_kg": (-1.0, 0.0, NAN),
    "_cm": (-1.0, 0.0, NAN),
    "_mmhg": (-5.0, NAN),
    # measured signals: a missing value (NaN) is a missing breath and may pass through as missing;
    # a negative flow, rate or count is never a measurement
    "_ml_min": (-1.0,),
    "_l_min": (-1.0,),
    "_ml_kg_min": (-1.0,),
    "_bpm": (-1.0,),
    "_g_dl": (-1.0, NAN),
    "_fraction": (NAN, -0.1, 1.5),
    "_pct": (NAN, -1.0, 1000.0),
    "window_s": (NAN, -5.0),  # 0 s is allowed: no averaging
}


def out_of_range(name: str) -> tuple[Any, ...]:
    if name in OUT_OF_RANGE_EXACT:
        return OUT_OF_RANGE_EXACT[name]
    for suffix, values in OUT_OF_RANGE_SUFFIX.items():
        if name.endswith(suffix):
            return values
    return ()


@cache
def _demo() -> dict[str, Any]:
    """One simulated test, averaged (fixed seed): the data arguments of the walk."""
    from analysis.breaths import average_breaths
    from analysis.phases import detect_phases
    from analysis.simulation import TRAINED_CYCLIST, CYCLE_RAMP_30, simulate_session

    session = simulate_session(TRAINED_CYCLIST, CYCLE_RAMP_30, seed=3)
    breaths = session.breaths
    avg = average_breaths(breaths)
    phases = np.asarray(detect_phases(avg))
    exercise = avg[phases == "exercise"].reset_index(drop=True)
    return {"session": session, "breaths": breaths, "avg": avg, "phases_avg": phases, "exercise_avg": exercise}


#: Valid example values by parameter name: a scalar, then an array form for functions that
#: take series (tried when the scalar call fails).
def valid(name: str) -> tuple[Any, ...]:
    demo = _demo()
    if name in ("session", "breaths", "avg", "phases_avg", "exercise_avg"):
        return (demo[name],)
    ex = demo["exercise_avg"]
    series = {
        "t_s": ex["t_s"].to_numpy(), "vo2_ml_min": ex["vo2_ml_min"].to_numpy(), "vco2_ml_min": ex["vco2_ml_min"].to_numpy(),
        "ve_l_min": ex["ve_l_min"].to_numpy(), "hr_bpm": ex["hr_bpm"].to_numpy(), "work_w": ex["work_w"].to_numpy(),
        "spo2_pct": np.full(len(ex), 97.0), "phases": np.full(len(ex), "exercise"),
    }
    scalars: dict[str, Any] = {
        "age_y": 40.0, "body_mass_kg": 70.0, "height_cm": 175.0, "sex": "male", "mode": "cycle",
        "temperature_c": 37.0, "ambient_c": 22.0, "barometric_mmhg": 760.0, "pb_mmhg": 760.0, "ph": 7.4,
        "pco2_mmhg": 40.0, "po2_mmhg": 90.0, "hb_g_dl": 15.0, "base_excess_mmol_l": 0.0, "dpg_mmol_l": 5.0,
        "vo2_ml_min": 2000.0, "vco2_ml_min": 1800.0, "ve_l_min": 60.0, "hr_bpm": 150.0, "t_s": 300.0,
        "vo2_peak_ml_min": 3000.0, "vo2_peak_ml_kg_min": 40.0, "vo2_ml_kg_min": 35.0, "hr_max_bpm": 180.0,
        "hr_rest_bpm": 60.0, "hr_peak_bpm": 175.0, "ve_peak_l_min": 120.0, "mvv_l_min": 160.0, "fev1_l": 4.0,
        "q_l_min": 15.0, "pct_vo2_peak": 60.0, "spo2_pct": 97.0, "so2": 0.97, "sao2": 0.97, "svo2": 0.6,
        "so2_arterial": 0.97, "so2_venous": 0.6, "saturation": 0.97, "s": 0.75, "fio2": 0.2093,
        "cohb_fraction": 0.01, "methb_fraction": 0.005, "huefner_ml_g": 1.34, "hill_n": 2.7, "p50_mmhg": 26.8,
        "model": "severinghaus", "altitude_m": 0.0, "paco2_mmhg": 40.0, "pao2_alveolar_mmhg": 100.0,
        "aa_gradient_mmhg": 10.0, "ve_vco2_slope": 28.0, "ve_vco2_slope_whole_exercise": 28.0,
        "avo2_ml_dl": 12.0, "pvo2_mmhg": 30.0, "t_end_exercise_s": float(ex["t_s"].iloc[-1]),
        "window_breaths": 9, "k_sd": 4.0, "window_s": 30.0, "from_condition": "stpd", "to_condition": "btps",
        "measured": 30.0, "predicted": 40.0, "vo2_range_ml_min": 2500.0, "value": "male",
        "data": b"Time;VO2 (L/min);VCO2 (L/min);VE\n0:00;0,30;0,25;10\n0:03;0,32;0,27;11\n0:06;0,33;0,28;12\n",
        "file_name": "ramp.csv", "gas_unit": "auto", "time_format": "auto", "ve_condition": "auto",
        "hr_predicted_bpm": 180.0, "beta_blocker": False, "ve_vco2": 28.0, "vd_vt": 0.2, "vt1_t_s": 300.0,
        "reference_set": "friend2018", "o2_pulse_peak_ml_beat": 17.0,
    }
    out = []
    if name in scalars:
        out.append(scalars[name])
    if name in series:
        out.append(series[name])
    return tuple(out)


#: Public functions not walked, with the reason (they take records, files, or no range-named value).
NOT_WALKED: dict[str, str] = {
    "analysis.interpretation.heart_rate_recovery": "a heart-rate fall may be negative (HR still rising after exercise)",
    "analysis.interpretation.interpret_test": "takes the records of the same analysis",
    "analysis.interpretation.lag_correction": "takes loads of either unit (W or km/h) by the test's mode",
    "analysis.indices.point_values": "takes a row index of the averaged frame (checked in tests/analysis/indices)",
    "analysis.io.import_file": "reads a file: the same checks as import_bytes, which is walked",
    "analysis.indices.window_means": "takes a values series named 'values' (no unit in the name)",
    "analysis.indices.compute_indices": "takes the averaged frame and the peak record",
    "analysis.indices.threshold_values": "takes the averaged frame and a threshold pick record "
    "(window_s is checked in tests/analysis/results)",
    "analysis.oxygen.co2_carriage": "takes blood-point records (arterial, venous)",
    "analysis.oxygen.complete_blood_gas": "needs exactly two of pH, PCO2 and base excess",
    "analysis.oxygen.explore": "takes an oxygen-pathway record",
    "analysis.oxygen.oxygen_cascade": "takes blood-point records (arterial, capillary)",
    "analysis.oxygen.oxygen_pathway": "takes a comparison record",
    "analysis.oxygen.solve_forward": "takes a cascade-inputs record",
    "analysis.oxygen.curve_unloading_ml_dl": "takes a per-state conditions record",
    "analysis.oxygen.oxygen_comparison": "takes a list of state records",
    "analysis.pipeline.zones_for": "takes threshold and peak records",
    "analysis.progress.change_band": "takes a baseline value with a metric-specific unit",
    "analysis.simulation.case_inputs": "takes a simulated kind's name and a seed",
    "analysis.simulation.simulate_case": "takes a simulated kind's name and a seed",
    "analysis.thresholds.clear_override": "takes a threshold report record",
    "analysis.thresholds.override_threshold": "takes a threshold report record",
    "analysis.thresholds.pick_from_chart_point": "takes a chart point record",
}


def public_functions() -> Iterator[tuple[str, Callable[..., Any]]]:
    """``(qualified name, function)`` for each public function of the analysis packages."""
    seen: set[int] = set()
    for info in pkgutil.walk_packages(analysis.__path__, "analysis."):
        if any(part.startswith("_") for part in info.name.split(".")[1:]):
            continue
        module = importlib.import_module(info.name)
        if info.ispkg:
            names = list(getattr(module, "__all__", []))
        elif info.name.count(".") == 1:  # a top-level module: its own public functions
            names = [n for n, o in vars(module).items()
                     if not n.startswith("_") and inspect.isfunction(o) and o.__module__ == module.__name__]
        else:
            continue  # modules inside packages: covered through the package's __all__
        for name in names:
            obj = getattr(module, name, None)
            if inspect.isfunction(obj) and id(obj) not in seen:
                seen.add(id(obj))
                yield f"{info.name}.{name}", obj


def _call(fn: Callable[..., Any], kwargs: dict[str, Any]) -> Any:
    sig = inspect.signature(fn)
    args, kw = [], {}
    for p in sig.parameters.values():
        if p.name not in kwargs:
            continue
        if p.kind in (p.POSITIONAL_ONLY,):
            args.append(kwargs[p.name])
        else:
            kw[p.name] = kwargs[p.name]
    return fn(*args, **kw)


def _runs(fn: Callable[..., Any], kwargs: dict[str, Any]) -> bool:
    try:
        _call(fn, kwargs)
    except Exception:  # noqa: BLE001 - this example does not suit the function
        return False
    return True


def baseline(fn: Callable[..., Any]) -> dict[str, Any] | None:
    """Valid keyword arguments for the required parameters of ``fn``, or ``None``."""
    params = [p for p in inspect.signature(fn).parameters.values() if p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)]
    choices = {p.name: valid(p.name) for p in params if p.default is p.empty}
    if any(not c for c in choices.values()):
        return None
    for form in (0, 1):  # scalars first, then series where a name has them
        kwargs = {n: c[min(form, len(c) - 1)] for n, c in choices.items()}
        if _runs(fn, kwargs):
            return kwargs
    return None


def with_valid(fn: Callable[..., Any], base: dict[str, Any], name: str) -> dict[str, Any] | None:
    """``base`` plus a valid value for the optional parameter ``name`` (``None`` when none suits)."""
    if name in base:
        return dict(base)
    for value in valid(name):
        kwargs = {**base, name: value}
        if _runs(fn, kwargs):
            return kwargs
    return None


def _bad_like(good: Any, bad: Any) -> Any | None:
    """``bad`` in the form of ``good``: for a series one impossible value among valid ones (a
    missing value, NaN, is allowed in a series: it is a missing breath), else the scalar."""
    if isinstance(good, np.ndarray) and not isinstance(bad, str):
        if isinstance(bad, float) and math.isnan(bad):
            return None
        out = good.astype(float).copy()
        out[len(out) // 2] = bad
        return out
    return bad


def cases() -> Iterator[Any]:
    for qualified, fn in public_functions():
        checked = [p for p in inspect.signature(fn).parameters if out_of_range(p)]
        if not checked:
            continue
        base = baseline(fn)
        if base is None:
            yield pytest.param(qualified, fn, None, None, None, id=f"{qualified}-no-example")
            continue
        for name in checked:
            kwargs = with_valid(fn, base, name)
            if kwargs is None:
                continue
            for bad in out_of_range(name):
                value = _bad_like(kwargs[name], bad)
                if value is not None:
                    yield pytest.param(qualified, fn, kwargs, name, value, id=f"{qualified}-{name}={bad!r}")


def test_the_walk_reaches_the_public_api():
    # not a vacuous pass: the walk finds the public functions and checks most of those with a
    # range-named parameter (the rest are listed with a reason in NOT_WALKED)
    functions = dict(public_functions())
    assert len(functions) > 100
    checked = {c.values[0] for c in cases() if c.values[3] is not None}
    assert len(checked) >= 45
    assert {"analysis.io.import_bytes", "analysis.gas_conditions.volume_factor", "analysis.reference.friend_vo2max_ml_kg_min",
            "analysis.maximality.peak_values", "analysis.oxygen.saturation"} <= checked


@pytest.mark.parametrize(("qualified", "fn", "kwargs", "name", "bad"), list(cases()))
def test_out_of_range_parameters_are_refused(qualified, fn, kwargs, name, bad):
    if name is None:
        assert qualified in NOT_WALKED, f"{qualified}: no valid example call from VALID; add values or list it"
        return
    with pytest.raises(InvalidParameter):
        _call(fn, {**kwargs, name: bad})
