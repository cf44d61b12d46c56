"""Suites of simulated tests with their truth: ``simulation_suite(kinds, seeds, noise_levels)``.

A case is one ``(kind, seed, noise)``: the same kind and seed give the same person, protocol
and events at every noise level (only the noise size changes), so noise levels can be
compared case by case. Half of the cases are marked ``foreign``: an evaluation writes them
with :func:`analysis.simulation.foreign.foreign_export_bytes` and reads them back through the
importer, as a lab's own exports would arrive.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, fields
from typing import Any

from analysis.errors import require
from analysis.session import Session
from analysis.simulation.kinds import ALL_KINDS, case_inputs
from analysis.simulation.simulate import simulate_session

#: Default noise levels of a suite (0.5 quiet, 1 realistic, 2 noisy).
NOISE_LEVELS: tuple[float, ...] = (0.5, 1.0, 2.0)


@dataclass(frozen=True, kw_only=True)
class CaseTruth:
    """The truth of one simulated test, read from its ``truth_*`` metadata.

    Attributes
    ----------
    vt1_vo2_ml_min, vt1_t_s : float or None
        VO2 (mL/min) and time (s) at VT1; ``None`` when the test stops before it.
    vt2_vo2_ml_min, vt2_t_s : float or None
        The same at VT2 (respiratory compensation point); ``None`` where there is none.
    vo2max_ml_min : float
        The person's VO2max, mL/min (the scale of threshold errors).
    vo2peak_ml_min : float
        Noise-free VO2 at the end of exercise, mL/min (equals VO2max in maximal tests).
    ve_vco2_slope : float
        Planted VE/VCO2 slope below VT2 (model parameter).
    vo2peak_30s_ml_min : float or None
        Mean noise-free VO2 over the last 30 s of exercise (what a 30-s peak average of perfect
        data gives; below ``vo2peak_ml_min`` on a ramp).
    ve_vco2_slope_to_vt2 : float or None
        Least-squares VE/VCO2 slope of the noise-free series from exercise start to VT2.
    ve_vco2_slope_whole_exercise : float or None
        The same over the whole incremental phase.
    oscillation_present : bool
        Oscillating ventilation lasting >= 60 % of the incremental phase.
    oscillation_period_s, oscillation_amplitude_fraction : float or None
        Period (s) and half swing (fraction of mean VE) when the ventilation oscillates.
    spo2_rest_pct, spo2_min_pct : float or None
        Noise-free SpO2 at rest and its lowest value, %.
    mvv_l_min : float or None
        MVV (measured, or FEV1 x 40), L/min.
    breathing_reserve_pct : float or None
        (MVV - VE at peak) / MVV x 100 on the noise-free series.
    """

    vt1_vo2_ml_min: float | None
    vt1_t_s: float | None
    vt2_vo2_ml_min: float | None
    vt2_t_s: float | None
    vo2max_ml_min: float
    vo2peak_ml_min: float
    ve_vco2_slope: float
    vo2peak_30s_ml_min: float | None = None
    ve_vco2_slope_to_vt2: float | None = None
    ve_vco2_slope_whole_exercise: float | None = None
    oscillation_present: bool = False
    oscillation_period_s: float | None = None
    oscillation_amplitude_fraction: float | None = None
    spo2_rest_pct: float | None = None
    spo2_min_pct: float | None = None
    mvv_l_min: float | None = None
    breathing_reserve_pct: float | None = None

    @classmethod
    def from_meta(cls, meta: dict[str, Any]) -> CaseTruth:
        """Read the truth from a simulated session's metadata (``truth_<field>`` keys)."""

        def number(key: str) -> float | None:
            value = meta.get(f"truth_{key}")
            if value is None or value == "":
                return None
            value = float(value)
            return None if not math.isfinite(value) else value

        values: dict[str, Any] = {f.name: number(f.name) for f in fields(cls)}
        values["oscillation_present"] = bool(values["oscillation_present"])
        require(values["vo2max_ml_min"] is not None, "meta", "a simulated session (truth_vo2max_ml_min)", "no truth")
        return cls(**values)


@dataclass(frozen=True)
class SimulatedCase:
    """One case of a suite.

    Attributes
    ----------
    kind : str
    seed : int
    noise : float
    foreign : bool
        True for the half of the suite meant to go through a foreign export and the importer.
    session : Session
        The simulated session (truth in its ``truth_*`` metadata).
    truth : CaseTruth
    """

    kind: str
    seed: int
    noise: float
    foreign: bool
    session: Session
    truth: CaseTruth

    @property
    def label(self) -> str:
        """``kind/seed/noise`` — a stable name for tables and test ids."""
        return f"{self.kind}/s{self.seed}/n{self.noise:g}"


def simulate_case(kind: str, seed: int, *, noise: float = 1.0, clean: bool = False) -> Session:
    """Simulate one case of a kind.

    Parameters
    ----------
    kind : str
        One of :data:`analysis.simulation.kinds.ALL_KINDS`.
    seed : int
        Whole number >= 0.
    noise : float, keyword-only
        Breath-noise scale (0 noise-free).
    clean : bool, keyword-only
        True: no artifacts, no breath events and no cart noise (the model series behind the
        case; with ``noise=0`` the noise-free series).

    Returns
    -------
    Session
    """
    inputs = case_inputs(kind, seed)
    return simulate_session(
        inputs.profile,
        inputs.protocol,
        seed=int(seed),
        noise=noise,
        artifacts=0 if clean else inputs.artifacts,
        test_date="2026-03-02",
        notes=f"Simulated test of kind {kind} (fictional person).",
        extras=inputs.extras,
        events=None if clean else inputs.events,
        meta_extra=inputs.meta_extra,
        cart_noise=None if clean else inputs.cart_noise,
    )


def simulation_suite(
    kinds: Iterable[str] = ALL_KINDS,
    seeds: Iterable[int] = range(10),
    noise_levels: Iterable[float] = NOISE_LEVELS,
) -> Iterator[SimulatedCase]:
    """Yield every ``(kind, seed, noise)`` case, in that nesting order.

    Parameters
    ----------
    kinds : iterable of str
        Kinds of :data:`analysis.simulation.kinds.ALL_KINDS` (default all).
    seeds : iterable of int
        Seeds per kind (default 0-9).
    noise_levels : iterable of float
        Noise scales (default 0.5, 1 and 2).

    Yields
    ------
    SimulatedCase
        ``foreign`` is True when ``seed + position of the noise level`` is odd, so each kind
        has half of its cases (within one) marked.

    Examples
    --------
    >>> cases = list(simulation_suite(["rehab"], seeds=[0, 1], noise_levels=[1.0]))
    >>> [c.label for c in cases], [c.foreign for c in cases]
    (['rehab/s0/n1', 'rehab/s1/n1'], [False, True])
    """
    kinds = list(kinds)
    seeds = [int(s) for s in seeds]
    levels = [float(x) for x in noise_levels]
    for kind in kinds:
        require(kind in ALL_KINDS, "kinds", f"kinds among {ALL_KINDS}", kind)
    for kind in kinds:
        for seed in seeds:
            for j, noise in enumerate(levels):
                session = simulate_case(kind, seed, noise=noise)
                yield SimulatedCase(
                    kind=kind,
                    seed=seed,
                    noise=noise,
                    foreign=bool((seed + j) % 2),
                    session=session,
                    truth=CaseTruth.from_meta(session.meta),
                )


def truth_table(cases: Iterable[SimulatedCase]) -> list[dict[str, Any]]:
    """One flat row per case (kind, seed, noise, foreign and the truth fields)."""
    rows = []
    for case in cases:
        row: dict[str, Any] = {"kind": case.kind, "seed": case.seed, "noise": case.noise, "foreign": case.foreign}
        row.update({f.name: getattr(case.truth, f.name) for f in fields(CaseTruth)})
        rows.append(row)
    return rows


__all__ = ["NOISE_LEVELS", "CaseTruth", "SimulatedCase", "simulate_case", "simulation_suite", "truth_table"]
