"""Score the analysis against the simulator's truth, case by case and per kind.

:func:`score_case` runs :func:`analysis.pipeline.analyze_session` on one simulated case (a
foreign case first goes through :func:`analysis.simulation.foreign.foreign_export_bytes` and
:func:`analysis.io.import_bytes`, as ``tidemark import`` would read it) and compares the
thresholds, VO2peak and VE/VCO2 slope with the truth. :func:`summarise` makes the per-kind
table; :func:`format_markdown` prints it. Nothing is written anywhere.

The analysis result is read in one place, :func:`read_result`, which takes attributes where
the typed result offers them and falls back to mapping keys (the JSON form), so a change of
the result's shape touches only that function.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from analysis.errors import require
from analysis.numeric import finite_or_none
from analysis.simulation.foreign import FOREIGN_LAYOUTS, foreign_export_bytes, foreign_meta_overrides
from analysis.simulation.suite import CaseTruth, SimulatedCase

#: Value of ``indices["ve_vco2_slope_span"]`` when the headline slope runs to VT2 (pipeline).
SPAN_TO_VT2 = "to_vt2"


# --- the one adapter to the analysis result ---------------------------------------------------


def _get(obj: Any, *path: str) -> Any:
    """Follow ``path`` through attributes or mapping keys; ``None`` when a step is missing."""
    for step in path:
        if obj is None:
            return None
        obj = obj.get(step) if isinstance(obj, dict) else getattr(obj, step, None)
    return obj


def _interval(value: Any) -> tuple[float, float] | None:
    if value is None:
        return None
    try:
        lo, hi = (float(v) for v in value)
    except (TypeError, ValueError):
        return None
    return (lo, hi) if math.isfinite(lo) and math.isfinite(hi) else None


@dataclass(frozen=True)
class ResultReading:
    """What the evaluation reads from one analysis result.

    Attributes
    ----------
    vt1_vo2_ml_min, vt2_vo2_ml_min : float or None
        VO2 at the thresholds in use (``None``: not given, or marked not determinable).
    vt1_ci90_vo2_ml_min, vt2_ci90_vo2_ml_min : tuple of float or None
        Stated 90 % intervals, when the result carries them.
    vo2peak_ml_min : float or None
    ve_vco2_slope : float or None
        The headline VE/VCO2 slope.
    ve_vco2_slope_span : str or None
        ``"to_vt2"`` or ``"whole_exercise"``.
    flag_codes : tuple of str
        Codes of the interpretation flags raised (empty while the result has none).
    """

    vt1_vo2_ml_min: float | None
    vt2_vo2_ml_min: float | None
    vt1_ci90_vo2_ml_min: tuple[float, float] | None
    vt2_ci90_vo2_ml_min: tuple[float, float] | None
    vo2peak_ml_min: float | None
    ve_vco2_slope: float | None
    ve_vco2_slope_span: str | None
    flag_codes: tuple[str, ...] = ()


def read_result(result: Any) -> ResultReading:
    """Read thresholds, intervals, VO2peak and the VE/VCO2 slope from an analysis result
    (the typed record or its JSON dictionary).

    Thresholds come from ``result.vt1`` / ``result.vt2`` (the values in use, with
    ``ci90_vo2_ml_min`` and ``determinable``), else from ``result.thresholds.vt1`` / ``.vt2``;
    VO2peak from ``result.peak.vo2_ml_min``; the slope from ``result.indices.ve_vco2_slope`` and
    ``ve_vco2_slope_span``; flags from ``result.flags`` (or ``result.interpretation.flags``).
    """
    picks: dict[str, Any] = {}
    for kind in ("vt1", "vt2"):
        # the result's own threshold record (typed result), else the detection report's pick
        pick = _get(result, kind)
        if _get(pick, "vo2_ml_min") is None:
            pick = _get(result, "thresholds", kind)
        if pick is not None and _get(pick, "determinable") is False:
            pick = None
        picks[kind] = pick
    indices = _get(result, "indices")
    span = _get(indices, "ve_vco2_slope_span")
    flags = _get(result, "flags")
    if flags is None:
        flags = _get(result, "interpretation", "flags")
    codes = tuple(str(_get(f, "code")) for f in (flags or ()) if _get(f, "code") is not None)
    return ResultReading(
        vt1_vo2_ml_min=finite_or_none(_get(picks["vt1"], "vo2_ml_min")),
        vt2_vo2_ml_min=finite_or_none(_get(picks["vt2"], "vo2_ml_min")),
        vt1_ci90_vo2_ml_min=_interval(_get(picks["vt1"], "ci90_vo2_ml_min")),
        vt2_ci90_vo2_ml_min=_interval(_get(picks["vt2"], "ci90_vo2_ml_min")),
        vo2peak_ml_min=finite_or_none(_get(result, "peak", "vo2_ml_min")),
        ve_vco2_slope=finite_or_none(_get(indices, "ve_vco2_slope")),
        ve_vco2_slope_span=None if span is None else str(span),
        flag_codes=codes,
    )


# --- one case -----------------------------------------------------------------------------------


@dataclass(frozen=True)
class CaseScore:
    """How the analysis did on one case.

    Attributes
    ----------
    kind, seed, noise, foreign, layout :
        The case; ``layout`` names the foreign export used ("" for a direct session).
    status : {"ok", "import_failed", "crash"}
    error : str
        The message when not ok.
    vt1_error_pct, vt2_error_pct : float or None
        |found - truth| as % of the true VO2max (where both exist).
    vt1_given, vt2_given : bool
    vt2_truth : bool
        Whether the test has a VT2.
    vo2peak_error_pct : float or None
        |found - truth| / truth VO2peak x 100.
    slope_error : float or None
        |headline VE/VCO2 slope - truth of the same span| (units).
    vt1_in_ci, vt2_in_ci : bool or None
        Whether the stated 90 % interval holds the truth (``None`` without an interval).
    seconds : float
        Time taken by import and analysis, s.
    flags_expected, flags_raised : tuple of str
        Of the interpretation flags in :data:`FLAG_CODES`, those the truth calls for and those
        the analysis raised.
    """

    kind: str
    seed: int
    noise: float
    foreign: bool
    layout: str
    status: str
    error: str = ""
    vt1_error_pct: float | None = None
    vt2_error_pct: float | None = None
    vt1_given: bool = False
    vt2_given: bool = False
    vt2_truth: bool = False
    vo2peak_error_pct: float | None = None
    slope_error: float | None = None
    vt1_in_ci: bool | None = None
    vt2_in_ci: bool | None = None
    seconds: float = 0.0
    flags_expected: tuple[str, ...] = ()
    flags_raised: tuple[str, ...] = ()


def _default_analyze(session: Any) -> Any:
    from analysis.pipeline import analyze_session

    return analyze_session(session)


def _truth_slope(truth: CaseTruth, span: str | None) -> float | None:
    if span == SPAN_TO_VT2 and truth.ve_vco2_slope_to_vt2 is not None:
        return truth.ve_vco2_slope_to_vt2
    return truth.ve_vco2_slope_whole_exercise


#: Interpretation flags the simulator has truth for, and when the truth calls for them:
#: oscillation present (>= 60 % of the exercise; Leite et al. 2003 / Corrà et al. 2006, from
#: memory); SpO2 falling >= 4 points or to <= 88 % (ATS/ACCP 2003); breathing reserve < 15 %
#: of MVV or < 11 L/min (ATS/ACCP 2003, from memory).
FLAG_CODES: tuple[str, ...] = ("oscillatory_ventilation", "desaturation", "breathing_reserve_low")


def expected_flags(truth: CaseTruth) -> tuple[str, ...]:
    """The flags of :data:`FLAG_CODES` the truth calls for."""
    out = []
    if truth.oscillation_present:
        out.append("oscillatory_ventilation")
    if truth.spo2_rest_pct is not None and truth.spo2_min_pct is not None and (
        truth.spo2_rest_pct - truth.spo2_min_pct >= 4.0 or truth.spo2_min_pct <= 88.0
    ):
        out.append("desaturation")
    if truth.breathing_reserve_pct is not None and truth.mvv_l_min is not None and (
        truth.breathing_reserve_pct < 15.0 or truth.breathing_reserve_pct / 100.0 * truth.mvv_l_min < 11.0
    ):
        out.append("breathing_reserve_low")
    return tuple(out)


def compare(reading: ResultReading, truth: CaseTruth) -> dict[str, Any]:
    """Errors of one reading against one truth (the fields of :class:`CaseScore` after
    ``status``)."""
    scale = truth.vo2max_ml_min
    out: dict[str, Any] = {
        "vt2_truth": truth.vt2_vo2_ml_min is not None,
        "flags_expected": expected_flags(truth),
        "flags_raised": tuple(c for c in FLAG_CODES if c in reading.flag_codes),
    }
    for kind in ("vt1", "vt2"):
        found = getattr(reading, f"{kind}_vo2_ml_min")
        true = getattr(truth, f"{kind}_vo2_ml_min")
        out[f"{kind}_given"] = found is not None
        if found is not None and true is not None:
            out[f"{kind}_error_pct"] = abs(found - true) / scale * 100.0
        ci = getattr(reading, f"{kind}_ci90_vo2_ml_min")
        if ci is not None and true is not None:
            out[f"{kind}_in_ci"] = bool(min(ci) <= true <= max(ci))
    if reading.vo2peak_ml_min is not None:
        out["vo2peak_error_pct"] = abs(reading.vo2peak_ml_min - truth.vo2peak_ml_min) / truth.vo2peak_ml_min * 100.0
    true_slope = _truth_slope(truth, reading.ve_vco2_slope_span)
    if reading.ve_vco2_slope is not None and true_slope is not None:
        out["slope_error"] = abs(reading.ve_vco2_slope - true_slope)
    return out


def score_case(
    case: SimulatedCase, *, analyze: Callable[[Any], Any] | None = None, layouts: Sequence[str] = FOREIGN_LAYOUTS
) -> CaseScore:
    """Analyse one case (through a foreign export when ``case.foreign``) and score it.

    Parameters
    ----------
    case : SimulatedCase
    analyze : callable, keyword-only
        Session -> result; default :func:`analysis.pipeline.analyze_session`.
    layouts : sequence of str, keyword-only
        Foreign layouts taken in turn (default :data:`FOREIGN_LAYOUTS`;
        :data:`~analysis.simulation.foreign.ALL_FOREIGN_LAYOUTS` adds the lab-variety layouts,
        imported with no metadata typed).

    Returns
    -------
    CaseScore
        A crash or an import failure is a score with that status, never an exception.
    """
    from analysis.io import import_bytes

    run = analyze or _default_analyze
    base: dict[str, Any] = {"kind": case.kind, "seed": case.seed, "noise": case.noise, "foreign": case.foreign}
    layout = ""
    session = case.session
    start = time.perf_counter()
    if case.foreign:
        index = case.seed // 2 + round(case.noise * 2)
        layout = layouts[index % len(layouts)]
        data = foreign_export_bytes(session, layout=layout)
        try:
            session = import_bytes(
                data,
                file_name=f"{case.kind}-{case.seed}.csv",
                meta_overrides=foreign_meta_overrides(case.session, layout=layout),
            ).session
        except Exception as exc:  # noqa: BLE001 - any import failure is a result to count
            return CaseScore(**base, layout=layout, status="import_failed", error=f"{type(exc).__name__}: {exc}")
    try:
        result = run(session)
    except Exception as exc:  # noqa: BLE001 - any crash is a result to count
        return CaseScore(**base, layout=layout, status="crash", error=f"{type(exc).__name__}: {exc}")
    seconds = time.perf_counter() - start
    return CaseScore(**base, layout=layout, status="ok", seconds=seconds, **compare(read_result(result), case.truth))


def evaluate_suite(
    cases: Iterable[SimulatedCase], *, analyze: Callable[[Any], Any] | None = None, layouts: Sequence[str] = FOREIGN_LAYOUTS
) -> list[CaseScore]:
    """:func:`score_case` for every case."""
    return [score_case(case, analyze=analyze, layouts=layouts) for case in cases]


# --- tables -----------------------------------------------------------------------------------


def _median(values: Sequence[float]) -> float | None:
    return float(np.median(values)) if values else None


def _p90(values: Sequence[float]) -> float | None:
    return float(np.percentile(values, 90)) if values else None


def summarise_group(scores: Sequence[CaseScore], label: str) -> dict[str, Any]:
    """One table row for a group of scores."""
    ok = [s for s in scores if s.status == "ok"]
    vt1 = [s.vt1_error_pct for s in ok if s.vt1_error_pct is not None]
    vt2 = [s.vt2_error_pct for s in ok if s.vt2_error_pct is not None]
    peak = [s.vo2peak_error_pct for s in ok if s.vo2peak_error_pct is not None]
    slope = [s.slope_error for s in ok if s.slope_error is not None]
    no_vt2 = [s for s in ok if not s.vt2_truth]
    ci1 = [s.vt1_in_ci for s in ok if s.vt1_in_ci is not None]
    ci2 = [s.vt2_in_ci for s in ok if s.vt2_in_ci is not None]
    return {
        "group": label,
        "n": len(scores),
        "crashes": sum(s.status == "crash" for s in scores),
        "import_failures": sum(s.status == "import_failed" for s in scores),
        "vt1_median_pct": _median(vt1),
        "vt1_p90_pct": _p90(vt1),
        "vt1_not_given": sum(not s.vt1_given for s in ok),
        "vt2_median_pct": _median(vt2),
        "vt2_p90_pct": _p90(vt2),
        "vt2_missed": sum(s.vt2_truth and not s.vt2_given for s in ok),
        "vt2_false": sum(s.vt2_given for s in no_vt2),
        "vt2_none_tests": len(no_vt2),
        "vo2peak_median_pct": _median(peak),
        "slope_median_abs": _median(slope),
        "vt1_ci_coverage": (sum(ci1) / len(ci1)) if ci1 else None,
        "vt2_ci_coverage": (sum(ci2) / len(ci2)) if ci2 else None,
    }


#: Case attributes a table can be split by.
SPLITS: tuple[str, ...] = ("kind", "noise", "layout")


def _split_label(score: CaseScore, by: str) -> str:
    if by == "noise":
        return f"noise {score.noise:g}"
    if by == "layout":
        return score.layout or "direct (no export)"
    return score.kind


def summarise(
    scores: Sequence[CaseScore], *, groups: dict[str, Sequence[str]] | None = None, by: str = "kind"
) -> list[dict[str, Any]]:
    """Rows per kind (or per noise level or export layout, in order of first appearance), then
    one row per named group of kinds.

    Parameters
    ----------
    scores : sequence of CaseScore
    groups : dict, keyword-only
        Label -> kinds, e.g. ``{"hard (all)": HARD_KINDS}``; groups with no scores are left out.
    by : {"kind", "noise", "layout"}, keyword-only
        What the first rows are split by.
    """
    require(by in SPLITS, "by", f"one of {SPLITS}", by)
    labels = list(dict.fromkeys(_split_label(s, by) for s in scores))
    rows = [summarise_group([s for s in scores if _split_label(s, by) == k], k) for k in labels]
    for label, members in (groups or {}).items():
        chosen = [s for s in scores if s.kind in set(members)]
        if chosen:
            rows.append(summarise_group(chosen, label))
    return rows


def summarise_flags(scores: Sequence[CaseScore]) -> list[dict[str, Any]]:
    """Per kind and flag of :data:`FLAG_CODES`: tests where the truth calls for the flag, how many
    of them got it, and how many other tests got it anyway."""
    rows = []
    kinds = list(dict.fromkeys(s.kind for s in scores))
    for kind in kinds:
        ok = [s for s in scores if s.kind == kind and s.status == "ok"]
        row: dict[str, Any] = {"group": kind, "n": len(ok)}
        for code in FLAG_CODES:
            due = [s for s in ok if code in s.flags_expected]
            row[code] = (sum(code in s.flags_raised for s in due), len(due),
                         sum(code in s.flags_raised for s in ok if code not in s.flags_expected))
        rows.append(row)
    return rows


def format_flags_markdown(rows: Sequence[dict[str, Any]]) -> str:
    """:func:`summarise_flags` rows as Markdown: ``raised/due`` and ``+ false`` per flag."""
    lines = ["| kind | n | " + " | ".join(FLAG_CODES) + " |", "|" + "---|" * (len(FLAG_CODES) + 2)]
    for row in rows:
        cells = [f"{row[c][0]}/{row[c][1]} (+{row[c][2]} false)" for c in FLAG_CODES]
        lines.append(f"| {row['group']} | {row['n']} | " + " | ".join(cells) + " |")
    return "\n".join(lines)


_HEADERS: tuple[tuple[str, str], ...] = (
    ("group", "kind"),
    ("n", "n"),
    ("vt1_median_pct", "VT1 med %"),
    ("vt1_p90_pct", "VT1 p90 %"),
    ("vt1_not_given", "VT1 none"),
    ("vt2_median_pct", "VT2 med %"),
    ("vt2_p90_pct", "VT2 p90 %"),
    ("vt2_missed", "VT2 missed"),
    ("vt2_false", "VT2 false"),
    ("vo2peak_median_pct", "VO2peak med %"),
    ("slope_median_abs", "slope med"),
    ("vt1_ci_coverage", "VT1 CI90 cover"),
    ("vt2_ci_coverage", "VT2 CI90 cover"),
    ("crashes", "crash"),
    ("import_failures", "import fail"),
)


def _cell(key: str, row: dict[str, Any]) -> str:
    value = row[key]
    if value is None:
        return "–"
    if key == "vt2_false":
        return f"{value}/{row['vt2_none_tests']}"
    if key.endswith("_coverage"):
        return f"{100 * value:.0f} %"
    if isinstance(value, float):
        return f"{value:.2f}"
    return str(value)


def format_markdown(rows: Sequence[dict[str, Any]]) -> str:
    """The rows as a Markdown table (errors as % of the true VO2max; slope in units)."""
    lines = ["| " + " | ".join(h for _, h in _HEADERS) + " |", "|" + "---|" * len(_HEADERS)]
    for row in rows:
        lines.append("| " + " | ".join(_cell(k, row) for k, _ in _HEADERS) + " |")
    return "\n".join(lines)
