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


#: Reader-facing method sentence of the beta-blocker prediction (shown under ``methods``).
BRAWNER_METHOD = "164 - 0.72 × age for patients taking a beta-blocker (Brawner et al. 2004)"


def brawner_hr_max_bpm(*, age_y: float) -> float:
    """Predicted maximal heart rate of a patient taking a beta-blocker (Brawner's equation).

    Parameters
    ----------
    age_y : float, keyword-only
        Age, years.

    Returns
    -------
    float
        ``164 - 0.72 * age``, beats/min: an estimate for patients with coronary heart disease
        on beta-adrenergic blockade, where age-predicted equations for the general population
        overestimate the maximum.

    References
    ----------
    Brawner CA, Ehrman JK, Schairer JR, Cao JJ, Keteyian SJ. Predicting maximum heart rate
    among patients with coronary heart disease receiving beta-adrenergic blockade therapy.
    Am Heart J 2004;148:910-914 (equation from memory).

    Examples
    --------
    >>> round(brawner_hr_max_bpm(age_y=61), 1)
    120.1
    """
    age = number_in("age_y", age_y, 5, 110, "years")
    return 164.0 - 0.72 * age
