"""Which published interpretation patterns the flags are consistent with (never a diagnosis)."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from analysis.interpretation.flags import FLAG_NAMES
from analysis.records import described

#: The statements the patterns follow.
PATTERN_STATEMENT = (
    "ATS/ACCP statement on cardiopulmonary exercise testing 2003; Balady et al. 2010 (AHA clinician's guide); "
    "EACPR/AHA statements on CPET in heart failure 2012 and 2016"
)
#: Shown with every pattern summary.
PATTERN_CAUTION = (
    "Patterns are read from the flags by the published interpretation schemes; they are consistent with a kind "
    "of limitation, not a diagnosis. Interpretation belongs to qualified staff who know the clinical picture, the "
    "medication and the quality of the test."
)

CARDIOVASCULAR = frozenset({"chronotropic_incompetence", "o2_pulse_flattening", "dvo2_dwr_low", "oscillatory_ventilation"})
VENTILATORY = frozenset({"breathing_reserve_low"})
GAS_EXCHANGE = frozenset({"desaturation", "ve_vco2_slope_high", "petco2_low", "petco2_rise_low"})

#: Flags that do not count toward a pattern when raised only as a ``caution``: the condition of
#: their limit was not met (a possibly submaximal effort lowers the chronotropic index; the HR
#: recovery limit holds for an upright active cool-down only).
CONDITIONAL_FLAGS = frozenset({"chronotropic_incompetence", "hr_recovery_low"})

PATTERN_LABELS: dict[str, str] = {
    "cardiovascular_limitation": "cardiovascular limitation",
    "ventilatory_limitation": "ventilatory limitation",
    "gas_exchange_limitation": "gas-exchange / pulmonary vascular limitation",
    "deconditioning": "deconditioning",
    "submaximal_effort": "submaximal effort",
}


@dataclass(frozen=True)
class PatternMatch:
    """One pattern the flags are consistent with, and the flags that point to it."""

    code: str = described(description="`cardiovascular_limitation`, `ventilatory_limitation`, `gas_exchange_limitation`, "
                          "`deconditioning` or `submaximal_effort`")
    label: str = described(description="the pattern in words")
    flags: tuple[str, ...] = described(description="codes of the flags (or findings) consistent with it")
    text: str = described(description="'Consistent with …' sentence")


@dataclass(frozen=True)
class PatternSummary:
    """The patterns the flags are consistent with, the statement followed and the caution."""

    patterns: tuple[PatternMatch, ...] = described(description="each pattern the flags are consistent with (may be empty)")
    statement: str = described(description="the published statements the patterns follow")
    caution: str = described(description="shown with the summary: not a diagnosis")


def _match(code: str, flags: Iterable[str], why: str = "") -> PatternMatch:
    names = tuple(flags)
    listed = ", ".join(FLAG_NAMES.get(n, n) for n in names)
    text = f"Consistent with {PATTERN_LABELS[code]} ({listed}{'; ' + why if why else ''})."
    return PatternMatch(code=code, label=PATTERN_LABELS[code], flags=names, text=text)


def pattern_summary(flag_codes: Iterable[str], *, effort_submaximal: bool) -> PatternSummary:
    """The interpretation patterns the flags are consistent with.

    Parameters
    ----------
    flag_codes : iterable of str
        Codes of the flags raised.
    effort_submaximal : bool, keyword-only
        The maximality assessment judged the effort possibly submaximal (no plateau and peak RER < 1.10).

    Returns
    -------
    PatternSummary

    Notes
    -----
    Rules (a simplification of the flow charts of the statements; each pattern needs its own
    flags):

    - cardiovascular limitation: chronotropic incompetence, O2-pulse flattening, low ΔVO2/ΔWR
      or oscillatory ventilation, with the breathing reserve not low;
    - ventilatory limitation: a low breathing reserve;
    - gas-exchange / pulmonary vascular limitation: desaturation, a high VE/VCO2 slope, or a
      low or blunted PETCO2;
    - deconditioning: a low peak VO2 with none of the flags above and an adequate effort;
    - submaximal effort: the effort criteria not met with the breathing reserve not low.

    References
    ----------
    ATS/ACCP Statement on cardiopulmonary exercise testing. Am J Respir Crit Care Med 2003;167:211-277.
    Balady GJ, Arena R, Sietsema K, et al. Clinician's guide to cardiopulmonary exercise testing in
    adults. Circulation 2010;122:191-225. Guazzi M, Adams V, Conraads V, et al. EACPR/AHA Clinical
    recommendations for CPET data assessment in specific patient populations. Circulation
    2012;126:2261-2274; Guazzi M et al. 2016 focused update. Eur Heart J 2018 (from memory).

    Examples
    --------
    >>> s = pattern_summary(["breathing_reserve_low", "desaturation"], effort_submaximal=False)
    >>> [p.code for p in s.patterns]
    ['ventilatory_limitation', 'gas_exchange_limitation']
    """
    codes = list(dict.fromkeys(flag_codes))
    have = set(codes)
    out: list[PatternMatch] = []
    cv = [c for c in codes if c in CARDIOVASCULAR]
    if cv and not have & VENTILATORY:
        out.append(_match("cardiovascular_limitation", cv + (["vo2peak_low"] if "vo2peak_low" in have else [])))
    if have & VENTILATORY:
        out.append(_match("ventilatory_limitation", [c for c in codes if c in VENTILATORY]))
    gx = [c for c in codes if c in GAS_EXCHANGE]
    if gx:
        out.append(_match("gas_exchange_limitation", gx))
    if "vo2peak_low" in have and not have & (CARDIOVASCULAR | VENTILATORY | GAS_EXCHANGE) and not effort_submaximal:
        out.append(_match("deconditioning", ["vo2peak_low"], "no cardiovascular, ventilatory or gas-exchange flag"))
    if effort_submaximal and not have & VENTILATORY:
        out.append(_match("submaximal_effort", ["effort criteria not met"], "breathing reserve not exhausted"))
    return PatternSummary(patterns=tuple(out), statement=PATTERN_STATEMENT, caution=PATTERN_CAUTION)
