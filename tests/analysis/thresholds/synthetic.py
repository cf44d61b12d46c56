"""Small synthetic ramp tests with planted thresholds (independent of the project simulator).

Piecewise-linear relations, stated here so a test can be checked by hand: VO2 follows the
load with a first-order lag; VCO2 has slope 0.95 against VO2 below VT1 and ``slope_above``
above; VE is linear in VCO2 with an intercept, ``rc_factor`` times steeper above VT2; PETCO2
rises to VT1, is level to VT2 and falls after; PETO2 from the alveolar gas equation with
PETCO2 (textbook form, from memory). Breath noise is Gaussian with fixed seeds.
"""

from __future__ import annotations

import numpy as np
import pandas as pd


def ramp_test(
    *,
    seed: int = 0,
    noise: float = 1.0,
    vo2_rest: float = 350.0,
    vo2max: float = 3200.0,
    vt1_vo2: float = 1700.0,
    vt2_vo2: float | None = 2600.0,
    ramp_w_per_min: float = 25.0,
    slope_above: float = 1.35,
    rc_factor: float = 1.6,
    rest_s: float = 120.0,
    warmup_s: float = 120.0,
    recovery_s: float = 120.0,
) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    warm_w = 20.0
    w_max = (vo2max - vo2_rest) / 10.0
    ramp_s = (w_max - warm_w) / ramp_w_per_min * 60.0 + 40.0
    total = rest_s + warmup_s + ramp_s + recovery_s
    # breath times: ~ every 3.5 s at rest to ~1.5 s at peak
    t = [0.0]
    while t[-1] < total:
        frac = min(max((t[-1] - rest_s) / (warmup_s + ramp_s), 0.0), 1.0)
        t.append(t[-1] + (3.5 - 2.0 * frac) * rng.uniform(0.8, 1.2))
    t = np.array(t[1:])
    t = t[t < total]
    load = np.where(t < rest_s, 0.0, warm_w)
    in_ramp = (t >= rest_s + warmup_s) & (t < rest_s + warmup_s + ramp_s)
    load = np.where(in_ramp, warm_w + ramp_w_per_min * (t - rest_s - warmup_s) / 60.0, load)
    end = t >= rest_s + warmup_s + ramp_s
    load = np.where(end, warm_w, load)
    demand = np.minimum(vo2_rest + 10.0 * load, vo2max)
    demand = np.where(end, vo2_rest + 10 * warm_w, demand)
    # first-order lag, tau 35 s
    vo2 = np.empty_like(t)
    x = vo2_rest
    prev = 0.0
    for i, (ti, u) in enumerate(zip(t, demand)):
        a = np.exp(-(ti - prev) / 35.0)
        x = u + (x - u) * a
        vo2[i] = x
        prev = ti
    vco2_rest = 0.8 * vo2_rest
    vco2_vt1 = vco2_rest + 0.95 * (vt1_vo2 - vo2_rest)
    vco2 = np.where(vo2 <= vt1_vo2, vco2_rest + 0.95 * (vo2 - vo2_rest), vco2_vt1 + slope_above * (vo2 - vt1_vo2))
    ve = 3.0 + 26.0 * vco2 / 1000.0
    if vt2_vo2 is not None:
        vco2_vt2 = vco2_vt1 + slope_above * (vt2_vo2 - vt1_vo2)
        ve = ve + (rc_factor - 1) * 26.0 * np.maximum(vco2 - vco2_vt2, 0.0) / 1000.0
    petco2 = 36.0 + 5.0 * np.clip((vo2 - vo2_rest) / (vt1_vo2 - vo2_rest), 0, 1)
    if vt2_vo2 is not None:
        petco2 = petco2 - 6.0 * np.clip((vo2 - vt2_vo2) / (vo2max - vt2_vo2), 0, None)
    rer = vco2 / vo2
    peto2 = 0.2093 * (760 - 47) - petco2 * (0.2093 + (1 - 0.2093) / rer)
    phase = np.where(t < rest_s, "rest", np.where(t < rest_s + warmup_s, "warmup", np.where(end, "recovery", "exercise")))
    n = t.size
    frame = pd.DataFrame(
        {
            "t_s": t,
            "vo2_ml_min": vo2 * (1 + noise * 0.06 * rng.standard_normal(n)),
            "vco2_ml_min": vco2 * (1 + noise * 0.06 * rng.standard_normal(n)),
            "ve_l_min": ve * (1 + noise * 0.05 * rng.standard_normal(n)),
            "work_w": load,
            "peto2_mmhg": peto2 + noise * 1.5 * rng.standard_normal(n),
            "petco2_mmhg": petco2 + noise * 1.0 * rng.standard_normal(n),
            "phase": phase,
        }
    )
    frame.insert(0, "source_row", np.arange(2, n + 2))
    return frame
