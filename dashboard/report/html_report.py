"""Self-contained HTML report of one test.

The report is one HTML file that opens offline: plotly.js is embedded inline exactly once (no
CDN, no external link or script source), the style sheet is inlined, and the page prints on A4
or Letter without cutting a chart (fixed 170 mm chart width, ``break-inside: avoid``).

Every number comes from the results JSON of :func:`analysis.pipeline.analyze_session`
(``to_json(TestResults)``); this module only formats them.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from importlib import resources
from typing import Any

from analysis.records import to_json
from analysis.session import Session

#: The caution printed on every report (and on the coach view).
CAUTIONS: tuple[str, ...] = (
    "Tidemark is not a medical device. Results support, and do not replace, the judgement of "
    "qualified staff.",
    "Thresholds, predicted values, cardiac output and every oxygen-transport figure are "
    "estimates from models, not measurements; they are labelled as such.",
    "Exercise testing, its supervision and the interpretation of results belong to qualified "
    "staff working under local protocols and licensed practice.",
)

#: Report chart size: 170 mm at 96 px/inch fits A4 (186 mm) and Letter (192 mm) at 12 mm margins.
CHART_WIDTH_PX = 640
CHART_HEIGHT_PX = 300


@dataclass(frozen=True)
class Headline:
    """One headline result: label, where it sits in the results JSON, unit, decimals, method keys."""

    label: str
    path: tuple[str, ...]
    unit: str
    digits: int
    method_keys: tuple[str, ...] = ()


HEADLINES: tuple[Headline, ...] = (
    Headline("VO2peak", ("vo2_peak_ml_min",), "mL/min", 0, ("vo2_peak", "vo2_peak_ml_min", "peak")),
    Headline("VO2peak per kg", ("vo2_peak_ml_kg_min",), "mL/kg/min", 1, ("vo2_peak", "vo2_peak_ml_kg_min", "peak")),
    Headline("RER peak", ("rer_peak",), "", 2, ("rer_peak", "peak")),
    Headline("Heart rate peak", ("hr_peak_bpm",), "beats/min", 0, ("hr_peak_bpm", "hr_peak", "peak")),
    Headline("VE/VCO2 slope", ("ve_vco2_slope",), "", 1, ("ve_vco2_slope",)),
    Headline("OUES", ("oues",), "mL/min per log10(L/min)", 0, ("oues",)),
    Headline("Peak O2 pulse", ("o2_pulse_peak_ml_beat",), "mL/beat", 1, ("o2_pulse", "o2_pulse_peak_ml_beat")),
)

#: Rows of the threshold table: label, key in the threshold object, unit, decimals.
THRESHOLD_ROWS: tuple[tuple[str, str, str, int], ...] = (
    ("Time", "time_s", "s", 0),
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


def _get(node: Any, path: Sequence[str]) -> Any:
    for key in path:
        if not isinstance(node, Mapping):
            return None
        node = node.get(key)
    return node


def _number(value: Any) -> float | None:
    if value is None or isinstance(value, bool):
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def format_number(value: Any, digits: int) -> str:
    """Text of a number with ``digits`` decimals, or an en dash when missing."""
    v = _number(value)
    if v is None:
        return "–"
    return f"{v:,.{digits}f}".replace(",", "\u2009")


def _e(text: Any) -> str:
    return html.escape("" if text is None else str(text), quote=True)


def _method_text(results: Mapping[str, Any], keys: Sequence[str]) -> str:
    methods = results.get("methods") or {}
    if isinstance(methods, Mapping):
        for key in keys:
            value = methods.get(key)
            if value:
                return str(value) if not isinstance(value, Mapping) else "; ".join(f"{k}: {v}" for k, v in value.items())
    return ""


def headline_rows(results: Mapping[str, Any]) -> list[dict[str, str]]:
    """Headline results as display rows ``{"label", "value", "unit", "method"}`` (present ones only)."""
    rows = []
    for h in HEADLINES:
        value = _get(results, h.path)
        if value is None and h.path == ("o2_pulse_peak_ml_beat",):
            value = _get(results, ("indices", "o2_pulse_peak_ml_beat"))
        if _number(value) is None:
            continue
        rows.append(
            {
                "label": h.label,
                "value": format_number(value, h.digits),
                "unit": h.unit,
                "method": _method_text(results, h.method_keys),
            }
        )
    return rows


def column_title(label: str, unit: str) -> str:
    """``"VO2 (mL/min)"``; a label that already names its unit (``"% of VO2peak"``) stays as it is."""
    if not unit or (unit == "%" and label.startswith("%")):
        return label
    return f"{label} ({unit})"


def threshold_source(threshold: Mapping[str, Any] | None) -> str:
    """"manual" when the reviewer set the threshold, else "automatic" (or "" when absent)."""
    if not threshold:
        return ""
    source = str(threshold.get("source") or threshold.get("origin") or "").lower()
    if source in {"manual", "override", "reviewer"} or threshold.get("manual") is True:
        return "manual"
    return "automatic"


def threshold_display(results: Mapping[str, Any]) -> list[dict[str, str]]:
    """VT1/VT2 as display rows (values formatted from the results JSON; manual picks marked)."""
    rows = []
    for kind, name in (("vt1", "VT1"), ("vt2", "VT2 / RCP")):
        t = results.get(kind)
        row = {"Threshold": name}
        if not isinstance(t, Mapping):
            row["Set"] = "not found"
            rows.append(row)
            continue
        for label, key, unit, digits in THRESHOLD_ROWS:
            if _number(t.get(key)) is not None:
                row[column_title(label, unit)] = format_number(t.get(key), digits)
        row["Method"] = str(t.get("method") or "")
        row["Set"] = threshold_source(t)
        rows.append(row)
    return rows


def _maximality(results: Mapping[str, Any]) -> tuple[str, list[str]]:
    node = results.get("maximality")
    verdict = ""
    reasons: list[str] = []
    if isinstance(node, Mapping):
        verdict = str(node.get("label") or node.get("verdict") or "")
        reasons = [str(r) for r in (node.get("reasons") or [])]
    elif node:
        verdict = str(node)
    verdict = verdict or str(results.get("maximality_verdict") or "")
    reasons = reasons or [str(r) for r in (results.get("maximality_reasons") or [])]
    return verdict, reasons


def _zones(results: Mapping[str, Any]) -> list[Mapping[str, Any]]:
    node = results.get("zones")
    if isinstance(node, Mapping):
        node = node.get("zones") or node.get("rows") or []
    return [z for z in (node or []) if isinstance(z, Mapping)]


def _zone_note(results: Mapping[str, Any]) -> str:
    node = results.get("zones")
    if isinstance(node, Mapping):
        return str(node.get("note") or "")
    return ""


_ZONE_RANGES: tuple[tuple[str, str, str, int], ...] = (
    ("Heart rate", "hr", "beats/min", 0),
    ("Work rate", "work", "W", 0),
    ("Speed", "speed", "km/h", 1),
    ("Grade", "grade", "%", 1),
    ("VO2", "vo2", "mL/min", 0),
)


def _zone_range(zone: Mapping[str, Any], stem: str, digits: int) -> str | None:
    lows = [k for k in zone if k.startswith(stem + "_low")]
    highs = [k for k in zone if k.startswith(stem + "_high")]
    if not lows and not highs:
        return None
    lo = _number(zone.get(lows[0])) if lows else None
    hi = _number(zone.get(highs[0])) if highs else None
    if lo is None and hi is None:
        return None
    if lo is None:
        return f"below {format_number(hi, digits)}"
    if hi is None:
        return f"above {format_number(lo, digits)}"
    return f"{format_number(lo, digits)}–{format_number(hi, digits)}"


def zone_rows(results: Mapping[str, Any]) -> list[dict[str, str]]:
    """Zones as display rows: name plus each range the zone has (HR, work, speed, VO2)."""
    rows = []
    for i, zone in enumerate(_zones(results), start=1):
        row = {"Zone": str(zone.get("name") or zone.get("label") or f"Zone {i}")}
        for label, stem, unit, digits in _ZONE_RANGES:
            text = _zone_range(zone, stem, digits)
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


def _threshold_table(results: Mapping[str, Any], ctx: ReportContext) -> str:
    names = [("vt1", "VT1"), ("vt2", "VT2 / RCP")]
    header = ["", *[label for _, label in names]]
    rows: list[list[str]] = []
    for label, key, unit, digits in THRESHOLD_ROWS:
        values = [format_number(_get(results, (k, key)), digits) for k, _ in names]
        if all(v == "–" for v in values):
            continue
        rows.append([column_title(label, unit), *values])
    method_row = ["Method"]
    set_row = ["Set by"]
    for k, _ in names:
        t = results.get(k)
        if not isinstance(t, Mapping):
            method_row.append("not found")
            set_row.append("–")
            continue
        method_row.append(str(t.get("method") or ""))
        src = threshold_source(t)
        if src == "manual":
            who = ctx.threshold_setters.get(k) or str(t.get("note") or t.get("reason") or "reviewer")
            set_row.append(f"MANUAL — {who}")
        else:
            conf = t.get("confidence")
            conf_text = f" (confidence {conf})" if conf not in (None, "") else ""
            set_row.append(f"automatic{conf_text}")
    rows.extend([method_row, set_row])
    return _table(header, rows, numeric=(1, 2))


def report_chart_height(layout: Mapping[str, Any]) -> int:
    """Height (px) of a chart in the report: room for each stacked panel (an axis that only
    overlays another, such as work rate beside heart rate, adds none) and the legend above."""
    stacked = sum(
        1 for key, axis in layout.items()
        if key.startswith("yaxis") and not (isinstance(axis, Mapping) and axis.get("overlaying"))
    )
    if stacked <= 1:
        return CHART_HEIGHT_PX + 140  # one panel (V-slope): close to square, legend above
    return CHART_HEIGHT_PX + 150 * (stacked - 1)


def _figure_html(title: str, fig: Any, *, first: bool) -> str:
    fig = fig.__class__(fig)  # a copy: the caller's figure keeps its own size and title
    fig.update_layout(
        width=CHART_WIDTH_PX,
        height=report_chart_height(fig.layout.to_plotly_json()),
        autosize=False,
        title=None,
        font={"size": 11},
        # legend above the plot on paper: it never covers an axis title or the data
        legend={"orientation": "h", "yanchor": "bottom", "y": 1.02, "xanchor": "left", "x": 0, "font": {"size": 10}},
        margin={"l": 70, "r": 60, "t": 110, "b": 50},
    )
    div = fig.to_html(
        include_plotlyjs=bool(first),
        full_html=False,
        config={"displaylogo": False, "responsive": False, "displayModeBar": False},
    )
    return f'<div class="figure"><h3>{_e(title)}</h3><div class="plot">{div}</div></div>'


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
    "oxygen": "Oxygen path", "oxygen_spo2": "Arterial saturation",
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


def _methods_list(results: Mapping[str, Any]) -> list[str]:
    methods = results.get("methods") or {}
    items: list[str] = []
    if isinstance(methods, Mapping):
        for key, value in methods.items():
            text = "; ".join(f"{k}: {v}" for k, v in value.items()) if isinstance(value, Mapping) else str(value)
            items.append(f"{method_name(str(key))}: {method_text(text)}")
    averaging = results.get("averaging")
    if averaging and not any(str(k).startswith("averaging") for k in (methods or {})):
        text = (
            averaging.get("label") or ", ".join(f"{k} {v}" for k, v in averaging.items())
            if isinstance(averaging, Mapping)
            else str(averaging)
        )
        items.append(f"Averaging: {text}")
    return items


def build_report_html(
    results: Any,
    session: Session | None = None,
    *,
    figures: Sequence[tuple[str, Any]] | Mapping[str, Any] = (),
    context: ReportContext | None = None,
) -> str:
    """Build the one-file HTML report of a test.

    Parameters
    ----------
    results : TestResults or mapping
        The analysis results (``TestResults`` or its JSON form, ``to_json(results)``).
    session : Session, optional
        The test's session (for protocol, date and body mass lines).
    figures : sequence of (title, plotly Figure) or mapping title -> Figure
        Charts to embed, in order. plotly.js is written inline once, with the first chart.
    context : ReportContext, optional
        Person label, version, sign-off and who set manual thresholds.

    Returns
    -------
    str
        A complete HTML document with no external script, style or link source.
    """
    data: Mapping[str, Any] = to_json(results)  # a TestResults, or its JSON form (a mapping)
    ctx = context or ReportContext()
    meta = session.meta if session is not None else {}
    items = list(figures.items()) if isinstance(figures, Mapping) else list(figures)
    generated = ctx.generated_at or _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")

    if ctx.signed_off_by:
        state = f'<span class="badge signed">Signed off by {_e(ctx.signed_off_by)}{" on " + _e(ctx.signed_off_at) if ctx.signed_off_at else ""}</span>'
    else:
        state = '<span class="badge draft">Draft — not signed off</span>'
    version = f"version {ctx.version}" if ctx.version is not None else "unsaved settings"

    facts = []
    for label, key in (("Test date", "test_date"), ("Protocol", "protocol"), ("Mode", "mode")):
        if meta.get(key):
            facts.append(f"{label}: {_e(meta[key])}")
    for label, key, unit in (("Body mass", "body_mass_kg", "kg"), ("Age", "age_y", "y"), ("Hb", "hb_g_dl", "g/dL")):
        if _number(meta.get(key)) is not None:
            facts.append(f"{label}: {format_number(meta[key], 1 if key != 'age_y' else 0)} {unit}")

    parts: list[str] = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>Exercise test report — {_e(ctx.person_label or 'test')}</title>",
        f"<style>{_css()}</style></head><body>",
        "<header>",
        _letterhead(ctx),
        f"<h1>Exercise test report{' — ' + _e(ctx.person_label) if ctx.person_label else ''}</h1>",
        f'<p class="sub">{_e(version)} · {state}</p>',
        f'<p class="sub">{" · ".join(facts)}</p>' if facts else "",
        "</header>",
        '<div class="caution"><strong>Caution.</strong> ' + " ".join(_e(c) for c in CAUTIONS) + "</div>",
    ]

    rows = headline_rows(data)
    parts.append("<section><h2>Headline results</h2>")
    parts.append(_table(["Result", "Value", "Unit", "Method"], [[r["label"], r["value"], r["unit"], r["method"]] for r in rows], numeric=(1,)))
    verdict, reasons = _maximality(data)
    if verdict:
        parts.append(f'<p><span class="verdict">Maximality: {_e(verdict)}</span></p>')
        if reasons:
            parts.append("<ul>" + "".join(f"<li>{_e(r)}</li>" for r in reasons) + "</ul>")
    parts.append("</section>")

    parts.append("<section><h2>Ventilatory thresholds (estimates)</h2>")
    parts.append(_threshold_table(data, ctx))
    parts.append("</section>")

    zrows = zone_rows(data)
    if zrows:
        header = list(dict.fromkeys(k for r in zrows for k in r))
        parts.append("<section><h2>Training zones</h2>")
        parts.append(_table(header, [[r.get(h, "–") for h in header] for r in zrows], numeric=tuple(range(1, len(header)))))
        note = _zone_note(data)
        if note:
            parts.append(f'<p class="sub">{_e(note)}</p>')
        parts.append("</section>")

    warnings = [str(w) for w in (data.get("warnings") or [])]
    if warnings:
        parts.append('<section><h2>Data-quality notes</h2><ul class="warnings">')
        parts.extend(f"<li>{_e(w)}</li>" for w in warnings)
        parts.append("</ul></section>")

    if items:
        parts.append("<section><h2>Charts</h2>")
        for i, (title, fig) in enumerate(items):
            parts.append(_figure_html(title, fig, first=(i == 0)))
        parts.append("</section>")

    methods = _methods_list(data)
    parts.append("<section><h2>Methods</h2><ul>")
    parts.extend(f"<li>{_e(m)}</li>" for m in methods)
    excluded = data.get("excluded_breaths")
    if isinstance(excluded, list):
        parts.append(f"<li>breaths left out of the analysis: {len(excluded)}</li>")
    parts.append("</ul></section>")

    parts.append(
        "<footer>" + (f'<p class="lab-footer">{_e(ctx.report_footer)}</p>' if ctx.report_footer else "")
        + f"Made with Tidemark on {_e(generated)} from the stored {_e(version)}. "
        + " ".join(_e(c) for c in CAUTIONS[:1])
        + "</footer></body></html>"
    )
    return "\n".join(p for p in parts if p)
