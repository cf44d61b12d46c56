"""Oxygen path page: Fick extraction against the haemoglobin dissociation curve.

For rest, VT1, VT2 and peak: the dissociation curves under resting and exercise conditions
with the arterial and implied venous points, the Fick-versus-curve table and the breakdown of
unloading by cause. The conditions are editable; the page puts them into the analysis settings
(``oxygen``) and shows what :func:`analysis.pipeline.analyze_session` — which calls
:func:`analysis.oxygen.oxygen_comparison` — returns. Nothing is computed here.
"""

from __future__ import annotations

import copy
import logging
import re
from dataclasses import asdict
from typing import TYPE_CHECKING, Any

import pandas as pd
import streamlit as st

from analysis.oxygen import CAUTION, DEFAULT_CONDITIONS, STATE_NAMES, StateConditions
from analysis.oxygen.comparison import COMPARISON_MODELS, OxygenComparison
from analysis.oxygen.pathway import OxygenPathway
from analysis.results import TestResults
from dashboard import data, state
from dashboard.charts.oxygen_curves import STATE_LABEL, dissociation_figure, unloading_figure
from dashboard.report.html_report import format_number
from dashboard.views._test_choice import choose_test, settings_json, test_settings

if TYPE_CHECKING:
    from store import Store

log = logging.getLogger("tidemark.dashboard")

#: Short names in the selector (a long name is cut off in a third of the page) ...
MODEL_LABELS: dict[str, str] = {
    "siggaard_andersen": "Siggaard-Andersen 1984",
    "severinghaus": "Severinghaus 1979",
}
#: ... and what each curve takes into account, shown under it.
MODEL_INPUTS: dict[str, str] = {
    "siggaard_andersen": "Shifts with pH, base excess, 2,3-BPG and temperature.",
    "severinghaus": "Shifts with pH, PCO2 and temperature.",
}

#: Editable conditions: field, label, step, min, max.
CONDITION_FIELDS: tuple[tuple[str, str, float, float, float], ...] = (
    ("temperature_c", "Temperature (°C)", 0.1, 30.0, 43.0),
    ("ph", "pH", 0.01, 6.9, 7.7),
    ("pco2_mmhg", "PCO2 (mmHg)", 1.0, 15.0, 120.0),
    ("dpg_mmol_l", "2,3-BPG (mmol/L)", 0.1, 1.0, 12.0),
    ("base_excess_mmol_l", "Base excess (mmol/L)", 0.5, -30.0, 15.0),
)

DEFAULT_PAO2_MMHG = 95.0
DEFAULT_SPO2_PCT = 97.0


def widget_key(state_name: str, field: str) -> str:
    """Session-state key of one condition input (tests set these)."""
    return f"ox_{state_name}_{field}"


#: How the blood gas of each state is given: the field left out is derived (Van Slyke equation).
GAS_GIVEN: dict[str, str] = {
    "ph": "PCO2 and base excess (pH derived)",
    "base_excess_mmol_l": "pH and PCO2 (base excess derived)",
    "pco2_mmhg": "pH and base excess (PCO2 derived)",
    "": "pH, PCO2 and base excess (a measured blood gas)",
}

#: Where arterial PO2 comes from.
PAO2_SOURCES: tuple[str, ...] = ("Alveolar gas equation", "Measured PaO2", "SpO2")


def oxygen_settings(
    *,
    model: str,
    pao2_mmhg: float | None,
    spo2_pct: float | None,
    conditions: dict[str, dict[str, float | None]],
    q_l_min: dict[str, float],
) -> dict[str, Any]:
    """The ``oxygen`` entry of the analysis settings, in the form the pipeline reads.

    ``pao2_mmhg`` is a MEASURED arterial PO2; ``None`` lets the analysis derive it from the
    alveolar gas equation at the test's barometric pressure.
    """
    out: dict[str, Any] = {"model": model, "conditions": conditions}
    if pao2_mmhg is not None:
        out["pao2_mmhg"] = float(pao2_mmhg)
    if spo2_pct is not None:
        out["spo2_pct"] = float(spo2_pct)
    if q_l_min:
        out["q_l_min"] = {k: float(v) for k, v in q_l_min.items()}
    return out


def with_oxygen(settings: dict[str, Any], oxygen: dict[str, Any], *, hb_g_dl: float | None) -> dict[str, Any]:
    """A copy of ``settings`` with the oxygen conditions (and an Hb override when given)."""
    new = copy.deepcopy(settings)
    new["oxygen"] = oxygen
    if hb_g_dl is not None:
        meta = dict(new.get("metadata") or {})
        meta["hb_g_dl"] = float(hb_g_dl)
        new["metadata"] = meta
    return new


def points_frame(oxygen: OxygenComparison) -> pd.DataFrame:
    """Arterial and venous points of each state for the curve chart (values from the record)."""
    rows = []
    seen_arterial = set()
    for s in oxygen.states:
        art = (round(float(s.pao2_mmhg), 3), round(float(s.sao2), 5))
        if art not in seen_arterial:
            seen_arterial.add(art)
            rows.append({"state": s.name, "site": "arterial", "po2_mmhg": s.pao2_mmhg, "saturation": s.sao2})
        if s.svo2 is not None and s.pvo2_exercise_curve_mmhg is not None:
            rows.append({"state": s.name, "site": "venous", "po2_mmhg": s.pvo2_exercise_curve_mmhg, "saturation": s.svo2})
    return pd.DataFrame(rows, columns=["state", "site", "po2_mmhg", "saturation"])


def by_state(rows: list[dict[str, str]]) -> pd.DataFrame:
    """Quantities as rows and the states (Rest, VT1, VT2, Peak) as columns: reads on a tablet."""
    if not rows:
        return pd.DataFrame()
    frame = pd.DataFrame(rows).set_index("State").T
    frame.index.name = "Quantity"
    return frame.reset_index()


def comparison_table(oxygen: OxygenComparison) -> pd.DataFrame:
    """The Fick-versus-curve table (one column per state), numbers formatted from the record."""
    rows = []
    for s in oxygen.states:
        rows.append(
            {
                "State": STATE_LABEL.get(s.name, s.name),
                "VO2 (mL/min)": format_number(s.vo2_ml_min, 0),
                "Q (L/min)": format_number(s.q_l_min, 1),
                "Q source": Q_SOURCE.get(s.q_method, "measured"),
                "SV (mL)": format_number(s.stroke_volume_ml, 0),
                "Fick a-vO2 (mL/dL)": format_number(s.avo2_ml_dl, 1),
                "PaO2 (mmHg)": format_number(s.pao2_mmhg, 1),
                "PaO2 from": s.pao2_source,
                "Arterial pH": format_number(s.arterial_conditions.ph, 3),
                "CaO2 (mL/dL)": format_number(s.cao2_ml_dl, 1),
                "Implied CvO2 (mL/dL)": format_number(s.cvo2_ml_dl, 1),
                "Implied SvO2 (%)": format_number(None if s.svo2 is None else 100.0 * s.svo2, 1),
                "Mixed venous pH": format_number(s.conditions.ph, 3),
                "Mixed venous PCO2 (mmHg)": format_number(s.conditions.pco2_mmhg, 1),
                "Mixed venous base excess (mmol/L)": format_number(s.conditions.base_excess_mmol_l, 1),
                "Venous PO2, resting curve (mmHg)": format_number(s.pvo2_resting_curve_mmhg, 1),
                "Venous PO2, exercise curve (mmHg)": format_number(s.pvo2_exercise_curve_mmhg, 1),
                "Most the curve allows (mL/dL)": format_number(s.max_avo2_by_curve_ml_dl, 1),
            }
        )
    return by_state(rows)


#: How cardiac output was obtained, in words.
Q_SOURCE: dict[str, str] = {
    "measured": "measured",
    "stringer1997": "ESTIMATE (Stringer 1997)",
    "resting_typical_avo2": "ASSUMED (typical resting a-vO2 5 mL/dL)",
}


def unloading_table(oxygen: OxygenComparison) -> pd.DataFrame:
    """Unloading by cause (mL O2/dL, one column per state), numbers formatted from the record."""
    rows = []
    for s in oxygen.states:
        parts = s.unloading
        rows.append(
            {
                "State": STATE_LABEL.get(s.name, s.name),
                "Total (mL/dL)": format_number(None if parts is None else parts.total, 2),
                "Fall in PO2 (mL/dL)": format_number(None if parts is None else parts.po2_fall, 2),
                "Temperature shift (mL/dL)": format_number(None if parts is None else parts.temperature, 2),
                "pH / CO2 shift (mL/dL)": format_number(None if parts is None else parts.acid_base, 2),
                "2,3-BPG shift (mL/dL)": format_number(None if parts is None else parts.dpg, 2),
                "Extra CO2 carried (Haldane, mL/dL)": format_number(s.haldane_extra_co2_ml_dl, 2),
            }
        )
    return by_state(rows)


#: Code words that the analysis' notes may contain, as the reader knows them.
PLAIN_WORDS: dict[str, str] = {
    "siggaard_andersen": "Siggaard-Andersen",
    "severinghaus": "Severinghaus",
    "pco2_mmhg": "PCO2",
    "ph": "pH",
    "temperature_c": "temperature",
    "dpg_mmol_l": "2,3-BPG",
    "base_excess_mmol_l": "base excess",
    "acid_base": "pH / CO2",
    "dpg": "2,3-BPG",
    "vt1": "VT1",
    "vt2": "VT2",
}
_CODE_WORD = re.compile(r"\b(" + "|".join(sorted(map(re.escape, PLAIN_WORDS), key=len, reverse=True)) + r")\b")


def plain_words(text: str) -> str:
    """Replace code words (``pco2_mmhg``, ``siggaard_andersen``, ``vt1``) with the trade's words."""
    return _CODE_WORD.sub(lambda m: PLAIN_WORDS[m.group(1)], text)


def grouped_notes(oxygen: OxygenComparison) -> list[str]:
    """The comparison's notes, each said once with the states it applies to (in plain words)."""
    notes = list(oxygen.notes)
    per_note: dict[str, list[str]] = {}
    for s in oxygen.states:
        for n in s.notes:
            per_note.setdefault(n, []).append(STATE_LABEL.get(s.name, s.name))
    notes += [f"{', '.join(states)}: {n}" for n, states in per_note.items()]
    return [plain_words(n) for n in notes]


def _start_conditions(settings: dict[str, Any]) -> dict[str, StateConditions]:
    stored = ((settings.get("oxygen") or {}).get("conditions")) or {}
    out = {}
    for name in STATE_NAMES:
        try:
            out[name] = StateConditions(**stored[name]) if name in stored else DEFAULT_CONDITIONS[name]
        except (TypeError, ValueError):
            out[name] = DEFAULT_CONDITIONS[name]
    return out


def derived_field_of(start: dict[str, StateConditions]) -> str:
    """The acid-base field the stored conditions leave out ("" when all three are given)."""
    for conds in start.values():
        if conds.derived_field:
            return conds.derived_field
    return ""


def condition_inputs(
    start: dict[str, StateConditions], *, test_id: int, hb_g_dl: float, derived: str
) -> dict[str, dict[str, float | None]]:
    """Per-state condition inputs (rest, VT1, VT2, peak side by side); ``derived`` is left out."""
    cols = st.columns(len(STATE_NAMES))
    out: dict[str, dict[str, float | None]] = {}
    for col, name in zip(cols, STATE_NAMES, strict=True):
        with col:
            st.markdown(f"**{STATE_LABEL[name]}**")
            try:  # start values: the stored or default blood, completed at this Hb
                values = asdict(start[name].resolved(hb_g_dl=hb_g_dl))
            except (TypeError, ValueError):
                values = asdict(DEFAULT_CONDITIONS[name].resolved(hb_g_dl=hb_g_dl))
            row: dict[str, float | None] = {}
            for field, label, step, lo, hi in CONDITION_FIELDS:
                if field == derived:
                    row[field] = None
                    continue
                row[field] = float(
                    st.number_input(
                        label, min_value=lo, max_value=hi, value=min(hi, max(lo, float(values[field]))), step=step,
                        key=widget_key(name, field), format="%.2f" if step < 0.1 else "%.1f",
                    )
                )
            out[name] = row
    return out


def _rows_height(n_rows: int) -> int:
    """Pixel height that shows every row of a table without an inner scroll bar."""
    return 38 + 35 * max(1, n_rows)


def render() -> None:
    st.title("Oxygen path")
    st.caption(
        "Fick extraction against the haemoglobin dissociation curve at rest, VT1, VT2 and peak: "
        "what venous PO2 the measured uptake implies, and why the blood could give the oxygen up."
    )
    st.warning(CAUTION)
    store = data.get_store()
    summary = choose_test(store, key="oxygen_test")
    if summary is None:
        return
    test_id = summary.id
    settings, _version = test_settings(store, test_id)
    session = data.load_session(test_id)
    stored_ox = settings.get("oxygen") or {}

    with st.expander("Blood and curve inputs", expanded=True):
        left, mid, right = st.columns(3)
        model = left.selectbox(
            "Curve model", list(COMPARISON_MODELS),
            index=list(COMPARISON_MODELS).index(stored_ox.get("model", COMPARISON_MODELS[0]))
            if stored_ox.get("model") in COMPARISON_MODELS else 0,
            format_func=lambda m: MODEL_LABELS.get(m, m), key="ox_model",
        )
        left.caption(MODEL_INPUTS.get(model, ""))
        hb_meta = (settings.get("metadata") or {}).get("hb_g_dl") or session.meta.get("hb_g_dl")
        hb = mid.number_input(
            "Haemoglobin (g/dL)", min_value=5.0, max_value=25.0,
            value=float(hb_meta) if hb_meta else 14.0, step=0.1, key="ox_hb",
            help="From the test's metadata when recorded; otherwise enter the measured value.",
        )
        if not hb_meta:
            mid.caption("No Hb recorded with this test: enter the measured value.")
        start_source = 2 if stored_ox.get("spo2_pct") is not None else 1 if stored_ox.get("pao2_mmhg") is not None else 0
        arterial = right.radio(
            "Arterial PO2 and saturation from", list(PAO2_SOURCES), index=start_source, horizontal=True,
            key="ox_arterial",
            help="Alveolar gas equation: at the test's barometric pressure, minus an alveolar-arterial gradient "
            "(10 mmHg at rest widening to 20 at peak; Dempsey & Wagner 1999).",
        )
        pao2 = None
        if arterial == "Measured PaO2":
            pao2 = right.number_input(
                "PaO2 (mmHg)", min_value=30.0, max_value=600.0,
                value=float(stored_ox.get("pao2_mmhg") or DEFAULT_PAO2_MMHG), step=1.0, key="ox_pao2",
            )
        spo2 = None
        if arterial == "SpO2":
            spo2 = right.number_input(
                "SpO2 (%)", min_value=50.0, max_value=100.0,
                value=float(stored_ox.get("spo2_pct") or DEFAULT_SPO2_PCT), step=0.5, key="ox_spo2",
            )
        st.markdown(
            "Mixed venous blood conditions per state (defaults are typical values for healthy adults at each "
            "exercise intensity; replace them with measured blood gases when you have them)"
        )
        start_conditions = _start_conditions(settings)
        keys = list(GAS_GIVEN)
        derived = st.selectbox(
            "Blood gas given as", keys, index=keys.index(derived_field_of(start_conditions)),
            format_func=lambda k: GAS_GIVEN[k], key="ox_gas_given",
            help="The value left out follows from the other two by the Van Slyke equation at this Hb.",
        )
        conditions = condition_inputs(start_conditions, test_id=test_id, hb_g_dl=float(hb), derived=derived)
        st.markdown("Measured cardiac output (L/min; leave 0 to use the Stringer 1997 estimate)")
        q_cols = st.columns(len(STATE_NAMES))
        stored_q = stored_ox.get("q_l_min") or {}
        q = {}
        for col, name in zip(q_cols, STATE_NAMES, strict=True):
            value = col.number_input(
                f"Q {STATE_LABEL[name]}", min_value=0.0, max_value=45.0,
                value=float(stored_q.get(name, 0.0)), step=0.1, key=widget_key(name, "q_l_min"),
            )
            if value > 0:
                q[name] = value

    oxygen_in = oxygen_settings(model=model, pao2_mmhg=pao2, spo2_pct=spo2, conditions=conditions, q_l_min=q)
    hb_override = float(hb) if (not hb_meta or abs(float(hb) - float(hb_meta)) > 1e-9) else None
    new_settings = with_oxygen(settings, oxygen_in, hb_g_dl=hb_override)
    results = data.analyze(test_id, settings_json(new_settings))
    if results.oxygen is None:
        reasons = [w for w in results.warnings if w.lower().startswith("oxygen")]
        st.error("The oxygen comparison could not be made for this test. " + " ".join(reasons))
        return
    oxygen = results.oxygen

    st.subheader("Dissociation curves")
    curves = {"rest": oxygen.resting_conditions}
    for s in oxygen.states:
        if s.name != "rest":
            curves[s.name] = s.conditions
    st.plotly_chart(
        dissociation_figure(curves, model=oxygen.model, points=points_frame(oxygen)),
        width="stretch", key="oxygen_curves",
    )
    st.caption("Filled markers: arterial blood. Open markers: venous blood implied by Fick on each state's curve (estimates).")

    st.subheader("Fick against the curve")
    table = comparison_table(oxygen)
    st.dataframe(table, hide_index=True, width="stretch", height=_rows_height(len(table)))
    st.subheader("Where the unloaded oxygen comes from")
    st.plotly_chart(unloading_figure(oxygen.states), width="stretch", key="oxygen_unloading")
    parts = unloading_table(oxygen)
    st.dataframe(parts, hide_index=True, width="stretch", height=_rows_height(len(parts)))
    st.caption(f"Method: {plain_words(oxygen.decomposition_method)}.")

    for note in grouped_notes(oxygen):
        st.info(note)

    what_if_panel(results)

    start = _start_conditions(settings)
    start_oxygen = oxygen_settings(
        model=next((m for m in COMPARISON_MODELS if m == stored_ox.get("model")), COMPARISON_MODELS[0]),
        pao2_mmhg=stored_ox.get("pao2_mmhg"),
        spo2_pct=stored_ox.get("spo2_pct"),
        conditions={k: asdict(v) for k, v in start.items()},
        q_l_min={k: float(v) for k, v in (stored_ox.get("q_l_min") or {}).items() if float(v) > 0},
    )
    changed = state.settings_key(oxygen_in) != state.settings_key(start_oxygen) or hb_override is not None
    if state.can_edit() and changed and st.button("Keep these conditions with the test", key="ox_keep"):
        keep_conditions(store, test_id, new_settings, version=_version)
        st.rerun()


#: What-if slider ranges: key, label, min, max, step.
WHAT_IF_SLIDERS: dict[str, tuple[str, float, float, float]] = {
    "hb": ("Haemoglobin (g/dL)", 6.0, 22.0, 0.1),
    "cohb": ("Carboxyhaemoglobin (% of Hb)", 0.0, 40.0, 0.5),
    "p50": ("Standard P50 (mmHg)", 12.0, 40.0, 0.5),
    "altitude": ("Altitude (m, standard atmosphere)", 0.0, 5000.0, 50.0),
    "pb": ("Barometric pressure (mmHg)", 400.0, 800.0, 1.0),
    "fio2": ("Inspired O2 (%)", 15.0, 100.0, 0.5),
    "q": ("Peak cardiac output (L/min)", 2.0, 45.0, 0.1),
    "dmo2": ("Muscle O2 diffusing capacity DmO2 (mL/min/mmHg)", 5.0, 300.0, 1.0),
}


def what_if_key(name: str) -> str:
    """Session-state key of one what-if slider (tests set these)."""
    return f"ox_wi_{name}"


def pathway_for(results: TestResults) -> tuple[OxygenPathway | None, tuple[str, ...]]:
    """The O2 pathway record of the result shown (its ``oxygen_cascade`` part)."""
    if results.oxygen_cascade is None:
        notes = [w for w in results.warnings if "cascade" in w.lower()]
        return None, tuple(notes) or ("The O2 cascade could not be solved for this test.",)
    return results.oxygen_cascade, ()


def what_if_table(pathway: Any) -> pd.DataFrame:
    """The stable what-if scenarios, formatted (scenario code, predicted VO2peak, change, note)."""
    return pd.DataFrame(
        [
            {
                "Scenario": w.scenario,
                "Predicted VO2peak (mL/min)": format_number(w.vo2_peak_ml_min, 0),
                "Change (%)": f"{w.change_pct:+.1f}",
                "What changes": w.note,
            }
            for w in pathway.what_if
        ]
    )


def sensitivity_table(pathway: Any) -> pd.DataFrame:
    """VO2peak after a 10 % rise in each determinant, ranked."""
    return pd.DataFrame(
        [
            {"Rank": r.rank, "10 % more": r.label, "Predicted VO2peak (mL/min)": format_number(r.vo2_peak_ml_min, 0),
             "Change (%)": f"{r.change_pct:+.1f}"}
            for r in pathway.sensitivity
        ]
    )


def co2_table(pathway: Any) -> pd.DataFrame:
    """The a-v CO2 difference per state and how it is carried (mL CO2/dL, one row per state)."""
    rows = []
    for c in pathway.co2:
        rows.append(
            {
                "State": STATE_LABEL.get(c.state, c.state),
                "a-v CO2 (mL/dL)": format_number(c.avco2_ml_dl, 2),
                "Dissolved (mL/dL)": format_number(c.dissolved_ml_dl, 2),
                "Carbamino (mL/dL)": format_number(c.carbamino_ml_dl, 2),
                "Bicarbonate (mL/dL)": format_number(c.bicarbonate_ml_dl, 2),
                "Haldane part (mL/dL)": format_number(c.haldane_ml_dl, 2),
            }
        )
    return pd.DataFrame(rows)


def what_if_panel(results: TestResults) -> None:
    """The O2 cascade at peak with sliders for Hb, COHb, P50, altitude or PB, FIO2, Q and DmO2."""
    from analysis.oxygen.alveolar import barometric_pressure_mmhg
    from analysis.oxygen.cascade import cascade_lines
    from analysis.oxygen.curves import p50
    from analysis.oxygen.pathway import explore
    from dashboard.charts.oxygen_cascade import cascade_figure

    st.subheader("What if: the O2 cascade at peak")
    pathway, notes = pathway_for(results)
    if pathway is None:
        st.info(" ".join(notes))
        return
    st.caption(
        "Oxygen followed from inspired air to the muscle (Wagner 1996): the convective (Fick) line and the "
        "diffusive line (muscle O2 diffusing capacity, Bohr integration along the capillary) meet at VO2peak. "
        "Venous figures are mixed venous blood, the whole body taken as one muscle compartment. "
        "Move a slider to see the meeting point move. " + pathway.caution
    )
    i = pathway.inputs
    start = {
        "hb": i.hb_g_dl, "cohb": 100.0 * i.cohb_fraction,
        "p50": i.p50_standard_mmhg or p50(model=i.model), "altitude": 0.0, "pb": i.pb_mmhg,
        "fio2": 100.0 * i.fio2, "q": i.q_l_min, "dmo2": pathway.dmo2_ml_min_mmhg,
    }
    values: dict[str, float] = {}
    left, right = st.columns(2)
    air = right.radio("Air pressure set by", ["Barometric pressure", "Altitude"], horizontal=True, key=what_if_key("air"))
    for col, names in ((left, ("hb", "cohb", "p50", "q")), (right, ("altitude" if air == "Altitude" else "pb", "fio2", "dmo2"))):
        for name in names:
            label, lo, hi, step = WHAT_IF_SLIDERS[name]
            value = min(hi, max(lo, round(float(start[name]) / step) * step))
            moved = float(col.slider(label, min_value=lo, max_value=hi, value=value, step=step, key=what_if_key(name)))
            # a slider left where it started keeps the person's exact value (the slider's step rounds it)
            values[name] = float(start[name]) if abs(moved - value) < 1e-9 else moved
    pb = barometric_pressure_mmhg(altitude_m=values["altitude"]) if air == "Altitude" else values["pb"]
    try:
        result = explore(
            pathway, hb_g_dl=values["hb"], cohb_fraction=values["cohb"] / 100.0, p50_standard_mmhg=values["p50"],
            pb_mmhg=pb, fio2=values["fio2"] / 100.0, q_l_min=values["q"], dmo2_ml_min_mmhg=values["dmo2"],
        )
    except (TypeError, ValueError) as exc:
        st.error(f"This scenario cannot be solved: {exc}")
        return
    baseline = cascade_lines(i, dmo2_ml_min_mmhg=pathway.dmo2_ml_min_mmhg)
    a, b, c = st.columns(3)
    a.metric("Measured VO2peak (mL/min)", format_number(pathway.vo2_peak_ml_min, 0))
    b.metric("Predicted VO2peak, this scenario (mL/min, estimate)", format_number(result.point.vo2_ml_min, 0),
             delta=f"{result.change_pct:+.1f} %")
    c.metric("Venous PO2, mixed venous (mmHg, estimate)", format_number(result.point.pvo2_mmhg, 1))
    st.plotly_chart(cascade_figure(baseline, result.lines), width="stretch", key="oxygen_cascade")
    st.caption(
        f"Scenario: PB {pb:.0f} mmHg, PaO2 {result.point.pao2_mmhg:.0f} mmHg, SaO2 {100 * result.point.sao2:.1f} %, "
        f"CaO2 {result.point.cao2_ml_dl:.1f} mL/dL. Q source: "
        + ("measured" if not pathway.q_estimated else "ESTIMATE (Stringer 1997)")
        + ". Model estimate, not a measurement."
    )
    st.markdown("**Scenarios solved on this person's cascade**")
    table = what_if_table(pathway)
    st.dataframe(table, hide_index=True, width="stretch", height=_rows_height(len(table)))
    st.markdown("**Which step limits (10 % more of each)**")
    sens = sensitivity_table(pathway)
    st.dataframe(sens, hide_index=True, width="stretch", height=_rows_height(len(sens)))
    st.info(pathway.limiting)
    with st.expander("The model's assumptions"):
        for text in pathway.assumptions:
            st.markdown(f"- {text}")
    for note in pathway.notes:
        st.info(note)
    if pathway.co2:
        st.markdown("**CO2 side: how the arterio-venous CO2 difference is carried (estimate)**")
        co2 = co2_table(pathway)
        st.dataframe(co2, hide_index=True, width="stretch", height=_rows_height(len(co2)))
    st.caption(f"Resting hyperventilation: {pathway.hyperventilation.note}")


def keep_conditions(store: Store, test_id: int, new_settings: dict[str, Any], *, version: int | None) -> int:
    """Save the settings with these oxygen conditions as a new version (audited by the store).

    Raises the store's ``EditConflict`` (shown plainly by the app) when someone else saved the
    test in the meantime; nothing is saved then.
    """
    if version is None:
        _, version = store.get_settings(test_id)
    new_version = store.save_settings(
        test_id, new_settings, actor=state.acting_user(),
        reason="oxygen conditions changed on the Oxygen path page", expected_version=int(version),
    )
    state.set_working_settings(test_id, state.WorkingSettings(new_settings, int(new_version), saved=True))
    state.flash(f"Oxygen conditions kept with the test as version {new_version}.")
    return int(new_version)
