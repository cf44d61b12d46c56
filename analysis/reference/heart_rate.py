"""Predicted maximal heart rate."""

from __future__ import annotations

from analysis.reference._validate import number_in

#: Reader-facing method sentence (shown under ``methods``).
TANAKA_METHOD = "208 - 0.7 × age (Tanaka et al. 2001)"


def tanaka_hr_max_bpm(*, age_y: float) -> float:
    """Age-predicted maximal heart rate by Tanaka's equation.

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years.

    Returns
    -------
    float
        ``208 - 0.7 * age``, beats/min. Individual values scatter about ±10 beats/min around
        the prediction (common practice), so it is an estimate only.

    References
    ----------
    Tanaka H, Monahan KD, Seals DR. Age-predicted maximal heart rate revisited. J Am Coll
    Cardiol 2001;37:153-156 (from memory).

    Examples
    --------
    >>> tanaka_hr_max_bpm(age_y=40)
    180.0
    """
    age = number_in("age_y", age_y, 5, 110, "years")
    return 208.0 - 0.7 * age
