"""Helpers for the import tests: small plausible breath tables built in code (invented data)."""

from __future__ import annotations

import numpy as np
import pandas as pd


def breath_table(n: int = 40, *, seed: int = 0, step_s: float = 3.0) -> pd.DataFrame:
    """A ramp test in canonical units: VO2 300 -> 2800 mL/min, RER 0.82 -> 1.12 (invented)."""
    rng = np.random.default_rng(seed)
    t = np.cumsum(np.full(n, step_s) + rng.uniform(-0.5, 0.5, n)) - step_s
    frac = np.linspace(0, 1, n)
    vo2 = 300 + 2500 * frac + rng.normal(0, 30, n)
    rer = 0.82 + 0.30 * frac
    vco2 = vo2 * rer
    ve = vco2 / 1000 * 28 + rng.normal(0, 0.5, n)
    hr = 70 + 110 * frac
    work = np.round(250 * frac / 5) * 5
    return pd.DataFrame(
        {
            "t_s": np.round(t, 2),
            "vo2_ml_min": np.round(vo2, 1),
            "vco2_ml_min": np.round(vco2, 1),
            "ve_l_min": np.round(ve, 2),
            "hr_bpm": np.round(hr),
            "work_w": work,
        }
    )


def to_text(
    df: pd.DataFrame,
    *,
    headers: dict[str, str] | None = None,
    sep: str = ",",
    decimal: str = ".",
    before: str = "",
    after: str = "",
) -> bytes:
    """Render ``df`` as a delimited export with the given header spellings."""
    renamed = df.rename(columns=headers or {})
    body = renamed.to_csv(index=False, sep=sep, decimal=decimal, lineterminator="\n")
    return (before + body + after).encode("utf-8")

