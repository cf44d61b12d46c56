"""Haemoglobin-oxygen dissociation curves: saturation from PO2, PO2 from saturation, P50.

Three models, chosen with ``model=``:

``"severinghaus"`` (default)
    Severinghaus (1979) Eq 1 on a *virtual* PO2: the measured PO2 is carried to 37 °C by
    integrating Eq 3 and to pH 7.40 by integrating Eq 4, then Eq 1 gives saturation. A specific
    CO2 effect at constant pH is added with a Kelman-style term (from memory). 2,3-BPG and base
    excess are not inputs of this model: non-default values are refused.
``"siggaard_andersen"``
    Siggaard-Andersen et al. (1984): pH, base excess, 2,3-BPG and temperature enter the curve's
    position and shape directly. PCO2 is not an input: CO2's own effect at constant pH is carried
    by base excess, so a non-default PCO2 is refused.
``"hill"``
    Hill equation with the caller's P50 and Hill coefficient, for altered affinity (variant
    haemoglobin, stored blood, carbon-monoxide scenarios). The P50 already describes the blood's
    conditions, so every other condition must stay at its default.

pH convention: ``ph`` is the pH as a blood-gas analyser reports it, measured at 37 °C. The
Severinghaus temperature coefficient (Eq 3) is the anaerobic one, which already contains the
pH change of a closed sample with temperature; the Siggaard-Andersen model takes the pH at the
blood's own temperature, obtained with the Rosenthal factor -0.0147 pH/°C (from memory).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from analysis.errors import InvalidParameter
from analysis.oxygen import _checks

#: A scalar or an array of them (the curve helpers work on both).
FloatOrArray = float | np.ndarray

#: Model names accepted by ``model=``.
MODELS: tuple[str, ...] = ("severinghaus", "siggaard_andersen", "hill")

#: Standard conditions of the human curve (Severinghaus 1979; Siggaard-Andersen 1984).
STANDARD = {
    "ph": 7.40,
    "temperature_c": 37.0,
    "pco2_mmhg": 40.0,
    "dpg_mmol_l": 5.0,
    "base_excess_mmol_l": 0.0,
}

#: Conditions each model applies; any other condition must keep its standard value.
MODEL_CONDITIONS: dict[str, tuple[str, ...]] = {
    "severinghaus": ("ph", "temperature_c", "pco2_mmhg"),
    "siggaard_andersen": ("ph", "temperature_c", "dpg_mmol_l", "base_excess_mmol_l"),
    "hill": (),
}

#: Hill coefficient used when ``hill_n`` is not given (common practice, about 2.7).
DEFAULT_HILL_N = 2.7

#: Change of blood pH with temperature in a closed sample, per °C (Rosenthal; from memory).
ROSENTHAL_DPH_DT = -0.0147

#: Kelman-style specific CO2 coefficient: log10 virtual PO2 += 0.06 log10(40 / PCO2) (from memory).
KELMAN_CO2_COEFFICIENT = 0.06

MMHG_PER_KPA = 7.500617

#: Caution shown beside any curve value.
CURVE_CAUTION = (
    "Model estimates from a published dissociation-curve model, not measurements. Tidemark is not a "
    "medical device; clinical decisions follow measured values (e.g. co-oximetry) and licensed practice, "
    "interpreted by qualified staff under local protocols."
)

_MODEL_SUGGESTION = {
    "dpg_mmol_l": "use model='siggaard_andersen', which takes 2,3-BPG",
    "base_excess_mmol_l": "use model='siggaard_andersen', which takes base excess",
    "pco2_mmhg": (
        "with model='siggaard_andersen' CO2's own effect enters through base excess at the "
        "given pH: give base_excess_mmol_l instead, or use model='severinghaus'"
    ),
    "ph": "with model='hill' the P50 must already describe the blood's pH: shift p50_mmhg instead",
    "temperature_c": "with model='hill' the P50 must already describe the blood's temperature: shift p50_mmhg instead",
}


@dataclass(frozen=True)
class _Curve:
    model: str
    ph: float
    temperature_c: float
    pco2_mmhg: float
    dpg_mmol_l: float
    base_excess_mmol_l: float
    p50_mmhg: float | None
    hill_n: float | None


def _curve(
    *,
    ph: float,
    temperature_c: float,
    pco2_mmhg: float,
    dpg_mmol_l: float,
    base_excess_mmol_l: float,
    model: str,
    p50_mmhg: float | None,
    hill_n: float | None,
) -> _Curve:
    """Validate every condition once and refuse those the model cannot apply."""
    if model not in MODELS:
        raise InvalidParameter("model", "one of " + ", ".join(repr(m) for m in MODELS), model)
    given = {
        "ph": _checks.scalar("ph", ph),
        "temperature_c": _checks.scalar("temperature_c", temperature_c),
        "pco2_mmhg": _checks.scalar("pco2_mmhg", pco2_mmhg),
        "dpg_mmol_l": _checks.scalar("dpg_mmol_l", dpg_mmol_l),
        "base_excess_mmol_l": _checks.scalar("base_excess_mmol_l", base_excess_mmol_l),
    }
    for name, value in given.items():
        if name not in MODEL_CONDITIONS[model] and abs(value - STANDARD[name]) > 1e-12:
            hint = _MODEL_SUGGESTION.get(name, "leave it at its standard value")
            if model == "hill" and name in ("dpg_mmol_l", "base_excess_mmol_l", "pco2_mmhg"):
                hint = "with model='hill' the P50 must already describe the blood: shift p50_mmhg instead"
            raise InvalidParameter(
                name,
                f"{STANDARD[name]:g} (the standard value) because model={model!r} does not apply it; {hint}",
                value,
            )
    if model == "hill":
        if p50_mmhg is None:
            raise InvalidParameter("p50_mmhg", "a P50 in mmHg when model='hill' (e.g. 26.8 for normal blood)", None)
        p50 = _checks.scalar("p50_mmhg", p50_mmhg)
        n = DEFAULT_HILL_N if hill_n is None else _checks.scalar("hill_n", hill_n)
    else:
        if p50_mmhg is not None or hill_n is not None:
            raise InvalidParameter(
                "p50_mmhg" if p50_mmhg is not None else "hill_n",
                "left out unless model='hill' (the other models compute their own P50)",
                p50_mmhg if p50_mmhg is not None else hill_n,
            )
        p50, n = None, None
    return _Curve(model, **given, p50_mmhg=p50, hill_n=n)


#: Arguments of the public curve functions that describe the blood and the model.
_CURVE_ARGS: tuple[str, ...] = (
    "ph", "temperature_c", "pco2_mmhg", "dpg_mmol_l", "base_excess_mmol_l", "model", "p50_mmhg", "hill_n",
)


def _curve_of(arguments: dict[str, object]) -> _Curve:
    """:func:`_curve` from a public function's arguments (its ``locals()`` on entry)."""
    return _curve(**{name: arguments[name] for name in _CURVE_ARGS})  # type: ignore[arg-type]


# --- Severinghaus 1979 -------------------------------------------------------------------

_RK4_STEPS = 24


def _sev_eq1(po2: np.ndarray) -> np.ndarray:
    """Severinghaus (1979) Eq 1 at standard conditions."""
    with np.errstate(divide="ignore", over="ignore"):
        return 1.0 / (23400.0 / (po2**3 + 150.0 * po2) + 1.0)


def _sev_eq2_ln(s: np.ndarray) -> np.ndarray:
    """Severinghaus (1979) Eq 2: ln of the standard PO2 (mmHg) at saturation ``s``."""
    return 0.385 * np.log(s / (1.0 - s)) + 3.32 - 1.0 / (72.0 * s) - 0.17 * s**6


def _sev_dlnp_dt(ln_p: np.ndarray) -> np.ndarray:
    """Severinghaus (1979) Eq 3: anaerobic d ln PO2 / dT per °C."""
    p = np.exp(ln_p)
    return 0.058 / ((0.243 * p / 100.0) ** 3.88 + 1.0) + 0.013


def _sev_dlnp_dph(ln_p: np.ndarray) -> np.ndarray:
    """Severinghaus (1979) Eq 4: Bohr coefficient d ln PO2 / d pH."""
    p = np.exp(ln_p)
    return (p / 26.6) ** 0.184 - 2.2


def _integrate(
    rate: Callable[[np.ndarray], np.ndarray], ln_p: np.ndarray, start: float, stop: float
) -> np.ndarray:
    """Carry ln PO2 along d ln PO2 / dz = rate(ln PO2) from z=start to z=stop (fixed-step RK4)."""
    if start == stop:
        return ln_p
    h = (stop - start) / _RK4_STEPS
    y = ln_p
    for _ in range(_RK4_STEPS):
        k1 = rate(y)
        k2 = rate(y + 0.5 * h * k1)
        k3 = rate(y + 0.5 * h * k2)
        k4 = rate(y + h * k3)
        y = y + h * (k1 + 2 * k2 + 2 * k3 + k4) / 6.0
    return y


def _sev_to_virtual(ln_p: np.ndarray, c: _Curve) -> np.ndarray:
    """Actual ln PO2 -> virtual (standard-condition) ln PO2: temperature, then pH, then CO2."""
    y = _integrate(_sev_dlnp_dt, ln_p, c.temperature_c, 37.0)
    y = _integrate(_sev_dlnp_dph, y, c.ph, 7.40)
    return y + KELMAN_CO2_COEFFICIENT * np.log(40.0 / c.pco2_mmhg)


def _sev_from_virtual(ln_v: np.ndarray, c: _Curve) -> np.ndarray:
    """Virtual ln PO2 -> actual ln PO2 (the same steps in reverse order)."""
    y = ln_v - KELMAN_CO2_COEFFICIENT * np.log(40.0 / c.pco2_mmhg)
    y = _integrate(_sev_dlnp_dph, y, 7.40, c.ph)
    return _integrate(_sev_dlnp_dt, y, 37.0, c.temperature_c)


# --- Siggaard-Andersen 1984 --------------------------------------------------------------

_SA_Y0 = 1.875
_SA_K = 0.5343


def _sa_params(c: _Curve) -> tuple[float, float]:
    """Return (x0, h) of the Siggaard-Andersen (1984) model for these conditions."""
    ph_at_t = c.ph + ROSENTHAL_DPH_DT * (c.temperature_c - 37.0)
    a = 1.04 * (7.4 - ph_at_t) + 0.005 * c.base_excess_mmol_l + 0.07 * (c.dpg_mmol_l - 5.0)
    b = 0.055 * ((c.temperature_c + 273.15) - 310.15)
    return 1.946 + a + b, 3.5 + a


def _sa_from_x(x: FloatOrArray, x0: float, h: float) -> FloatOrArray:
    """Siggaard-Andersen saturation at x = ln(PO2 / kPa) (works on floats and arrays)."""
    y = _SA_Y0 + (x - x0) + h * np.tanh(_SA_K * (x - x0))
    return 0.5 * (1.0 + np.tanh(0.5 * y))  # logistic, without overflow


def _sa_saturation(po2: np.ndarray, c: _Curve) -> np.ndarray:
    x0, h = _sa_params(c)
    out = np.zeros_like(po2)
    pos = po2 > 0
    out[pos] = _sa_from_x(np.log(po2[pos]) - np.log(MMHG_PER_KPA), x0, h)
    return out


def _saturation_at(po2: float, c: _Curve) -> float:
    """Saturation at one PO2 on an already validated curve (the root finders' fast path)."""
    if c.model == "siggaard_andersen":
        if po2 <= 0.0:
            return 0.0
        x0, h = _sa_params(c)
        return float(_sa_from_x(math.log(po2) - math.log(MMHG_PER_KPA), x0, h))
    return float(_saturation(np.array([float(po2)]), c)[0])


def _sa_po2(s: np.ndarray, c: _Curve) -> np.ndarray:
    """Exact inverse: solve x - x0 + h tanh(k (x - x0)) = y - y0 for x (monotone in x)."""
    x0, h = _sa_params(c)
    target = np.log(s / (1.0 - s)) - _SA_Y0
    # |h tanh| <= |h| brackets the root; bisection then two Newton polishes.
    lo = target - abs(h) - 1.0
    hi = target + abs(h) + 1.0
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        above = mid + h * np.tanh(_SA_K * mid) > target
        hi = np.where(above, mid, hi)
        lo = np.where(above, lo, mid)
    d = 0.5 * (lo + hi)
    for _ in range(2):
        f = d + h * np.tanh(_SA_K * d) - target
        d = d - f / (1.0 + h * _SA_K / np.cosh(_SA_K * d) ** 2)
    return np.exp(d + x0) * MMHG_PER_KPA


# --- Public functions --------------------------------------------------------------------


def saturation(
    po2_mmhg: float | np.ndarray,
    *,
    ph: float = 7.40,
    temperature_c: float = 37.0,
    pco2_mmhg: float = 40.0,
    dpg_mmol_l: float = 5.0,
    base_excess_mmol_l: float = 0.0,
    model: str = "severinghaus",
    p50_mmhg: float | None = None,
    hill_n: float | None = None,
) -> float | np.ndarray:
    """Haemoglobin oxygen saturation (fraction 0-1) at a PO2 under given blood conditions.

    Parameters
    ----------
    po2_mmhg : float or array_like
        Oxygen partial pressure in mmHg (0-2000). Scalar in, float out; arrays are vectorised.
    ph : float, default 7.40
        Blood pH as measured at 37 °C (6.8-7.8).
    temperature_c : float, default 37.0
        Blood temperature in °C (20-45).
    pco2_mmhg : float, default 40.0
        CO2 partial pressure in mmHg; applied by ``"severinghaus"`` only (Kelman-style term).
    dpg_mmol_l : float, default 5.0
        Erythrocyte 2,3-BPG in mmol/L; applied by ``"siggaard_andersen"`` only.
    base_excess_mmol_l : float, default 0.0
        Blood base excess in mmol/L; applied by ``"siggaard_andersen"`` only.
    model : {"severinghaus", "siggaard_andersen", "hill"}
        Curve model (see the module notes). Severinghaus is the default because Eq 1 is the
        closed-form standard human curve the other models are fitted to (within ±0.0055 S).
    p50_mmhg, hill_n : float, optional
        P50 in mmHg and Hill coefficient (default 2.7) for ``model="hill"`` only.

    Returns
    -------
    float or numpy.ndarray
        Saturation fraction in [0, 1].

    Raises
    ------
    InvalidParameter
        A value out of range, or a condition the chosen model does not apply given a
        non-standard value (the message names the model that does apply it).

    Notes
    -----
    Severinghaus: ln PO2 is integrated along Eq 3 (d ln PO2/dT = 0.058 / ((0.243 PO2/100)^3.88
    + 1) + 0.013) from the blood temperature to 37 °C, then along Eq 4 (d ln PO2/d pH =
    (PO2/26.6)^0.184 - 2.2) from the blood pH to 7.40, then multiplied by (40/PCO2)^0.06;
    Eq 1, S = 1 / (23400 / (PO2^3 + 150 PO2) + 1), is applied to the result.

    Siggaard-Andersen: y - y0 = x - x0 + h tanh(k (x - x0)) with y = ln(S/(1-S)),
    x = ln(PO2/kPa), y0 = 1.875, k = 0.5343, h = 3.5 + a, x0 = 1.946 + a + b,
    a = 1.04 (7.4 - pH_T) + 0.005 BE + 0.07 (DPG - 5), b = 0.055 (T/K - 310.15), where
    pH_T = pH - 0.0147 (T - 37).

    Hill: S = PO2^n / (PO2^n + P50^n).

    References
    ----------
    Severinghaus JW (1979). Simple, accurate equations for human blood O2 dissociation
    computations. J Appl Physiol 46:599-602.
    Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M (1984). A mathematical
    model of the hemoglobin-oxygen dissociation curve of human blood and of the oxygen partial
    pressure as a function of temperature. Clin Chem 30:1646-1651.
    Kelman GR (1966). Digital computer subroutine for the conversion of oxygen tension into
    saturation. J Appl Physiol 21:1375-1376 (CO2 coefficient, from memory).

    Examples
    --------
    >>> round(saturation(40.0), 3)
    0.749
    """
    curve = _curve_of(locals())
    po2 = np.atleast_1d(_checks.array("po2_mmhg", po2_mmhg)).astype(float)
    out = _saturation(po2, curve)
    return _checks.as_output(out.reshape(np.shape(po2_mmhg)), po2_mmhg)


def _saturation(po2: np.ndarray, c: _Curve) -> np.ndarray:
    if c.model == "siggaard_andersen":
        return _sa_saturation(po2, c)
    if c.model == "hill":
        assert c.p50_mmhg is not None and c.hill_n is not None
        ratio = (po2 / c.p50_mmhg) ** c.hill_n
        return ratio / (1.0 + ratio)
    out = np.zeros_like(po2)
    pos = po2 > 0
    virtual = np.exp(_sev_to_virtual(np.log(po2[pos]), c))
    out[pos] = _sev_eq1(virtual)
    return out


def po2_at_saturation(
    s: float | np.ndarray,
    *,
    ph: float = 7.40,
    temperature_c: float = 37.0,
    pco2_mmhg: float = 40.0,
    dpg_mmol_l: float = 5.0,
    base_excess_mmol_l: float = 0.0,
    model: str = "severinghaus",
    p50_mmhg: float | None = None,
    hill_n: float | None = None,
) -> float | np.ndarray:
    """PO2 (mmHg) at which the chosen curve reaches saturation ``s`` under these conditions.

    Parameters
    ----------
    s : float or array_like
        Saturation fraction strictly between 0 and 1.
    ph, temperature_c, pco2_mmhg, dpg_mmol_l, base_excess_mmol_l, model, p50_mmhg, hill_n
        As in :func:`saturation`.

    Returns
    -------
    float or numpy.ndarray
        PO2 in mmHg.

    Raises
    ------
    InvalidParameter
        ``s`` outside (0, 1) or a condition refused as in :func:`saturation`.

    Notes
    -----
    Severinghaus: Eq 2, ln PO2 = 0.385 ln(1/(1/S - 1)) + 3.32 - 1/(72 S) - 0.17 S^6, gives the
    standard PO2, which is carried back to the blood's conditions along Eq 4 and Eq 3. Eq 2 is
    Severinghaus' own approximate inverse of Eq 1 (not exact). Siggaard-Andersen and Hill are
    inverted exactly (bisection then Newton for Siggaard-Andersen; closed form for Hill).

    References
    ----------
    Severinghaus JW (1979). J Appl Physiol 46:599-602 (Eq 2-4).
    Siggaard-Andersen O et al. (1984). Clin Chem 30:1646-1651.

    Examples
    --------
    >>> round(po2_at_saturation(0.5), 1)
    26.8
    """
    curve = _curve_of(locals())
    sat = np.atleast_1d(_checks.fraction_open("s", s)).astype(float)
    out = _po2(sat, curve)
    return _checks.as_output(out.reshape(np.shape(s)), s)


def _po2(sat: np.ndarray, c: _Curve) -> np.ndarray:
    if c.model == "siggaard_andersen":
        return _sa_po2(sat, c)
    if c.model == "hill":
        assert c.p50_mmhg is not None and c.hill_n is not None
        return c.p50_mmhg * (sat / (1.0 - sat)) ** (1.0 / c.hill_n)
    return np.exp(_sev_from_virtual(_sev_eq2_ln(sat), c))


def p50(
    *,
    ph: float = 7.40,
    temperature_c: float = 37.0,
    pco2_mmhg: float = 40.0,
    dpg_mmol_l: float = 5.0,
    base_excess_mmol_l: float = 0.0,
    model: str = "severinghaus",
    p50_mmhg: float | None = None,
    hill_n: float | None = None,
) -> float:
    """PO2 (mmHg) at 50 % saturation under these conditions (same arguments as :func:`saturation`).

    References
    ----------
    Severinghaus JW (1979). J Appl Physiol 46:599-602.
    Siggaard-Andersen O et al. (1984). Clin Chem 30:1646-1651.

    Examples
    --------
    >>> round(p50(model="siggaard_andersen"), 1)
    26.8
    """
    return float(_po2(np.array([0.5]), _curve_of(locals()))[0])
