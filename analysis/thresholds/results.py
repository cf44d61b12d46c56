"""Result types of threshold detection: one pick, one two-line fit, the full report.

Their JSON form is written by the one result codec (:func:`analysis.records.to_json`)."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

ThresholdKind = Literal["vt1", "vt2"]
Confidence = Literal["high", "moderate", "low"]


@dataclass(frozen=True)
class ThresholdPick:
    """One threshold read by one method (or the consensus, or a reviewer).

    Attributes
    ----------
    kind : {"vt1", "vt2"}
    t_s : float
        Time of the threshold, s (an averaged row's time).
    vo2_ml_min : float
        VO2 at the threshold, mL/min.
    method : str
        e.g. ``"V-slope (Beaver 1986)"``, ``"consensus"``, ``"manual"``.
    source : {"auto", "manual"}
    confidence : {"high", "moderate", "low"}
        For the consensus: high with 3 or more agreeing methods, moderate with 2, low with 1.
        A single method's own pick is "moderate" (it passed that method's acceptance rules);
        a reviewer's pick is "high".
    note : str
        Plain-language explanation.
    index : int
        Row in the averaged frame nearest the threshold.
    ci90_vo2_ml_min : tuple of float or None
        90 % confidence interval of the threshold's VO2, mL/min (``None`` when not estimated,
        e.g. a reviewer's pick). See :mod:`analysis.thresholds.uncertainty` for the method.
    ci90_t_s : tuple of float or None
        90 % confidence interval of the threshold's time, s.
    determinable : bool
        False when the interval is wider than :data:`analysis.thresholds.uncertainty.MAX_CI_FRACTION`
        of the test's VO2 range: the pick is then kept for the charts (as a band) but not
        reported as the threshold.
    reason : str
        Why the threshold is not determinable (empty otherwise).
    """

    kind: ThresholdKind
    t_s: float
    vo2_ml_min: float
    method: str
    source: Literal["auto", "manual"] = "auto"
    confidence: Confidence = "moderate"
    note: str = ""
    index: int = -1
    ci90_vo2_ml_min: tuple[float, float] | None = None
    ci90_t_s: tuple[float, float] | None = None
    determinable: bool = True
    reason: str = ""


@dataclass(frozen=True)
class VSlopeFit:
    """Two-line least-squares fit of VCO2 on VO2 (or of any y on x) with the best split.

    ``break_index`` is the position, in the arrays passed in, of the first point above the
    split (in the order of increasing x). ``vo2_break_ml_min`` / ``vco2_break_ml_min`` are
    where the two lines cross (kept inside the span of the two points either side of the
    split). ``valid`` says whether the fit meets the acceptance rules; ``reason`` says why not.
    ``ci90_vo2_ml_min`` is the 90 % profile interval of the break's VO2
    (:func:`analysis.thresholds.uncertainty.profile_accept` over the admissible splits).
    """

    break_index: int
    vo2_break_ml_min: float
    vco2_break_ml_min: float
    slope_below: float
    intercept_below: float
    slope_above: float
    intercept_above: float
    sse: float
    valid: bool
    reason: str = ""
    n_below: int = 0
    n_above: int = 0
    vo2_min_ml_min: float = math.nan
    vo2_max_ml_min: float = math.nan
    ci90_vo2_ml_min: tuple[float, float] | None = None


@dataclass
class ThresholdReport:
    """Everything threshold detection found, for the report, the charts and the reviewer.

    Attributes
    ----------
    vt1, vt2 : ThresholdPick or None
        The value in use: the consensus of the automatic methods, or a reviewer's manual pick.
    vt1_candidates, vt2_candidates : dict
        Method name -> its pick (``None`` when that method found nothing).
    vslope : VSlopeFit or None
        The V-slope fit behind the V-slope pick (for the V-slope chart).
    agreement : dict
        ``"vt1"`` / ``"vt2"`` -> plain-language agreement note.
    reasons : list of str
        Why a threshold (or a method) found nothing.
    vt1_auto, vt2_auto : ThresholdPick or None
        The automatic consensus, kept so that a manual override can be cleared.
    vt1_undetermined, vt2_undetermined : ThresholdPick or None
        A consensus whose 90 % interval was too wide to report (``determinable=False``, with
        its ``reason``): ``vt1`` / ``vt2`` are then ``None``; kept to draw its band and say why.
    """

    vt1: ThresholdPick | None = None
    vt2: ThresholdPick | None = None
    vt1_candidates: dict[str, ThresholdPick | None] = field(default_factory=dict)
    vt2_candidates: dict[str, ThresholdPick | None] = field(default_factory=dict)
    vslope: VSlopeFit | None = None
    agreement: dict[str, str] = field(default_factory=dict)
    reasons: list[str] = field(default_factory=list)
    vt1_auto: ThresholdPick | None = None
    vt2_auto: ThresholdPick | None = None
    vt1_undetermined: ThresholdPick | None = None
    vt2_undetermined: ThresholdPick | None = None
