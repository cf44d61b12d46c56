"""The report's oxygen appendix: dissociation curves, Fick against the curve, the O2 cascade at
peak and the what-if table, as one HTML section with static SVG charts (no script).

:func:`oxygen_appendix_html` reads the result's typed ``oxygen`` part (an
:class:`analysis.oxygen.comparison.OxygenComparison`) and, when present, its ``oxygen_cascade``
part (an :class:`analysis.oxygen.pathway.OxygenPathway`); without the latter it builds the pathway
from the typed comparison with :func:`analysis.oxygen.pathway.oxygen_pathway`. Every data-derived text is escaped. Every figure
is labelled a model estimate; interpretation is "consistent with", never a diagnosis.
"""

from __future__ import annotations

import html
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from dashboard import palette

if TYPE_CHECKING:
    from analysis.oxygen.comparison import OxygenComparison
    from analysis.oxygen.pathway import OxygenPathway
    from analysis.results import TestResults

#: Words above the appendix.
APPENDIX_CAUTION = (
    "Every figure in this appendix is a model estimate from published models (dissociation curves: "
    "Severinghaus 1979 / Siggaard-Andersen 1984; O2 cascade: Wagner 1996), not a measurement. Results are "
    "consistent with the inputs and the stated assumptions; none is a diagnosis. Tidemark is not a medical "
    "device; interpretation belongs to qualified staff under local protocols and licensed practice."
)

STATE_LABEL: dict[str, str] = {"rest": "Rest", "vt1": "VT1", "vt2": "VT2", "peak": "Peak"}
STATE_COLOUR: dict[str, str] = {
    "rest": palette.BLACK, "vt1": palette.ORANGE, "vt2": palette.REDDISH_PURPLE, "peak": palette.VERMILLION,
}
STATE_DASH: dict[str, str] = {"rest": "", "vt1": "8 4", "vt2": "2 3", "peak": "10 3 2 3"}


def _e(text: Any) -> str:
    return html.escape("" if text is None else str(text), quote=True)


def _num(value: Any, digits: int) -> str:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return "–"
    if not np.isfinite(v):
        return "–"
    return f"{v:,.{digits}f}".replace(",", "\u2009")


# --- a small static SVG line chart --------------------------------------------------------------


def _ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    span = hi - lo
    raw = span / n
    mag = 10 ** np.floor(np.log10(raw)) if raw > 0 else 1.0
    step = min((m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw), default=mag * 10)
    first = np.ceil(lo / step) * step
    return [float(t) for t in np.arange(first, hi + step * 1e-9, step)]


def svg_chart(
    series: Sequence[Mapping[str, Any]],
    *,
    title: str,
    x_label: str,
    y_label: str,
    x_range: tuple[float, float],
    y_range: tuple[float, float],
    width: int = 640,
    height: int = 380,
    legend_columns: int = 1,
) -> str:
    """A static line/point chart as inline SVG (every text escaped).

    Each series: ``name``, ``x``, ``y``, ``colour``, optional ``dash`` (SVG dash array), ``mode``
    ``"line"`` (default) or ``"points"``, ``open`` (hollow markers). The legend sits under the
    plot in ``legend_columns`` columns (filled column by column).
    """
    left, right, top, bottom = 64, 16, 34, 52
    columns = max(1, int(legend_columns))
    per_column = -(-len(series) // columns)
    legend_h = 18 * per_column
    legend_x = left if columns == 1 else 8
    column_w = (width - legend_x) / columns
    full_h = height + legend_h
    pw, ph = width - left - right, height - top - bottom
    (x0, x1), (y0, y1) = x_range, y_range

    def sx(x: float) -> float:
        return left + (float(x) - x0) / (x1 - x0) * pw

    def sy(y: float) -> float:
        return top + ph - (float(y) - y0) / (y1 - y0) * ph

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" role="img" viewBox="0 0 {width} {full_h}" width="{width}" '
        f'height="{full_h}" class="oxygen-chart"><title>{_e(title)}</title>',
        f'<text x="{width / 2:.0f}" y="18" text-anchor="middle" font-size="14" font-weight="bold">{_e(title)}</text>',
        f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="none" stroke="#999"/>',
    ]
    for t in _ticks(x0, x1):
        out.append(f'<line x1="{sx(t):.1f}" y1="{top + ph}" x2="{sx(t):.1f}" y2="{top + ph + 5}" stroke="#666"/>')
        out.append(f'<text x="{sx(t):.1f}" y="{top + ph + 18}" text-anchor="middle" font-size="11">{_e(f"{t:g}")}</text>')
    for t in _ticks(y0, y1):
        out.append(f'<line x1="{left - 5}" y1="{sy(t):.1f}" x2="{left}" y2="{sy(t):.1f}" stroke="#666"/>')
        out.append(f'<line x1="{left}" y1="{sy(t):.1f}" x2="{left + pw}" y2="{sy(t):.1f}" stroke="#eee"/>')
        out.append(f'<text x="{left - 8}" y="{sy(t) + 4:.1f}" text-anchor="end" font-size="11">{_e(f"{t:g}")}</text>')
    out.append(f'<text x="{left + pw / 2:.0f}" y="{top + ph + 40}" text-anchor="middle" font-size="12">{_e(x_label)}</text>')
    out.append(
        f'<text x="16" y="{top + ph / 2:.0f}" text-anchor="middle" font-size="12" '
        f'transform="rotate(-90 16 {top + ph / 2:.0f})">{_e(y_label)}</text>'
    )
    for k, s in enumerate(series):
        colour = _e(s.get("colour", palette.BLACK))
        dash = f' stroke-dasharray="{_e(s["dash"])}"' if s.get("dash") else ""
        pts = [
            (sx(x), sy(y))
            for x, y in zip(s["x"], s["y"], strict=True)
            if x is not None and y is not None and x0 <= float(x) <= x1 and y0 <= float(y) <= y1
        ]
        if s.get("mode") == "points":
            fill = "white" if s.get("open") else colour
            out += [f'<circle cx="{px:.1f}" cy="{py:.1f}" r="5" fill="{fill}" stroke="{colour}" stroke-width="2"/>' for px, py in pts]
        elif len(pts) > 1:
            path = " ".join(f"{px:.1f},{py:.1f}" for px, py in pts)
            out.append(f'<polyline points="{path}" fill="none" stroke="{colour}" stroke-width="2"{dash}/>')
        ly = height + 18 * (k % per_column) + 6
        lx = legend_x + column_w * (k // per_column)
        if s.get("mode") == "points":
            fill = "white" if s.get("open") else colour
            out.append(f'<circle cx="{lx + 10:.1f}" cy="{ly - 4}" r="5" fill="{fill}" stroke="{colour}" stroke-width="2"/>')
        else:
            out.append(f'<line x1="{lx:.1f}" y1="{ly - 4}" x2="{lx + 22:.1f}" y2="{ly - 4}" stroke="{colour}" '
                       f'stroke-width="2"{dash}/>')
        out.append(f'<text x="{lx + 30:.1f}" y="{ly}" font-size="11">{_e(s.get("name", ""))}</text>')
    out.append("</svg>")
    return "".join(out)


# --- the parts ----------------------------------------------------------------------------------


def _table(header: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    body = "".join("<tr>" + "".join(f"<td>{_e(c)}</td>" for c in row) + "</tr>" for row in rows)
    return f'<table class="oxygen-table"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>'


#: Size of each appendix chart (SVG units; two side by side across the printed page).
CHART_SIZE: dict[str, int] = {"width": 470, "height": 195}


def curves_svg(oxygen: OxygenComparison) -> str:
    """Dissociation curves (resting and each state's mixed venous curve) with arterial and venous points."""
    from analysis.oxygen import saturation

    model = oxygen.model
    grid = np.linspace(1.0, 120.0, 120)
    series: list[dict[str, Any]] = []
    curves = {"rest": oxygen.resting_conditions} | {s.name: s.conditions for s in oxygen.states if s.name != "rest"}
    for name, conds in curves.items():
        sat = saturation(grid, model=model, **conds.curve_kwargs(model))
        series.append({
            "name": f"{STATE_LABEL.get(name, name)} curve", "x": grid, "y": 100.0 * np.asarray(sat),
            "colour": STATE_COLOUR.get(name, palette.GREY), "dash": STATE_DASH.get(name, ""),
        })
    states = oxygen.states
    series.append({
        "name": "Arterial (estimate)", "mode": "points", "colour": palette.BLUE,
        "x": [s.pao2_mmhg for s in states], "y": [100.0 * s.sao2 for s in states],
    })
    venous = [(s.pvo2_exercise_curve_mmhg, s.svo2) for s in states]
    venous_points = [(pv, sv) for pv, sv in venous if pv is not None and sv is not None]
    series.append({
        "name": "Mixed venous (Fick)", "mode": "points", "open": True, "colour": palette.VERMILLION,
        "x": [pv for pv, _ in venous_points], "y": [100.0 * sv for _, sv in venous_points],
    })
    return svg_chart(
        series, title="O2 dissociation curves (model estimate)", x_label="PO2 (mmHg)",
        y_label="O2 saturation (%)", x_range=(0.0, 120.0), y_range=(0.0, 100.0), legend_columns=3, **CHART_SIZE,
    )


def fick_table(oxygen: OxygenComparison) -> str:
    """Fick against the curve, one row per state (mixed venous blood)."""
    q_words = {"measured": "measured", "stringer1997": "estimate, Stringer 1997",
               "resting_typical_avo2": "assumed: typical rest a-vO2"}
    rows = []
    for s in oxygen.states:
        rows.append([
            STATE_LABEL.get(s.name, s.name), _num(s.vo2_ml_min, 0), _num(s.q_l_min, 1),
            q_words.get(s.q_method, s.q_method), _num(s.avo2_ml_dl, 1),
            _num(s.pao2_mmhg, 0), _num(100.0 * s.sao2, 1), _num(s.cao2_ml_dl, 1),
            _num(s.cvo2_ml_dl, 1), _num(None if s.svo2 is None else 100.0 * s.svo2, 1),
            _num(s.pvo2_exercise_curve_mmhg, 1),
        ])
    return _table(
        ["State", "VO2 (mL/min)", "Q (L/min)", "Q source", "a-vO2 (mL/dL)", "PaO2 (mmHg)", "SaO2 (%)", "CaO2 (mL/dL)",
         "CvO2 (mL/dL)", "SvO2 (%)", "PvO2 (mmHg)"],
        rows,
    ) + '<p class="ox-key">CvO2, SvO2, PvO2: mixed venous blood; Q: cardiac output.</p>'


def cascade_svg(pathway: OxygenPathway) -> str:
    """The convective and diffusive lines of the cascade and their meeting point."""
    lines = pathway.lines
    top = 1.6 * float(lines.meeting_vo2_ml_min)
    x_max = float(max(lines.pvo2_mmhg))
    series = [
        {"name": "Convective (Fick) line", "x": lines.pvo2_mmhg, "y": lines.convective_vo2_ml_min,
         "colour": palette.BLUE},
        {"name": "Diffusive line", "x": lines.pvo2_mmhg,
         "y": lines.diffusive_vo2_ml_min, "colour": palette.VERMILLION, "dash": "8 4"},
        {"name": f"Meeting point: VO2 {float(lines.meeting_vo2_ml_min):.0f} mL/min", "mode": "points",
         "x": [lines.meeting_pvo2_mmhg], "y": [lines.meeting_vo2_ml_min], "colour": palette.BLACK},
    ]
    return svg_chart(
        series, title="O2 cascade at peak (model estimate, Wagner 1996)", x_label="Venous PO2, mixed venous (mmHg)",
        y_label="VO2 (mL/min)", x_range=(0.0, max(10.0, x_max)), y_range=(0.0, top), legend_columns=2, **CHART_SIZE,
    )


#: The what-if scenarios in words (codes of :data:`analysis.oxygen.scenarios.SCENARIO_CODES`), each
#: with the caveat a reader needs; an unknown code is shown as it is.
SCENARIO_WORDS: dict[str, str] = {
    "baseline": "As measured (the person's own cascade)",
    "hb_minus_10pct": "Hb 10 % lower",
    "hb_minus_20pct": "Hb 20 % lower",
    "hb_plus_10pct": "Hb 10 % higher",
    "cohb_10pct": "Carboxyhaemoglobin 10 % (SpO2 would still read near normal)",
    "p50_18mmhg": "High-affinity Hb: standard P50 18 mmHg",
    "altitude_2000m": "Altitude 2,000 m, no acclimatisation",
    "fio2_30pct": "30 % O2 inspired",
    "q_plus_10pct": "Cardiac output 10 % higher",
    "dmo2_plus_10pct": "Muscle O2 diffusing capacity 10 % higher",
}


def scenario_words(code: str) -> str:
    """``"hb_minus_10pct"`` -> ``"Hb 10 % lower"`` (an unknown code as it is)."""
    return SCENARIO_WORDS.get(code, code)


def what_if_table(pathway: OxygenPathway) -> str:
    """One row per scenario: what changes (in words), predicted VO2peak and its change from the
    measured one. Each scenario changes one input; the others stay as measured."""
    rows = [
        [scenario_words(w.scenario), _num(w.vo2_peak_ml_min, 0), f"{float(w.change_pct):+.1f}"]
        for w in pathway.what_if
    ]
    return _table(["What if (one input changed)", "Predicted VO2peak (mL/min, estimate)", "Change (%)"], rows)


def _peak_line(pathway: OxygenPathway) -> str:
    """The cascade's values at peak as one line of ``name value unit`` pairs."""
    p = pathway.peak
    q = "measured" if not pathway.q_estimated else "estimate"
    pairs = [
        ("alveolar PO2", _num(p.pao2_alveolar_mmhg, 1), "mmHg"),
        ("arterial PO2", _num(p.pao2_mmhg, 1), "mmHg"),
        ("SaO2", _num(100.0 * p.sao2, 1), "%"),
        ("CaO2", _num(p.cao2_ml_dl, 1), "mL/dL"),
        (f"cardiac output ({q})", _num(pathway.q_l_min, 1), "L/min"),
        ("O2 delivery", _num(p.o2_delivery_ml_min, 0), "mL/min"),
        ("mixed venous PO2", _num(p.pvo2_mmhg, 1), "mmHg"),
        ("mixed venous SvO2", _num(100.0 * p.svo2, 1), "%"),
        ("mean capillary PO2", _num(p.mean_capillary_po2_mmhg, 1), "mmHg"),
        ("muscle O2 diffusing capacity DmO2", _num(pathway.dmo2_ml_min_mmhg, 0), "mL/min/mmHg"),
    ]
    items = " · ".join(f"{_e(name)} <strong>{value}</strong> {_e(unit)}" for name, value, unit in pairs)
    return f'<p class="ox-peak"><strong>At peak (model estimate):</strong> {items}.</p>'


def _co2_table(pathway: OxygenPathway) -> str:
    rows = [
        [STATE_LABEL.get(c.state, c.state), _num(c.avco2_ml_dl, 2), _num(c.dissolved_ml_dl, 2),
         _num(c.carbamino_ml_dl, 2), _num(c.bicarbonate_ml_dl, 2), _num(c.haldane_ml_dl, 2)]
        for c in pathway.co2
    ]
    return _table(["State", "a-v CO2 (mL/dL)", "Dissolved", "Carbamino", "Bicarbonate", "Haldane part"], rows)


def _pathway_of(oxygen: OxygenComparison) -> tuple[OxygenPathway | None, tuple[str, ...]]:
    """The cascade from the typed comparison by the analysis' own step (its notes as values)."""
    from analysis.errors import TidemarkError
    from analysis.oxygen.pathway import oxygen_pathway

    try:
        return oxygen_pathway(oxygen)
    except TidemarkError as exc:
        return None, (f"Oxygen cascade not made: {exc}",)


def appendix_html(results: TestResults, session: Any = None) -> str | None:
    """The oxygen appendix body for the report (``dashboard.report.assemble.appendix_sections``).

    Parameters
    ----------
    results : TestResults
        The typed result (its ``oxygen`` and ``oxygen_cascade`` parts).
    session : Session, optional
        Not needed (kept for the report's calling convention).

    Returns
    -------
    str or None
        The section's HTML without its heading (the report adds "Oxygen path (estimates)"), or
        ``None`` when the test has no oxygen comparison.
    """
    said = [str(w) for w in results.warnings]  # printed among the report's data-quality notes
    body = oxygen_appendix_html(results.oxygen, pathway=results.oxygen_cascade, heading=False, said=said)
    return body or None


def oxygen_appendix_html(
    oxygen: OxygenComparison | None,
    *,
    pathway: OxygenPathway | None = None,
    heading: bool = True,
    said: Sequence[str] = (),
) -> str:
    """The oxygen appendix as one ``<section>`` (empty string when the test has no oxygen comparison).

    Parameters
    ----------
    oxygen : OxygenComparison or None
        The result's ``oxygen`` part (the per-state comparison record).
    pathway : OxygenPathway, optional
        The result's ``oxygen_cascade`` part; built from ``oxygen`` with
        :func:`analysis.oxygen.pathway.oxygen_pathway` when left out.
    heading : bool, default True
        Start with the appendix heading (the report's own frame adds one when False).
    said : sequence of str
        Notes the report already prints elsewhere (its data-quality notes); a cascade note that
        one of them ends with is not repeated here.
    """
    if oxygen is None or not oxygen.states:
        return ""
    notes: tuple[str, ...] = ()
    if pathway is None:
        pathway, notes = _pathway_of(oxygen)
    parts = [
        '<section class="oxygen-appendix">',
        "<h2>Appendix: oxygen path (model estimates)</h2>" if heading else "",
        f'<p class="caution">{_e(APPENDIX_CAUTION)}</p>',
        '<div class="ox-charts">',
        f'<figure class="ox-chart">{curves_svg(oxygen)}<figcaption>Filled markers: arterial blood; open markers: '
        "mixed venous blood implied by the Fick principle on each state's curve. Estimates.</figcaption></figure>",
    ]
    if pathway is not None:
        parts.append(f'<figure class="ox-chart">{cascade_svg(pathway)}<figcaption>Convective line: 10 Q (CaO2 - CvO2); '
                     "diffusive line: DmO2 × mean capillary PO2 (Bohr integration); where they meet is the predicted "
                     "VO2peak.</figcaption></figure>")
    parts += ["</div>", "<h3>Fick against the curve</h3>", fick_table(oxygen)]
    if pathway is not None:
        hv_note = pathway.hyperventilation.note
        co2 = ["<h3>CO2 side (estimate)</h3>", _co2_table(pathway)] if pathway.co2 else []
        parts += [
            _peak_line(pathway),
            '<div class="ox-row"><div>',
            what_if_table(pathway),
            *co2,
            "</div><div>",
            f"<p>{_e(pathway.limiting)}</p>",
            '<p class="ox-assumptions"><strong>Assumptions of the model:</strong> '
            + "; ".join(_e(a) for a in pathway.assumptions) + ".</p>",
            f"<p>Resting hyperventilation: {_e(hv_note)}</p>" if hv_note else "",
            "</div></div>",
        ]
        notes = tuple(pathway.notes) + tuple(n for n in notes if n not in pathway.notes)
    notes = tuple(n for n in notes if not any(str(s).endswith(n) for s in said))
    if notes:
        parts.append("<ul class=\"oxygen-notes\">" + "".join(f"<li>{_e(n)}</li>" for n in notes) + "</ul>")
    parts.append("</section>")
    return "\n".join(p for p in parts if p)
