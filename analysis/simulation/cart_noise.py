"""Breath noise as real carts record it, beyond the base model's proportional noise
(:class:`CartNoise`), and the function that adds it to simulated breaths.

The base simulator's breath noise is proportional to the signal and Gaussian. Breath-by-breath
records of real carts differ in three ways that matter for threshold detection (see
``docs/simulation.md``, "Cart noise"):

* a part of the VO2 and VCO2 noise does not scale with the signal (changes of the lung's
  end-expiratory volume move gas in and out of the lung store whatever the metabolic rate),
  so a person with a small VO2 has a larger relative noise;
* breath volumes have heavier tails than a Gaussian (irregular breaths: deep, shallow,
  interrupted);
* the breathing pattern wanders over tens of seconds: a spell of slightly deeper breathing
  raises VE and, as CO2 is washed out of the stores, VCO2 — with no change in metabolism.

Everything scales with the session's ``noise`` (0: none). Defaults are neutral.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from analysis import columns as C
from analysis.simulation.profiles import _in


@dataclass(frozen=True, kw_only=True)
class CartNoise:
    """Breath noise of a real cart, on top of the base model's proportional noise.

    Parameters
    ----------
    gas_floor_sd_ml_min : float
        SD of an additive VO2 noise per breath at ``noise=1``, mL/min (0 none). VCO2 gets
        ``floor_vco2_ratio`` of it, correlated ``floor_correlation`` with the VO2 part.
    floor_vco2_ratio : float
        VCO2's additive SD as a fraction of VO2's.
    floor_correlation : float
        Correlation of the additive VO2 and VCO2 parts (a shared lung-volume term).
    irregular_share : float
        Share of breaths that are irregular: their breath-volume noise is ``irregular_scale``
        times the usual (0 none).
    irregular_scale : float
        How much larger the volume noise of an irregular breath is.
    wander_sd : float
        SD of the slow wander of the breathing pattern, fraction of VE at ``noise=1`` (0 none).
    wander_tau_s : float
        Correlation time of the wander (first-order autoregressive process), s.
    wander_vco2_gain : float
        Share of the VE wander that VCO2 follows (CO2 washed out of or kept in the stores).
    wander_vo2_gain : float
        Share of the VE wander that VO2 follows (O2 in the lung store).

    Notes
    -----
    Sizes are plausible values from memory, not fitted to any data set: breath-by-breath VO2
    noise of real carts of the order of 50-150 mL/min largely independent of the work rate
    (Lamarra et al. 1987, from memory); an irregular breath in 20-30 (common practice);
    ventilation wandering by some percent over tens of seconds at constant work (common
    practice).

    References
    ----------
    Lamarra N, Whipp BJ, Ward SA, Wasserman K (1987). Effect of interbreath fluctuations on
    characterizing exercise gas exchange kinetics. J Appl Physiol 62:2003-2012 (from memory).
    """

    gas_floor_sd_ml_min: float = 0.0
    floor_vco2_ratio: float = 0.85
    floor_correlation: float = 0.7
    irregular_share: float = 0.0
    irregular_scale: float = 2.5
    wander_sd: float = 0.0
    wander_tau_s: float = 25.0
    wander_vco2_gain: float = 0.5
    wander_vo2_gain: float = 0.15

    def __post_init__(self) -> None:
        _in("gas_floor_sd_ml_min", self.gas_floor_sd_ml_min, 0, 300, "mL/min")
        _in("floor_vco2_ratio", self.floor_vco2_ratio, 0, 1.5)
        _in("floor_correlation", self.floor_correlation, 0, 1)
        _in("irregular_share", self.irregular_share, 0, 0.5)
        _in("irregular_scale", self.irregular_scale, 1, 6)
        _in("wander_sd", self.wander_sd, 0, 0.3)
        _in("wander_tau_s", self.wander_tau_s, 3, 300, "s")
        _in("wander_vco2_gain", self.wander_vco2_gain, 0, 1.2)
        _in("wander_vo2_gain", self.wander_vo2_gain, 0, 1)

    @property
    def any(self) -> bool:
        """True when the noise adds anything."""
        return bool(self.gas_floor_sd_ml_min or self.irregular_share or self.wander_sd)


def wander(t_s: np.ndarray, *, sd: float, tau_s: float, rng: np.random.Generator) -> np.ndarray:
    """A stationary first-order autoregressive process at times ``t_s`` (any spacing):
    ``w_k = a_k w_{k-1} + sqrt(1 - a_k^2) sd e_k`` with ``a_k = exp(-(t_k - t_{k-1}) / tau)``."""
    t = np.asarray(t_s, dtype=float)
    out = np.zeros(t.size)
    if t.size == 0 or sd == 0:
        return out
    e = rng.standard_normal(t.size)
    a = np.exp(-np.diff(t, prepend=t[0]) / tau_s)
    out[0] = sd * e[0]
    for k in range(1, t.size):  # a loop over breaths (a few thousand at most)
        out[k] = a[k] * out[k - 1] + np.sqrt(1.0 - a[k] ** 2) * sd * e[k]
    return out


def add_cart_noise(
    channels: dict[str, np.ndarray],
    t_s: np.ndarray,
    spec: CartNoise,
    *,
    noise: float,
    volume_sd: float,
    volume_to_gas: float,
    rng: np.random.Generator,
) -> dict[str, np.ndarray]:
    """Multiply and add the cart noise to breath values (keys ``ve``, ``vo2``, ``vco2``,
    ``petco2``: arrays of one value per breath, already carrying the base noise).

    Parameters
    ----------
    channels : dict of str to ndarray
        ``ve`` L/min, ``vo2`` and ``vco2`` mL/min, ``petco2`` mmHg, one value per breath.
    t_s : ndarray
        Breath times, s.
    spec : CartNoise
    noise : float, keyword-only
        The session's noise scale.
    volume_sd, volume_to_gas : float, keyword-only
        The base model's breath-volume SD and the share of it the gases carry (the irregular
        breaths add to that term).
    rng : numpy.random.Generator, keyword-only
        Its own stream (the base noise's draws stay as they were).

    Returns
    -------
    dict of str to ndarray
        New arrays; VE, VO2 and VCO2 kept inside the flag limits of :mod:`analysis.columns`
        (a file stays readable), VO2 at or above half its value before the floor and each
        breath's RER within 0.6-1.6 times its value before the floor.
    """
    n = len(t_s)
    ve = np.array(channels["ve"], dtype=float, copy=True)
    vo2 = np.array(channels["vo2"], dtype=float, copy=True)
    vco2 = np.array(channels["vco2"], dtype=float, copy=True)
    petco2 = np.array(channels["petco2"], dtype=float, copy=True)
    z = rng.standard_normal((3, n))
    irregular = rng.random(n) < spec.irregular_share
    if noise > 0 and irregular.any():
        extra = np.sqrt(spec.irregular_scale**2 - 1.0) * volume_sd * noise * z[0]
        f_vol = np.where(irregular, np.clip(1.0 + extra, 0.3, 3.0), 1.0)
        ve *= f_vol
        vo2 *= np.where(irregular, np.clip(1.0 + volume_to_gas * extra, 0.3, 3.0), 1.0)
        vco2 *= np.where(irregular, np.clip(1.0 + volume_to_gas * extra, 0.3, 3.0), 1.0)
    w = wander(t_s, sd=spec.wander_sd * noise, tau_s=spec.wander_tau_s, rng=rng)
    ve *= 1.0 + w
    vco2 *= 1.0 + spec.wander_vco2_gain * w
    vo2 *= 1.0 + spec.wander_vo2_gain * w
    petco2 *= 1.0 - 0.3 * spec.wander_vco2_gain * w  # deeper breathing lowers PETCO2
    if spec.gas_floor_sd_ml_min and noise > 0:
        sd = spec.gas_floor_sd_ml_min * noise
        rho = spec.floor_correlation
        rer = vco2 / vo2
        vo2 = np.maximum(vo2 + sd * z[1], 0.5 * vo2)
        own = rho * z[1] + np.sqrt(1.0 - rho**2) * z[2]
        # a breath's RER stays within 0.6-1.6 x its value before the floor (a person's breath)
        vco2 = np.clip(vco2 + spec.floor_vco2_ratio * sd * own, 0.6 * rer * vo2, 1.6 * rer * vo2)
    out = {"ve": ve, "vo2": vo2, "vco2": vco2, "petco2": petco2}
    for key, name in (("ve", C.VE_L_MIN), ("vo2", C.VO2_ML_MIN), ("vco2", C.VCO2_ML_MIN), ("petco2", C.PETCO2_MMHG)):
        column = C.COLUMNS[name]
        low = -np.inf if column.flag_below is None else 1.05 * column.flag_below
        high = np.inf if column.flag_above is None else 0.95 * column.flag_above
        out[key] = np.clip(out[key], low, high)
    return out
