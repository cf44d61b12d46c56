"""Chronotropic response: how much of the predicted heart-rate reserve the test used."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from analysis.errors import require
from analysis.interpretation.flags import Flag, flag
from analysis.records import described
from analysis.reference.heart_rate import brawner_hr_max_bpm, tanaka_hr_max_bpm

#: Chronotropic index below this is abnormal without beta-blockade (Lauer et al. 1996/1999;
#: Khan et al. 2005 — from memory).
CI_LIMIT = 0.80
#: Chronotropic index below this is abnormal under beta-blockade (Khan et al. 2005, from memory).
CI_LIMIT_BETA_BLOCKER = 0.62
CI_SOURCE = "Lauer et al. 1996/1999; Khan et al. 2005 (from memory)"

CHRONOTROPIC_METHOD = (
    "(HRpeak - HRrest) / (HRpredicted - HRrest); HRpredicted 208 - 0.7·age (Tanaka 2001) or 164 - 0.72·age on a "
    f"beta-blocker (Brawner 2004); abnormal < {CI_LIMIT:.2f}, < {CI_LIMIT_BETA_BLOCKER:.2f} on a beta-blocker ({CI_SOURCE})"
)


@dataclass(frozen=True)
class ChronotropicResponse:
    """The chronotropic index and the limit it is read against."""

    hr_rest_bpm: float = described(unit="beats/min", description="mean HR of the rest phase")
    hr_peak_bpm: float = described(unit="beats/min", description="peak HR of exercise")
    hr_predicted_bpm: float = described(unit="beats/min", description="age-predicted maximal HR")
    prediction: Literal["tanaka2001", "brawner2004"] = described(
        description="`tanaka2001` (208 - 0.7·age) or `brawner2004` (164 - 0.72·age, on a beta-blocker; from memory)"
    )
    chronotropic_index: float = described(description="(HRpeak - HRrest) / (HRpredicted - HRrest)", method=CI_SOURCE)
    limit: float = described(description="the index below which the response is abnormal for this subject")
    beta_blocker: bool | None = described(description="metadata `beta_blocker` (null when not recorded)")


def chronotropic_index(*, hr_rest_bpm: float, hr_peak_bpm: float, hr_predicted_bpm: float) -> float:
    """Share of the predicted heart-rate reserve used: ``(peak - rest) / (predicted - rest)``.

    Parameters
    ----------
    hr_rest_bpm, hr_peak_bpm, hr_predicted_bpm : float, keyword-only
        Resting, peak and predicted maximal heart rate, beats/min.

    Returns
    -------
    float
        The chronotropic index (1.0 = the predicted reserve fully used).

    Raises
    ------
    InvalidParameter
        A non-positive rate or a predicted maximum not above the resting rate.

    References
    ----------
    Lauer MS, Okin PM, Larson MG, Evans JC, Levy D. Impaired heart rate response to graded
    exercise. Circulation 1996;93:1520-1526 (from memory).
    Khan MN, Pothier CE, Lauer MS. Chronotropic incompetence as a predictor of death among
    patients with normal electrograms taking beta blockers. Am J Cardiol 2005;96:1328-1333
    (from memory).

    Examples
    --------
    >>> chronotropic_index(hr_rest_bpm=70, hr_peak_bpm=150, hr_predicted_bpm=170)
    0.8
    """
    for name, v in (("hr_rest_bpm", hr_rest_bpm), ("hr_peak_bpm", hr_peak_bpm), ("hr_predicted_bpm", hr_predicted_bpm)):
        require(np.isfinite(v) and 20 <= v <= 260, name, "a heart rate from 20 to 260 beats/min", v)
    require(hr_predicted_bpm > hr_rest_bpm, "hr_predicted_bpm", f"a rate above the resting {hr_rest_bpm:g} beats/min", hr_predicted_bpm)
    return float((hr_peak_bpm - hr_rest_bpm) / (hr_predicted_bpm - hr_rest_bpm))


def chronotropic_response(
    *, hr_rest_bpm: float, hr_peak_bpm: float, age_y: float, beta_blocker: bool | None
) -> ChronotropicResponse:
    """The chronotropic index with the prediction and limit chosen by the beta-blocker field.

    Parameters
    ----------
    hr_rest_bpm, hr_peak_bpm : float, keyword-only
        beats/min.
    age_y : float, keyword-only
        Age, years.
    beta_blocker : bool or None, keyword-only
        ``True`` selects Brawner's prediction and the 0.62 limit; ``False`` or ``None`` Tanaka's and 0.80.

    Returns
    -------
    ChronotropicResponse

    References
    ----------
    Tanaka et al. 2001; Brawner et al. 2004; Lauer et al. 1996; Khan et al. 2005 (from memory).

    Examples
    --------
    >>> r = chronotropic_response(hr_rest_bpm=70, hr_peak_bpm=110, age_y=60, beta_blocker=True)
    >>> round(r.hr_predicted_bpm, 1), round(r.chronotropic_index, 2), r.limit
    (120.8, 0.79, 0.62)
    """
    on = beta_blocker is True
    predicted = brawner_hr_max_bpm(age_y=age_y) if on else tanaka_hr_max_bpm(age_y=age_y)
    ci = chronotropic_index(hr_rest_bpm=hr_rest_bpm, hr_peak_bpm=hr_peak_bpm, hr_predicted_bpm=predicted)
    return ChronotropicResponse(
        hr_rest_bpm=float(hr_rest_bpm), hr_peak_bpm=float(hr_peak_bpm), hr_predicted_bpm=float(predicted),
        prediction="brawner2004" if on else "tanaka2001", chronotropic_index=ci,
        limit=CI_LIMIT_BETA_BLOCKER if on else CI_LIMIT, beta_blocker=beta_blocker,
    )


def chronotropic_flag(response: ChronotropicResponse | None, *, effort_adequate: bool) -> Flag | None:
    """The ``chronotropic_incompetence`` flag when the index is below its limit.

    With an effort that may have been submaximal the flag is a ``caution``: a low index then
    may reflect the effort, not the heart-rate response.
    """
    # compared at 6 decimals: an index at the published cut point (0.62, 0.80) is not below it
    if response is None or round(response.chronotropic_index, 6) >= response.limit:
        return None
    r = response
    on = " (on a beta-blocker)" if r.beta_blocker else ""
    text = (
        f"Chronotropic index {r.chronotropic_index:.2f}{on}: peak HR {r.hr_peak_bpm:.0f} of a predicted "
        f"{r.hr_predicted_bpm:.0f} beats/min from {r.hr_rest_bpm:.0f} at rest."
    )
    if not effort_adequate:
        text += " The effort may have been submaximal, which also lowers the index."
    return flag(
        "chronotropic_incompetence", severity="abnormal" if effort_adequate else "caution", text=text,
        value=r.chronotropic_index, limit=f"< {r.limit:.2f}{on}", source=CI_SOURCE,
    )
