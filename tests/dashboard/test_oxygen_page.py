"""Oxygen path page (AppTest): numbers from analysis.oxygen via the pipeline; conditions react."""

from __future__ import annotations

import pandas as pd
import pytest

from analysis.oxygen import CAUTION, DEFAULT_CONDITIONS
from dashboard import state
from dashboard.charts.oxygen_curves import dissociation_figure, unloading_figure
from dashboard.views.oxygen import oxygen_settings, points_frame, widget_key, with_oxygen
from tests.dashboard.pages_helpers import analysis_json, analysis_result, parse_number, signed_in


def _oxygen():
    from dashboard.views import oxygen

    oxygen.render()


def _default_oxygen_settings() -> dict:
    conds = {k: {f: getattr(v, f) for f in ("temperature_c", "ph", "pco2_mmhg", "dpg_mmol_l", "base_excess_mmol_l")} for k, v in DEFAULT_CONDITIONS.items()}
    # the page's defaults: PaO2 from the alveolar gas equation, pH derived from PCO2 and base excess
    return oxygen_settings(model="siggaard_andersen", pao2_mmhg=None, spo2_pct=None, conditions=conds, q_l_min={})


def _table(at) -> pd.DataFrame:
    """The Fick-versus-curve table turned back to one row per state (the page shows states as columns)."""
    return at.dataframe[0].value.set_index("Quantity").T


@pytest.fixture(scope="module")
def test_id(demo_store):
    return demo_store.test_ids[0]


def test_table_equals_analysis(demo_store, page_test, test_id):
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    assert not at.exception
    assert any(CAUTION in w.value for w in at.warning)
    settings, _ = demo_store.store.get_settings(test_id)
    expected = analysis_json(demo_store.store, test_id, with_oxygen(settings, _default_oxygen_settings(), hb_g_dl=None))
    states = {s["name"]: s for s in expected["oxygen"]["states"]}
    table = _table(at)
    assert list(table.index) == ["Rest", "VT1", "VT2", "Peak"]
    assert at.dataframe[0].value.columns.tolist() == ["Quantity", "Rest", "VT1", "VT2", "Peak"]
    peak = states["peak"]
    assert parse_number(table.loc["Peak", "Fick a-vO2 (mL/dL)"]) == pytest.approx(peak["avo2_ml_dl"], abs=0.05)
    assert parse_number(table.loc["Peak", "CaO2 (mL/dL)"]) == pytest.approx(peak["cao2_ml_dl"], abs=0.05)
    assert parse_number(table.loc["Peak", "Venous PO2, exercise curve (mmHg)"]) == pytest.approx(
        peak["pvo2_exercise_curve_mmhg"], abs=0.05
    )
    assert table.loc["Peak", "Q source"].startswith("ESTIMATE")
    # each plain-language note is said once, with the states it concerns
    infos = [i.value for i in at.info]
    assert len(infos) == len(set(infos))
    unloading = at.dataframe[1].value.set_index("Quantity").T
    assert parse_number(unloading.loc["Peak", "Total (mL/dL)"]) == pytest.approx(peak["unloading_ml_dl"]["total"], abs=0.005)


def test_warmer_peak_blood_raises_venous_po2(demo_store, page_test, test_id):
    """Warmer blood shifts the curve right (Severinghaus 1979 Eq 3 / Siggaard-Andersen 1984):
    the same venous content then sits at a higher PO2."""
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    before = parse_number(_table(at).loc["Peak", "Venous PO2, exercise curve (mmHg)"])
    at.number_input(key=widget_key("peak", "temperature_c")).set_value(41.0).run()
    assert not at.exception
    after = parse_number(_table(at).loc["Peak", "Venous PO2, exercise curve (mmHg)"])
    assert after > before
    # the resting-curve value and the other states do not move
    assert parse_number(_table(at).loc["Rest", "Venous PO2, exercise curve (mmHg)"]) > 0


def test_measured_q_replaces_estimate(demo_store, page_test, test_id):
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    at.number_input(key=widget_key("peak", "q_l_min")).set_value(20.0).run()
    table = _table(at)
    assert table.loc["Peak", "Q source"] == "measured"
    assert parse_number(table.loc["Peak", "Q (L/min)"]) == pytest.approx(20.0)
    assert table.loc["VT1", "Q source"].startswith("ESTIMATE")


def test_charts_from_comparison_json(demo_store, test_id):
    settings, _ = demo_store.store.get_settings(test_id)
    ox = analysis_result(demo_store.store, test_id, with_oxygen(settings, _default_oxygen_settings(), hb_g_dl=None)).oxygen
    pts = points_frame(ox)
    assert set(pts["site"]) == {"arterial", "venous"}
    # one arterial point per distinct arterial saturation (states share it when SaO2 is the same;
    # the analysis reads SaO2 per state from the session's SpO2 column when it has one)
    distinct = {(round(float(s.pao2_mmhg), 3), round(float(s.sao2), 5)) for s in ox.states}
    assert (pts["site"] == "arterial").sum() == len(distinct)
    curves = {"rest": ox.resting_conditions} | {s.name: s.conditions for s in ox.states if s.name != "rest"}
    fig = dissociation_figure(curves, model=ox.model, points=pts)
    assert fig.layout.xaxis.title.text == "PO2 (mmHg)"
    assert "(%)" in fig.layout.yaxis.title.text
    # Siggaard-Andersen 1984: standard curve S = 0.5 near 26.8 mmHg; the resting venous curve
    # (pH 7.37) lies slightly right of it, so at 26.8 mmHg it is a little below 50 %.
    rest = fig.data[0]
    i = min(range(len(rest.x)), key=lambda j: abs(rest.x[j] - 26.8))
    assert 40.0 < rest.y[i] < 50.0
    bars = unloading_figure(ox.states)
    assert list(bars.data[0].y) == [s.unloading.po2_fall for s in ox.states if s.unloading is not None]
    assert [t.name for t in bars.data][0] == "Fall in PO2 (resting curve)"
    assert "mL O2/dL" in bars.layout.yaxis.title.text


def test_hb_input_changes_arterial_content_by_the_content_equation(demo_store, page_test, test_id):
    """CaO2 = 1.34 x Hb x SaO2 + 0.0031 x PaO2 (mL/dL; common practice, references.md)."""
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    at.number_input(key="ox_hb").set_value(12.0).run()
    assert not at.exception
    table = _table(at)
    settings, _ = demo_store.store.get_settings(test_id)
    ox = analysis_json(
        demo_store.store, test_id, with_oxygen(settings, _default_oxygen_settings(), hb_g_dl=12.0)
    )["oxygen"]
    sao2, pao2 = ox["states"][0]["sao2"], ox["states"][0]["pao2_mmhg"]
    expected = 1.34 * 12.0 * sao2 + 0.0031 * pao2
    assert parse_number(table.loc["Rest", "CaO2 (mL/dL)"]) == pytest.approx(expected, abs=0.05)


def test_keep_conditions_saves_a_new_version(demo_store, page_test):
    store = demo_store.store
    test_id = demo_store.test_ids[1]
    _, version = store.get_settings(test_id)
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    assert not [b for b in at.button if b.key == "ox_keep"]  # nothing changed yet: nothing to keep
    at.number_input(key=widget_key("vt2", "temperature_c")).set_value(38.8).run()
    at.button(key="ox_keep").click().run()
    assert not at.exception
    saved, new_version = store.get_settings(test_id)
    assert new_version == version + 1
    assert saved["oxygen"]["conditions"]["vt2"]["temperature_c"] == pytest.approx(38.8)
    changes = [e for e in store.audit_log(test_id) if str(e.field).startswith("oxygen")]
    assert changes and "Oxygen path" in changes[0].reason
    # the page now shows the kept conditions as the stored ones: nothing left to keep
    assert not [b for b in at.button if b.key == "ox_keep"]


def test_notes_and_legends_use_the_trades_words_not_codes(demo_store, test_id):
    from dashboard.charts.oxygen_curves import condition_text
    from dashboard.views.oxygen import grouped_notes, plain_words, unloading_table

    assert plain_words("pco2_mmhg not applied to the siggaard_andersen curve for rest, vt1, peak") == (
        "PCO2 not applied to the Siggaard-Andersen curve for rest, VT1, peak")
    assert plain_words("shift split into temperature, acid_base, dpg") == "shift split into temperature, pH / CO2, 2,3-BPG"
    assert plain_words("pH 7.4 and graphs") == "pH 7.4 and graphs"  # words containing a code are left alone
    assert condition_text({"ph": 7.37, "temperature_c": 37.0, "dpg_mmol_l": 5.0, "base_excess_mmol_l": -10.0}) == (
        "pH 7.37, 37 °C, 2,3-BPG 5 mmol/L, BE -10 mmol/L")
    settings, _ = demo_store.store.get_settings(test_id)
    ox = analysis_result(demo_store.store, test_id, with_oxygen(settings, _default_oxygen_settings(), hb_g_dl=None)).oxygen
    codes = ("pco2_mmhg", "siggaard_andersen", "acid_base", "dpg_mmol_l", "base_excess_mmol_l")
    for note in grouped_notes(ox):
        assert not any(c in note for c in codes), note
    quantities = unloading_table(ox)["Quantity"].tolist()
    assert all(q.endswith("mL/dL)") for q in quantities), quantities  # every row carries its unit


def test_every_curve_model_has_a_short_name_and_its_inputs(demo_store, page_test, test_id):
    from analysis.oxygen.comparison import COMPARISON_MODELS
    from dashboard.views.oxygen import MODEL_INPUTS, MODEL_LABELS

    assert set(COMPARISON_MODELS) <= set(MODEL_LABELS) and set(COMPARISON_MODELS) <= set(MODEL_INPUTS)
    assert all(len(label) <= 24 for label in MODEL_LABELS.values())  # fits the selector uncut
    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    model = at.selectbox(key="ox_model").value
    assert any(c.value == MODEL_INPUTS[model] for c in at.caption)


# --- what-if panel: the O2 cascade at peak -----------------------------------------------------


def _predicted(at) -> float:
    metric = next(m for m in at.metric if m.label.startswith("Predicted VO2peak"))
    return parse_number(metric.value)


def _measured(at) -> float:
    return parse_number(next(m for m in at.metric if m.label.startswith("Measured VO2peak")).value)


def test_what_if_panel_starts_at_the_measured_vo2peak(demo_store, page_test, test_id):
    from dashboard.views.oxygen import what_if_key

    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    assert not at.exception
    # the person's own cascade solved forward returns the measured VO2peak (round trip)
    assert _predicted(at) == pytest.approx(_measured(at), abs=1.0)
    assert any("convective" in t for t in (c.value for c in at.caption))
    scenarios = next(df.value for df in at.dataframe if "Scenario" in df.value.columns)
    assert scenarios["Scenario"].tolist()[0] == "baseline" and "cohb_10pct" in scenarios["Scenario"].tolist()
    assert any("consistent with" in i.value for i in at.info)
    assert at.slider(key=what_if_key("hb")).value > 0


@pytest.mark.parametrize(
    ("name", "value", "direction"),
    [
        ("hb", 10.0, -1),  # less haemoglobin: less O2 carried (content equation)
        ("cohb", 10.0, -1),  # COHb: capacity lost and a left shift (Roughton & Darling 1944)
        ("p50", 18.0, -1),  # high-affinity haemoglobin unloads less in the capillary
        ("fio2", 30.0, +1),  # more inspired O2: a little more arterial content
        ("q", 40.0, +1),  # more flow: the convective line rises
        ("dmo2", 250.0, +1),  # more diffusing capacity: the diffusive line steepens
    ],
)
def test_sliders_move_the_meeting_point(demo_store, page_test, test_id, name, value, direction):
    from dashboard.views.oxygen import what_if_key

    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    before = _predicted(at)
    at.slider(key=what_if_key(name)).set_value(value).run()
    assert not at.exception
    after = _predicted(at)
    assert (after - before) * direction > 0
    # the chart's bold meeting point is the predicted VO2peak shown
    import json

    traces = [t for c in at.get("plotly_chart") for t in json.loads(c.proto.spec)["data"]]
    meeting = [t for t in traces if str(t.get("name", "")).startswith("What if: meeting point")]
    assert len(meeting) == 1 and meeting[0]["y"][0] == pytest.approx(after, abs=1.0)


def test_altitude_slider_uses_the_standard_atmosphere(demo_store, page_test, test_id):
    from dashboard.views.oxygen import what_if_key

    at = page_test(_oxygen, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    at.radio(key=what_if_key("air")).set_value("Altitude").run()
    at.slider(key=what_if_key("altitude")).set_value(2000.0).run()
    assert not at.exception
    change = 100.0 * (_predicted(at) / _measured(at) - 1.0)
    assert -18.0 < change < -2.0  # a few to about 15 % at 2,000 m (issue 15)
    assert any("PB 596 mmHg" in c.value for c in at.caption)


def test_cascade_figure_lines_meet():
    from analysis.oxygen.cascade import cascade_lines, oxygen_cascade
    from analysis.oxygen.states import DEFAULT_ARTERIAL_CONDITIONS
    from dashboard.charts.oxygen_cascade import X_TITLE, cascade_figure

    c = oxygen_cascade(vo2_peak_ml_min=3000.0, hb_g_dl=14.0, arterial=DEFAULT_ARTERIAL_CONDITIONS["peak"],
                       capillary=DEFAULT_CONDITIONS["peak"])
    lines = cascade_lines(c.inputs, dmo2_ml_min_mmhg=c.dmo2_ml_min_mmhg)
    fig = cascade_figure(lines)
    names = [t.name for t in fig.data]
    assert any("convective" in n for n in names) and any("diffusive" in n for n in names)
    meet = next(t for t in fig.data if "meeting point" in t.name)
    assert meet.y[0] == pytest.approx(3000.0, rel=1e-9)
    assert fig.layout.xaxis.title.text == X_TITLE and "mixed venous" in X_TITLE
