"""Self-contained HTML report of one test.

The report is one HTML file that opens offline and prints on one A4 or Letter page, with a
second page only for the appendix (methods, notes, oxygen path): no script at all, charts as
static SVG drawn by our own writer (:mod:`dashboard.report.svg_chart`), the style sheet inlined,
the lab's logo embedded as a ``data:`` URL. A typical report weighs well under 500 kB. The PDF
download is the same HTML printed by the system Chromium (:mod:`dashboard.report.pdf`).

Every number is read from the typed result of :func:`analysis.pipeline.analyze_session`
(:class:`analysis.results.TestResults`, attributes such as ``results.vt1.vo2_ml_min``); this
module only formats them.
"""

from __future__ import annotations

import datetime as _dt
import html
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from importlib import resources
from typing import Any

from analysis.indices.threshold_values import ThresholdResult
from analysis.numeric import finite_or_none
from analysis.results import TestResults
from analysis.session import Session
from analysis.zones import Zone
from dashboard.timefmt import clock_text

#: The caution printed on every report (and on the coach view).
CAUTIONS: tuple[str, ...] = (
    "Tidemark is not a medical device. Results support, and do not replace, the judgement of "
    "qualified staff.",
    "Thresholds, predicted values, cardiac output and every oxygen-transport figure are "
    "estimates from models, not measurements; they are labelled as such.",
    "Exercise testing, its supervision and the interpretation of results belong to qualified "
    "staff working under local protocols and licensed practice.",
)



@dataclass(frozen=True)
class Headline:
    """One headline result: label, how it is read from the result record, unit, decimals, method keys."""

    label: str
    read: Callable[[TestResults], float | None]
    unit: str
    digits: int
    method_keys: tuple[str, ...] = ()


#: The headline row of VO2peak as % of the predicted VO2max (an estimate from a reference equation).
PCT_PREDICTED_LABEL = "VO2peak, % predicted"

HEADLINES: tuple[Headline, ...] = (
    Headline("VO2peak", lambda r: r.vo2_peak_ml_min, "mL/min", 0, ("vo2_peak", "vo2_peak_ml_min", "peak")),
    Headline("VO2peak per kg", lambda r: r.vo2_peak_ml_kg_min, "mL/kg/min", 1, ("vo2_peak", "vo2_peak_ml_kg_min", "peak")),
    Headline(PCT_PREDICTED_LABEL, lambda r: pct_predicted_vo2_peak(r), "%", 0, ("interpretation_reference_set", "predicted_vo2max")),
    Headline("RER peak", lambda r: r.rer_peak, "", 2, ("rer_peak", "peak")),
    Headline("Heart rate peak", lambda r: r.hr_peak_bpm, "beats/min", 0, ("hr_peak_bpm", "hr_peak", "peak")),
    Headline("VE/VCO2 slope", lambda r: r.ve_vco2_slope, "", 1, ("ve_vco2_slope",)),
    Headline("OUES", lambda r: r.oues, "mL/min per log10(L/min)", 0, ("oues",)),
    Headline("Peak O2 pulse", lambda r: r.o2_pulse_peak_ml_beat, "mL/beat", 1, ("o2_pulse", "o2_pulse_peak_ml_beat")),
)

#: Rows of the threshold table: label, attribute of the threshold record, unit, decimals.
THRESHOLD_ROWS: tuple[tuple[str, str, str, int], ...] = (
    ("Time", "t_s", "s", 0),
    ("VO2", "vo2_ml_min", "mL/min", 0),
    ("VO2 per kg", "vo2_ml_kg_min", "mL/kg/min", 1),
    ("% of VO2peak", "pct_vo2_peak", "%", 0),
    ("Heart rate", "hr_bpm", "beats/min", 0),
    ("Work rate", "work_w", "W", 0),
    ("Speed", "speed_kmh", "km/h", 1),
)


@dataclass(frozen=True)
class ReportContext:
    """What the report says about who, which version and its review state.

    Attributes
    ----------
    person_label : str
        Pseudonymous code or display name, as the reviewer chose to show it.
    lab_name, lab_address : str
        The lab's letterhead (from the lab settings; empty when none is set).
    lab_logo_url : str or None
        The lab's logo as a ``data:`` URL (embedded, no outside request).
    report_footer : str
        The lab's own footer text.
    version : int or None
        Stored settings/results version the report was made from.
    signed_off_by, signed_off_at : str or None
        Sign-off of that version, when there is one.
    threshold_setters : mapping
        ``{"vt1": "set by <user> on <date>: <reason>"}`` for manual thresholds (from the audit
        trail); automatic picks need no entry.
    generated_at : str
        Time stamp printed in the footer (default: now, UTC).
    """

    person_label: str = ""
    lab_name: str = ""
    lab_address: str = ""
    lab_logo_url: str | None = None
    report_footer: str = ""
    version: int | None = None
    signed_off_by: str | None = None
    signed_off_at: str | None = None
    threshold_setters: Mapping[str, str] = field(default_factory=dict)
    generated_at: str = ""


# --- small formatting helpers ----------------------------------------------------------------


def _number(value: Any) -> float | None:
    return None if isinstance(value, bool) else finite_or_none(value)


def format_number(value: Any, digits: int) -> str:
    """Text of a number with ``digits`` decimals, or an en dash when missing."""
    v = _number(value)
    if v is None:
        return "–"
    return f"{v:,.{digits}f}".replace(",", "\u2009")


def _e(text: Any) -> str:
    return html.escape("" if text is None else str(text), quote=True)


def _method_text(methods: Mapping[str, str], keys: Sequence[str]) -> str:
    for key in keys:
        value = methods.get(key)
        if value:
            return str(value)
    return ""


def pct_predicted_vo2_peak(results: TestResults) -> float | None:
    """VO2peak as % predicted by the reference set chosen (``settings.reference_set``, named in
    ``interpretation.predicted``); FRIEND's from ``predicted`` when there is no interpretation."""
    if results.interpretation is not None:
        return results.interpretation.predicted.pct_vo2_peak
    return results.predicted.pct_predicted_vo2max


def reference_set_label(results: TestResults, *, short: bool = False) -> str:
    """The name of the reference set behind every % predicted (the setting's, else FRIEND's)."""
    from analysis.interpretation.predicted import REFERENCE_SETS, REFERENCE_SHORT_NAMES

    code = results.interpretation.predicted.reference_set if results.interpretation is not None else "friend2018"
    return (REFERENCE_SHORT_NAMES if short else REFERENCE_SETS).get(code, code)


def headline_rows(results: TestResults) -> list[dict[str, str]]:
    """Headline results as display rows ``{"label", "value", "unit", "method"}`` (present ones only)."""
    rows = []
    for h in HEADLINES:
        value = h.read(results)
        if _number(value) is None:
            continue
        method = _method_text(results.methods, h.method_keys)
        if h.label == PCT_PREDICTED_LABEL:
            method = f"Reference set: {reference_set_label(results)}. {method}"
        rows.append({"label": h.label, "value": format_number(value, h.digits), "unit": h.unit, "method": method})
    return rows


def column_title(label: str, unit: str) -> str:
    """``"VO2 (mL/min)"``; a label that already names its unit (``"% of VO2peak"``) stays as it is."""
    if not unit or (unit == "%" and label.startswith("%")):
        return label
    return f"{label} ({unit})"


def threshold_source(threshold: ThresholdResult | None) -> str:
    """"manual" when the reviewer set the threshold, else "automatic" (or "" when absent)."""
    if threshold is None:
        return ""
    return "manual" if threshold.source == "manual" else "automatic"


def threshold_value(threshold: ThresholdResult, name: str) -> float | None:
    """A number of the threshold record by attribute name (``"vo2_ml_min"``, ``"t_s"``, ...)."""
    return _number(getattr(threshold, name))


def threshold_display(results: TestResults) -> list[dict[str, str]]:
    """VT1/VT2 as display rows (values formatted from the result record; manual picks marked)."""
    rows = []
    for kind, name in (("vt1", "VT1"), ("vt2", "VT2 / RCP")):
        t: ThresholdResult | None = getattr(results, kind)
        row = {"Threshold": name}
        if t is None:
            row["Set"] = "not found"
            rows.append(row)
            continue
        for label, key, unit, digits in THRESHOLD_ROWS:
            value = threshold_value(t, key)
            if value is not None:
                row[column_title(label, "m:ss" if key == "t_s" else unit)] = _value_text(key, value, digits)
        row["Method"] = t.method
        row["Set"] = threshold_source(t)
        rows.append(row)
    return rows


def steady_state_load(results: TestResults, kind: str, *, with_unit: bool = True) -> str:
    """The lag-corrected load at ``kind`` ('vt1'/'vt2') as text (``interpretation.lag``, Whipp et
    al. 1981), e.g. ``"176 W"``; empty when the test is not a ramp or the threshold is missing."""
    lag = results.interpretation.lag if results.interpretation is not None else None
    value = None if lag is None else _number(getattr(lag, f"{kind}_corrected"))
    if lag is None or value is None:
        return ""
    cycle = lag.load == "work_w"
    text = format_number(value, 0 if cycle else 1)
    return f"{text} {'W' if cycle else 'km/h'}" if with_unit else text


#: Ranges of a training zone: label, attributes of the lower and upper bound, unit, decimals.
_ZONE_RANGES: tuple[tuple[str, str, str, str, int], ...] = (
    ("Heart rate", "hr_low_bpm", "hr_high_bpm", "beats/min", 0),
    ("Work rate", "work_low_w", "work_high_w", "W", 0),
    ("Speed", "speed_low_kmh", "speed_high_kmh", "km/h", 1),
    ("Grade", "grade_low_pct", "grade_high_pct", "%", 1),
    ("VO2", "vo2_low_ml_min", "vo2_high_ml_min", "mL/min", 0),
)


def _zone_range(zone: Zone, low: str, high: str, digits: int) -> str | None:
    lo, hi = _number(getattr(zone, low)), _number(getattr(zone, high))
    if lo is None and hi is None:
        return None
    if lo is None:
        return f"below {format_number(hi, digits)}"
    if hi is None:
        return f"above {format_number(lo, digits)}"
    return f"{format_number(lo, digits)}–{format_number(hi, digits)}"


def zone_rows(results: TestResults) -> list[dict[str, str]]:
    """Zones as display rows: name plus each range the zone has (HR, work, speed, VO2)."""
    rows = []
    for i, zone in enumerate(results.zones.zones, start=1):
        row = {"Zone": zone.name or f"Zone {i}"}
        for label, low, high, unit, digits in _ZONE_RANGES:
            text = _zone_range(zone, low, high, digits)
            if text is not None:
                row[column_title(label, unit)] = text
        rows.append(row)
    return rows


# --- HTML pieces -----------------------------------------------------------------------------


_NUMERIC_CELL = re.compile(r"^(–|[-+\u2009\d.,]+|(below|above) .*|[\d\u2009.,]+–[\d\u2009.,]+)$")


def _table(header: Sequence[str], rows: Sequence[Sequence[str]], *, numeric: Sequence[int] = ()) -> str:
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    body = []
    for row in rows:
        cells = "".join(
            f'<td class="num">{_e(c)}</td>' if i in numeric and _NUMERIC_CELL.match(str(c)) else f"<td>{_e(c)}</td>"
            for i, c in enumerate(row)
        )
        body.append(f"<tr>{cells}</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def _value_text(key: str, value: Any, digits: int) -> str:
    """A threshold or headline value as printed: times as m:ss, numbers with their decimals."""
    if key == "t_s":
        return clock_text(value) if _number(value) is not None else "–"
    return format_number(value, digits)


def _threshold_table(results: TestResults, ctx: ReportContext) -> str:
    picks: list[tuple[str, ThresholdResult | None]] = [("vt1", results.vt1), ("vt2", results.vt2)]
    header = ["", "VT1", "VT2 / RCP"]
    rows: list[list[str]] = []
    for label, key, unit, digits in THRESHOLD_ROWS:
        values = [_value_text(key, None if t is None else threshold_value(t, key), digits) for _, t in picks]
        if all(v == "–" for v in values):
            continue
        rows.append([column_title(label, "m:ss" if key == "t_s" else unit), *values])
    steady = [steady_state_load(results, k, with_unit=False) for k, _ in picks]
    if any(steady):
        lag = results.interpretation.lag if results.interpretation is not None else None
        unit = "W" if lag is not None and lag.load == "work_w" else "km/h"
        rows.append([column_title("Steady-state load (lag-corrected)", unit), *(v or "–" for v in steady)])
    method_row = ["Method"]
    set_row = ["Set by"]
    for k, t in picks:
        if t is None:
            method_row.append("not found")
            set_row.append("–")
            continue
        method_row.append(t.method)
        src = threshold_source(t)
        if src == "manual":
            who = ctx.threshold_setters.get(k) or t.note or t.reason or "reviewer"
            set_row.append(f"MANUAL — {who}")
        else:
            conf = t.confidence
            conf_text = f" (confidence {conf})" if conf else ""
            set_row.append(f"automatic{conf_text}")
    rows.extend([method_row, set_row])
    return _table(header, rows, numeric=(1, 2))


def _flags_line(results: TestResults) -> str:
    """Page 1's compact flags block: each flag with its value and limit on one line, then the
    patterns they are consistent with; sources and the full findings are in the appendix."""
    from dashboard.flag_rows import flag_groups, pattern_summary

    if results.interpretation is None:
        return ""
    rows = [r for _group, rs in flag_groups(results) for r in rs]
    texts, _caution, _statement = pattern_summary(results)
    if rows:
        items = " · ".join(f"<strong>{_e(r['Flag'])}</strong> {_e(r['Value'])} ({_e(r['Limit'])})" for r in rows)
    else:
        items = "none: no value crossed the limits checked"
    out = f'<p class="flags-line"><span class="label">Flags:</span> {items}.'
    if texts:
        out += " " + " ".join(_e(t) for t in texts) + " Not a diagnosis; sources and caution: page 2."
    return out + "</p>"


def _flags_appendix(results: TestResults) -> str:
    """The appendix's flags table (group, flag, finding, limit, source) with the pattern summary,
    the caution and the statements it follows."""
    from dashboard.flag_rows import flag_groups, pattern_summary, reference_set_name

    if results.interpretation is None:
        return ""
    groups = flag_groups(results)
    texts, caution, statement = pattern_summary(results)
    parts = ["<h2>Flags: limits and sources</h2>"]
    if groups:
        rows = [[group, r["Finding"], r["Limit"], r["Source"]] for group, rs in groups for r in rs]
        parts.append('<div class="flags">' + _table(["Group", "Finding", "Limit", "Source"], rows) + "</div>")
    else:
        parts.append('<p class="sub">No value crossed the limits checked.</p>')
    ref = reference_set_name(results)
    if ref:
        parts.append(f'<p class="sub">% predicted from {_e(ref)}.</p>')
    if texts:
        parts.append('<ul class="patterns">' + "".join(f"<li>{_e(t)}</li>" for t in texts) + "</ul>")
    if caution:
        parts.append(f'<p class="sub">{_e(caution)} Patterns follow: {_e(statement)}.</p>')
    parts.append(_oscillation_figure(results))
    return "".join(parts)


def _oscillation_figure(results: TestResults) -> str:
    """The detected ventilation oscillation drawn, when present (static SVG with its caption)."""
    from dashboard.charts.oscillation import oscillation_caption, oscillation_of, oscillation_svg

    osc = oscillation_of(results)
    if osc is None or not osc.present:
        return ""
    return f'<figure class="chart oscillation">{oscillation_svg(osc)}<figcaption>{_e(oscillation_caption(osc))}</figcaption></figure>'



def _letterhead(ctx: ReportContext) -> str:
    """The lab's letterhead: logo, name and address line (nothing when none is set)."""
    if not (ctx.lab_name or ctx.lab_address or ctx.lab_logo_url):
        return ""
    logo = f'<img class="logo" src="{_e(ctx.lab_logo_url)}" alt="">' if ctx.lab_logo_url else ""
    name = f'<div class="lab-name">{_e(ctx.lab_name)}</div>' if ctx.lab_name else ""
    address = f'<div class="lab-address">{_e(ctx.lab_address)}</div>' if ctx.lab_address else ""
    return f'<div class="letterhead">{logo}<div>{name}{address}</div></div>'


def _css() -> str:
    return resources.files("dashboard.report").joinpath("report.css").read_text(encoding="utf-8")


#: Names of the results' method entries as the reader knows them (keys from the analysis).
METHOD_NAMES: dict[str, str] = {
    "outliers": "Outlier breaths", "phases": "Test phases", "averaging": "Averaging",
    "vo2_peak": "VO2peak", "rer_peak": "RER peak", "hr_peak_bpm": "Heart rate peak",
    "ve_vco2_slope": "VE/VCO2 slope", "ve_vco2_slope_to_vt2": "VE/VCO2 slope to VT2",
    "ve_vco2_slope_whole_exercise": "VE/VCO2 slope over the whole exercise",
    "ve_vco2_nadir": "VE/VCO2 nadir", "oues": "OUES", "o2_pulse": "O2 pulse",
    "vo2_work_rate_slope": "VO2 / work-rate slope", "mets": "METs", "hr_reserve": "Heart-rate reserve",
    "hr_recovery_1min": "Heart-rate recovery (1 min)", "breathing_reserve": "Breathing reserve",
    "energy_expenditure": "Energy expenditure", "substrate_oxidation": "Substrate oxidation",
    "fat_max": "Peak fat oxidation", "maximality": "Maximality", "predicted_vo2max": "Predicted VO2max",
    "hr_max_predicted": "Predicted maximal heart rate", "weber_class": "Weber class",
    "ventilatory_class": "Ventilatory class", "zones": "Training zones", "vt1": "VT1", "vt2": "VT2 / RCP",
    "oxygen": "Oxygen path", "oxygen_spo2": "Arterial saturation", "oxygen_cascade": "O2 cascade at peak",
    "interpretation_chronotropic": "Chronotropic index", "interpretation_saturation": "SpO2 and desaturation",
    "interpretation_oscillation": "Oscillatory ventilation", "interpretation_gas_exchange": "End-tidal CO2 and dead space",
    "interpretation_ventilation": "Ventilatory limitation", "interpretation_response": "Efficiency and response",
    "interpretation_lag": "Lag-corrected loads", "interpretation_reference_set": "Reference set of the flags",
}
#: Internal references in method texts and what the reader sees instead.
_CODE_REFERENCE = re.compile(r"\s*\((?:analysis|dashboard|store)\.[\w.]+\)")
_SEE_REASONS = re.compile(r"see thresholds\.reasons")


def method_name(key: str) -> str:
    """``"hr_peak_bpm"`` -> ``"Heart rate peak"`` (unknown keys with spaces for underscores)."""
    return METHOD_NAMES.get(key, key.replace("_", " "))


def method_text(text: str) -> str:
    """A method description without references to program code (module paths, field names)."""
    return _SEE_REASONS.sub("see the threshold notes", _CODE_REFERENCE.sub("", text))


#: Method entries of the results behind what the one-page report shows, in the report's order.
#: Only these are listed in the appendix (a method for a result the report does not show is not).
SHOWN_METHODS: tuple[str, ...] = (
    "outliers", "averaging", "phases", "vo2_peak", "predicted_vo2max", "rer_peak", "hr_peak_bpm",
    "hr_max_predicted", "ve_vco2_slope", "oues", "o2_pulse", "maximality", "vt1", "vt2", "zones",
)


def _methods_list(methods: Mapping[str, str], *, shown: Sequence[str] = SHOWN_METHODS) -> list[str]:
    """``"<name>: <method>"`` for each result the report shows (``results.methods``), each method text once."""
    items: list[str] = []
    seen: set[str] = set()
    for key in shown:
        value = methods.get(key)
        if not value:
            continue
        text = method_text(str(value))
        if text in seen:
            continue
        seen.add(text)
        items.append(f"{method_name(str(key))}: {text}")
    return items


def _predicted_text(results: TestResults) -> str:
    """``"140 % of 2,310 mL/min (FRIEND 2018)"`` for VO2peak by the reference set chosen, or ``""``
    when there is no prediction."""
    pct = _number(pct_predicted_vo2_peak(results))
    if pct is None:
        return ""
    if results.interpretation is not None:
        ref = _number(results.interpretation.predicted.vo2_peak_ml_min)
        ref_text = f" of {format_number(ref, 0)} mL/min" if ref is not None else ""
    else:
        ref = _number(results.predicted.vo2max_friend_ml_kg_min)
        ref_text = f" of {format_number(ref, 1)}" if ref is not None else ""
    return f"{pct:.0f} %{ref_text} ({reference_set_label(results, short=True)})"


def _headline_table(data: TestResults) -> str:
    rows = [r for r in headline_rows(data) if r["label"] != PCT_PREDICTED_LABEL]  # its own column here
    pred = _predicted_text(data)
    body = []
    for r in rows:
        extra = pred if r["label"] in ("VO2peak per kg",) else ""
        if r["label"] == "VO2peak" and pred and not any(x["label"] == "VO2peak per kg" for x in rows):
            extra = pred
        body.append([r["label"], r["value"], r["unit"], extra])
    return _table(["Result", "Value", "Unit", "% predicted"], body, numeric=(1,))


def _facts(meta: Mapping[str, Any]) -> list[str]:
    facts = []
    for label, key in (("Test date", "test_date"), ("Protocol", "protocol"), ("Mode", "mode"), ("Operator", "operator")):
        if meta.get(key):
            facts.append(f"{label}: {_e(meta[key])}")
    for label, key, unit, digits in (("Body mass", "body_mass_kg", "kg", 1), ("Height", "height_cm", "cm", 0),
                                     ("Age", "age_y", "y", 0), ("Hb", "hb_g_dl", "g/dL", 1)):
        if _number(meta.get(key)) is not None:
            facts.append(f"{label}: {format_number(meta[key], digits)} {unit}")
    if meta.get("sex"):
        facts.append(f"Sex: {_e(meta['sex'])}")
    if meta.get("beta_blocker"):
        facts.append(f"Beta-blocker: {_e(meta['beta_blocker'])}")
    return facts


def _signature(ctx: ReportContext, version: str) -> str:
    if ctx.signed_off_by:
        when = f" on {_e(ctx.signed_off_at)}" if ctx.signed_off_at else ""
        state = f"Signed off in Tidemark by {_e(ctx.signed_off_by)}{when} ({_e(version)})."
    else:
        state = f"Not signed off ({_e(version)}): a draft."
    return (
        '<div class="signature"><p>' + state + "</p>"
        '<div class="sign-lines"><span>Signature</span><span>Name</span><span>Date</span></div></div>'
    )


def build_report_html(
    results: TestResults,
    session: Session | None = None,
    *,
    charts: Sequence[tuple[str, str]] = (),
    context: ReportContext | None = None,
    appendix: Sequence[tuple[str, str]] = (),
) -> str:
    """Build the report of a test: one printed page, plus one appendix page.

    Page 1: the lab's letterhead, who and what was tested, headline results with % predicted,
    VT1/VT2 (times as m:ss), the maximality verdict, four static SVG charts, training zones and
    a signature line. Page 2 (the appendix): the methods behind the results shown (each once),
    data-quality notes, any further appendix sections (e.g. the oxygen path) and the cautions.

    Parameters
    ----------
    results : TestResults
        The analysis result (a stored version is read back with ``analysis.results.results_from_json``).
    session : Session, optional
        The test's session (date, protocol, body mass, ... from its metadata).
    charts : sequence of (title, svg)
        Static SVG charts (:func:`dashboard.report.report_charts.report_charts`).
    context : ReportContext, optional
        Letterhead, person label, version, sign-off and who set manual thresholds.
    appendix : sequence of (title, html)
        Further appendix sections, already HTML (their writers escape their own text).

    Returns
    -------
    str
        A complete HTML document with no script and no external source.
    """
    data = results
    ctx = context or ReportContext()
    meta = session.meta if session is not None else {}
    generated = ctx.generated_at or _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")

    if ctx.signed_off_by:
        state = f'<span class="badge signed">Signed off by {_e(ctx.signed_off_by)}{" on " + _e(ctx.signed_off_at) if ctx.signed_off_at else ""}</span>'
    else:
        state = '<span class="badge draft">Draft — not signed off</span>'
    version = f"version {ctx.version}" if ctx.version is not None else "unsaved settings"
    facts = _facts(meta)

    parts: list[str] = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>Exercise test report — {_e(ctx.person_label or 'test')}</title>",
        f"<style>{_css()}</style></head><body>",
        '<div class="page">',
        '<header class="head">',
        _letterhead(ctx),
        '<div class="title">',
        f"<h1>Exercise test report{' — ' + _e(ctx.person_label) if ctx.person_label else ''}</h1>",
        f'<p class="sub">{_e(version)} · {state}</p>',
        "</div></header>",
        f'<p class="facts">{" · ".join(facts)}</p>' if facts else "",
        '<div class="caution"><strong>Caution.</strong> ' + _e(CAUTIONS[0]) + " " + _e(CAUTIONS[1]) + "</div>",
        '<div class="row">',
        '<section class="col"><h2>Headline results</h2>',
        _headline_table(data),
    ]
    verdict, reasons = data.maximality.label, data.maximality.reasons
    if verdict:
        parts.append(f'<p class="verdict">Maximality: {_e(verdict)}</p>')
        if reasons:
            parts.append('<ul class="reasons">' + "".join(f"<li>{_e(r)}</li>" for r in reasons) + "</ul>")
    parts.append("</section>")
    parts.append('<section class="col"><h2>Ventilatory thresholds (estimates)</h2>')
    parts.append(_threshold_table(data, ctx))
    zrows = zone_rows(data)
    if zrows:
        header = list(dict.fromkeys(k for r in zrows for k in r))
        parts.append("<h2>Training zones</h2>")
        parts.append(_table(header, [[r.get(h, "–") for h in header] for r in zrows], numeric=tuple(range(1, len(header)))))
    parts.append("</section></div>")
    parts.append(_flags_line(data))

    if charts:
        parts.append('<section class="charts">')
        parts.extend(f'<figure class="chart">{svg}</figure>' for _title, svg in charts)
        parts.append("</section>")
    parts.append(_signature(ctx, version))
    parts.append(
        '<footer class="foot">' + (f'<span class="lab-footer">{_e(ctx.report_footer)}</span> · ' if ctx.report_footer else "")
        + f"Made with Tidemark on {_e(generated)} from the stored {_e(version)}. Methods and notes: page 2.</footer>"
    )
    parts.append("</div>")

    # --- page 2: the appendix ---------------------------------------------------------------
    parts.append('<div class="page appendix"><h2>Appendix: methods and notes</h2>')
    methods = _methods_list(data.methods)
    parts.append('<ul class="methods">' + "".join(f"<li>{_e(m)}</li>" for m in methods))
    parts.append(f"<li>Breaths left out of the analysis: {len(data.excluded_breaths)}</li>")
    parts.append("</ul>")
    parts.append(_flags_appendix(data))
    if data.zones.note:
        parts.append(f'<p class="sub">Training zones: {_e(data.zones.note)}</p>')
    warnings = list(data.warnings)
    if warnings:
        parts.append('<h2>Data-quality notes</h2><ul class="warnings">' + "".join(f"<li>{_e(w)}</li>" for w in warnings) + "</ul>")
    for title, body in appendix:
        parts.append(f'<section class="extra"><h2>{_e(title)}</h2>{body}</section>')
    parts.append('<div class="caution">' + " ".join(_e(c) for c in CAUTIONS[2:]) + "</div>")
    parts.append("</div></body></html>")
    return "\n".join(p for p in parts if p)
