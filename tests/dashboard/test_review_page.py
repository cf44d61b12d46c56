"""Review page (AppTest): the numbers shown are the analysis' numbers; overrides and averaging.

Reference for every value shown: :func:`analysis.pipeline.analyze_session` on the same stored
session (the page must show the number computed in analysis, nothing of its own).
"""

from __future__ import annotations

import pandas as pd
import pytest

from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.results import results_from_json
from analysis.settings import AnalysisSettings
from dashboard import data
from dashboard.report.html_report import format_number
from dashboard.timefmt import clock_text
from dashboard.views import review


def _review_script() -> None:
    from dashboard.views.review import render

    render()


def _metric(at, label_start: str) -> str:
    for m in at.metric:
        if m.label == label_start:
            return m.value
    raise AssertionError(f"no metric starting with {label_start!r}: {[m.label for m in at.metric]}")


def _filled(rows, columns):
    return [{c: r.get(c, "") for c in columns} for r in rows]


def _warnings(at) -> list[str]:
    """The page's warnings as the reader sees them (markdown escapes removed)."""
    return [w.value.replace("\\", "") for w in at.warning]


def _save(at, test_id: int):
    """Click the explicit Save (one new version for every unsaved change), wait for the store."""
    at.button(key=f"save_{test_id}").click().run()
    assert not at.exception, at.exception
    data.wait_for_saves()  # the store save runs in the background; the page did not wait
    return at.run()


def _threshold_table(at):
    for df in at.dataframe:
        frame = df.value
        if "Threshold" in frame.columns:
            return frame
    raise AssertionError("no threshold table on the page")


@pytest.fixture(scope="module")
def reference(demo_store):
    test_id = demo_store.test_ids[0]
    session = demo_store.store.load_session(test_id)
    settings, _ = demo_store.store.get_settings(test_id)
    return to_json(analyze_session(session, AnalysisSettings.from_dict(settings)))


def test_headline_numbers_equal_analyze_session(demo_store, page_test, reference):
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=demo_store.test_ids[0]).run()
    assert not at.exception, at.exception
    assert _metric(at, "VO2peak") == format_number(reference["vo2_peak_ml_min"], 0) + " mL/min"
    assert _metric(at, "VE/VCO2 slope") == format_number(reference["ve_vco2_slope"], 1)
    assert _metric(at, "RER peak") == format_number(reference["rer_peak"], 2)
    assert _metric(at, "Heart rate peak") == format_number(reference["hr_peak_bpm"], 0) + " beats/min"
    table = _threshold_table(at)
    vt1 = table[table["Threshold"].str.startswith("VT1")].iloc[0]
    assert vt1["VO2"] == format_number(reference["vt1"]["vo2_ml_min"], 0) + " mL/min"
    assert vt1["Time"] == clock_text(reference["vt1"]["time_s"])
    assert "manual" not in vt1["Threshold"]
    assert any("Maximality" in md.value for md in at.markdown)
    from dashboard.report.html_report import zone_rows

    zones = next(df.value for df in at.dataframe if "Zone" in df.value.columns)
    assert zones.fillna("").to_dict("records") == _filled(zone_rows(results_from_json(reference)), zones.columns)  # zones from analysis
    assert any("not a medical device" in c.value for c in at.caption)


def test_typing_a_vt1_time_changes_vt1_marks_it_manual_and_saves_a_version(demo_store, page_test, reference):
    test_id = demo_store.test_ids[0]
    _, version_before = demo_store.store.get_settings(test_id)
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    new_t = float(round(float(reference["vt1"]["time_s"]) + 60.0))
    at.text_input(key=f"thr_reason_{test_id}").input("later on the V-slope chart")
    at.text_input(key=f"thr_t_{test_id}").input(clock_text(new_t))  # typed as the charts show it (m:ss)
    at.button[[b.label for b in at.button].index("Set VT1")].click().run()
    assert not at.exception, at.exception
    data.wait_for_saves()
    assert demo_store.store.get_settings(test_id)[1] == version_before  # shown, not stored until Save
    assert any(w.startswith("Unsaved changes (1), not stored yet: later on the V-slope chart.") for w in _warnings(at))
    _save(at, test_id)
    assert not any(w.startswith("Unsaved changes") for w in _warnings(at))
    assert any("version" in c.value and str(version_before + 1) in c.value for c in at.caption)
    vt1 = _threshold_table(at)
    vt1 = vt1[vt1["Threshold"].str.startswith("VT1")].iloc[0]
    assert "manual" in vt1["Threshold"]
    settings, version = demo_store.store.get_settings(test_id)
    assert version == version_before + 1
    assert settings["vt1_override"] == {"t_s": new_t, "vo2_ml_min": None, "reason": "later on the V-slope chart"}
    expected = to_json(analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(settings)))
    assert expected["vt1"]["source"] == "manual"
    assert vt1["Time"] == clock_text(expected["vt1"]["time_s"])
    assert vt1["VO2"] == format_number(expected["vt1"]["vo2_ml_min"], 0) + " mL/min"
    assert expected["vt1"]["time_s"] != reference["vt1"]["time_s"]
    audit = demo_store.store.audit_log(test_id)
    assert any(e.field and "vt1_override" in e.field and e.reason == "later on the V-slope chart" for e in audit)


def test_averaging_selector_changes_the_averaging_label(demo_store, page_test):
    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    assert any("Averaging in use: 10 s bins" in c.value for c in at.caption)
    at.selectbox(key=f"avg_method_{test_id}").set_value("breaths").run()
    assert not at.exception, at.exception
    label = next(c.value for c in at.caption if c.value.startswith("Averaging in use:"))
    assert label.endswith("-breath rolling mean")
    _save(at, test_id)
    settings, _ = demo_store.store.get_settings(test_id)
    assert settings["averaging"]["method"] == "breaths"


def test_chart_point_selection_becomes_a_manual_threshold():
    # A selection event as st.plotly_chart returns it; the V-slope data trace carries t_s first
    # in customdata, which pick_from_chart_point trusts (analysis.thresholds).
    import pandas as pd

    avg = pd.DataFrame({"t_s": [100.0, 110.0, 120.0], "vo2_ml_min": [1000.0, 1100.0, 1200.0],
                        "vco2_ml_min": [900.0, 1000.0, 1150.0]})
    event = {"selection": {"points": [
        {"curve_name": "Lower slope 0.95", "x": 1.0, "y": 1.0},
        {"curve_name": "Averaged breaths", "x": 1100.0, "y": 1000.0, "point_index": 1, "customdata": [110.0, 1100.0, 1]},
    ]}}
    pick = review.chart_pick(event, chart="vslope", avg=avg)
    assert pick["t_s"] == 110.0 and pick["vo2_ml_min"] == 1100.0
    assert review.chart_pick({"selection": {"points": []}}, chart="vslope", avg=avg) is None
    settings = review.with_override(AnalysisSettings().to_dict(), kind="vt1", t_s=pick["t_s"], reason="clicked")
    assert settings["vt1_override"] == {"t_s": 110.0, "vo2_ml_min": None, "reason": "clicked"}
    assert review.without_override(settings, kind="vt1")["vt1_override"] is None


def test_settings_helpers_validate_like_the_analysis():
    from analysis.errors import InvalidParameter

    base = AnalysisSettings().to_dict()
    with pytest.raises(InvalidParameter, match="size"):
        review.with_averaging(base, method="middle_of_n", size=4)
    with pytest.raises(InvalidParameter, match="kind"):
        review.with_override(base, kind="vt3", t_s=10.0)
    out = review.with_exclusions(base, restored_rows=[12, 5, 12])
    assert out["restored_rows"] == [5, 12]


def test_edit_conflict_is_shown_plainly_and_nothing_is_overwritten(demo_store, page_test):
    # Optimistic locking (store): a second reviewer saved first, so this page's save is refused.
    from tests.dashboard.conftest import make_user

    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    other = make_user(demo_store.store, "rho.reviewer", "reviewer")
    settings, version = demo_store.store.get_settings(test_id)
    theirs = review.with_exclusions(settings, excluded_rows=[40])
    demo_store.store.save_settings(test_id, theirs, actor=other, reason="other reviewer", expected_version=version)
    at.text_input(key=f"thr_t_{test_id}").input("300")
    at.button[[b.label for b in at.button].index("Set VT1")].click().run()
    _save(at, test_id)
    assert any("was not saved" in e.value and "changed" in e.value for e in at.error)
    stored, _ = demo_store.store.get_settings(test_id)
    assert stored["excluded_rows"] == [40] and stored["vt1_override"] is None  # theirs kept, ours not written
    at.button(key=f"reload_{test_id}").click().run()
    assert not at.exception, at.exception
    assert not any("was not saved" in e.value for e in at.error)


def test_viewer_can_explore_but_nothing_is_saved(demo_store, page_test):
    from tests.dashboard.conftest import make_user

    test_id = demo_store.test_ids[0]
    viewer = make_user(demo_store.store, "vic.viewer", "viewer")
    _, version_before = demo_store.store.get_settings(test_id)
    at = page_test(_review_script, tm_user=viewer, tm_test_id=test_id).run()
    at.selectbox(key=f"avg_method_{test_id}").set_value("rolling_time").run()
    assert not at.exception, at.exception
    assert any("View only" in i.value for i in at.info)
    label = next(c.value for c in at.caption if c.value.startswith("Averaging in use:"))
    assert label.endswith("s rolling window")
    data.wait_for_saves()
    assert demo_store.store.get_settings(test_id)[1] == version_before
    assert not any(b.label == "Sign off this version" for b in at.button)


def test_sign_off_freezes_the_version_and_a_later_edit_starts_a_new_one(demo_store, page_test):
    test_id = demo_store.test_ids[0]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    data.wait_for_saves()
    at.run()
    _, version = demo_store.store.get_settings(test_id)
    at.text_input(key=f"sign_note_{test_id}").input("checked on the charts")
    at.button(key=f"sign_{test_id}").click().run()
    assert not at.exception, at.exception
    record = demo_store.store.get_test(test_id)
    assert record.current_version_signed and record.sign_offs[-1].version == version
    assert any(f"Version {version} is signed off" in s.value for s in at.success)
    at.text_input(key=f"thr_reason_{test_id}").input("after sign-off: VT1 later")
    at.text_input(key=f"thr_t_{test_id}").input("600")
    at.button[[b.label for b in at.button].index("Set VT1")].click().run()
    assert not any(b.label == "Sign off this version" for b in at.button)  # save or discard first
    _save(at, test_id)
    record = demo_store.store.get_test(test_id)
    assert record.summary.version == version + 1 and not record.current_version_signed
    assert any(s.version == version for s in record.sign_offs)  # the signed version stays signed


def test_restoring_an_excluded_breath_puts_it_back(demo_store, page_test):
    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    data.wait_for_saves()
    at.run()
    settings, _ = demo_store.store.get_settings(test_id)
    results = analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(settings))
    auto_rows = sorted({e.source_row for e in results.excluded_breaths if e.by == "auto"})
    if not auto_rows:
        pytest.skip("this demo test has no automatically excluded breath")
    row = auto_rows[0]
    at.multiselect(key=f"restore_{test_id}").select(row).run()
    assert not at.exception, at.exception
    _save(at, test_id)
    stored, _ = demo_store.store.get_settings(test_id)
    assert row in stored["restored_rows"]
    after = analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(stored))
    assert row not in [e.source_row for e in after.excluded_breaths]


def test_typing_a_vt2_vo2_places_vt2_at_the_nearest_averaged_row(demo_store, page_test):
    # override_threshold places a VO2 at the nearest averaged row (analysis.thresholds).
    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    data.wait_for_saves()
    at.run()
    at.radio(key=f"thr_kind_{test_id}").set_value("vt2").run()
    at.radio(key=f"thr_by_{test_id}").set_value("VO2").run()
    settings, _ = demo_store.store.get_settings(test_id)
    peak = analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(settings)).vo2_peak_ml_min
    target = round(0.85 * peak)
    at.number_input(key=f"thr_v_{test_id}").set_value(float(target))
    at.button[[b.label for b in at.button].index("Set VT2")].click().run()
    assert not at.exception, at.exception
    line = next(md.value for md in at.markdown if md.value.startswith("**VT2:**"))
    assert "manual" in line
    _save(at, test_id)
    stored, _ = demo_store.store.get_settings(test_id)
    assert stored["vt2_override"]["vo2_ml_min"] == float(target)
    expected = to_json(analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(stored)))
    assert format_number(expected["vt2"]["vo2_ml_min"], 0) + " mL/min" in line


def test_display_text_uses_trade_names_and_units_not_codes():
    import pandas as pd

    # a long unit moves into the label so the number is never cut off; short ones stay beside it
    assert review.metric_text({"label": "OUES", "value": "1 236", "unit": "mL/min per log10 L/min"}) == (
        "OUES (mL/min per log10 L/min)", "1 236")
    assert review.metric_text({"label": "VO2peak", "value": "1 055", "unit": "mL/min"}) == ("VO2peak", "1 055 mL/min")
    table = pd.DataFrame({"source_row": [46, 72, 90], "t_s": [56.72, 145.28, 170.0],
                          "column": ["vo2_ml_min", "ve_l_min", ""], "value": [230.906, 26.2605, float("nan")],
                          "reason": ["VO2 230.9 mL/min is 3.0 SD below", "VE high", "excluded by the reviewer"],
                          "by": ["auto", "auto", "reviewer"]})
    view = review.excluded_rows_view(table)
    assert view["Signal"].tolist() == ["VO2", "VE", ""]
    assert view["Time (m:ss)"].tolist() == ["0:57", "2:25", "2:50"]
    assert view["Reason"].tolist()[0].startswith("VO2 230.9 mL/min")  # value and unit stated in the reason
    assert view["Excluded by"].tolist() == ["automatic", "automatic", "reviewer"]
    assert review.audit_field("vt1_override") == "VT1 placed by a reviewer"
    assert review.audit_field("vt1_override.t_s") == "VT1 placed by a reviewer: time (s)"
    assert review.audit_field("averaging.size") == "averaging window"
    assert review.audit_action("settings_change") == "setting changed"


def test_page_shows_no_column_codes(demo_store, page_test):
    test_id = demo_store.test_ids[0]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    codes = {"vo2_ml_min", "vco2_ml_min", "ve_l_min", "hr_bpm", "work_w", "auto"}
    frames = [df.value for df in at.dataframe] + [t.value for t in at.table]
    for frame in frames:
        cells = {str(v) for v in frame.to_numpy().ravel()}
        assert not codes & cells, (list(frame.columns), codes & cells)
    excluded = [f for f in frames if "Reason" in f.columns and "Excluded by" in f.columns]
    assert excluded and set(excluded[0]["Excluded by"]) <= {"automatic", "reviewer"}
    method = at.selectbox(key=f"avg_method_{test_id}").value
    labels = {s.label for s in at.selectbox}
    assert review.WINDOW_LABELS[method] in labels  # the averaging window carries its unit
    assert review.WINDOW_LABELS["time_bin"] == "Window (s)" and review.WINDOW_LABELS["breaths"] == "Window (breaths)"


def test_threshold_notes_are_not_repeated():
    agreement = {"vt1": "4 of 4 methods within 150 mL/min", "vt2": "none of 3 methods found a VT2"}
    reasons = ["VE vs VCO2 breakpoint: two lines fit no better than one", "VT2 not found: none of 3 methods found a VT2"]
    assert review.threshold_notes(agreement, reasons) == [
        "VT1: 4 of 4 methods within 150 mL/min",
        "VT2: none of 3 methods found a VT2",
        "Note: VE vs VCO2 breakpoint: two lines fit no better than one",
    ]


# --- the overview grid: one time window, one highlighted span, VT1/VT2 on every panel -----------


def _grid(at) -> dict:
    import json

    specs = [json.loads(c.proto.spec) for c in at.get("plotly_chart")]
    grids = [s for s in specs if "panels" in (s["layout"].get("meta") or {})]
    assert len(grids) == 1, [s["layout"].get("meta") for s in specs]
    return grids[0]


def _window_slider(at):
    (slider,) = [s for s in at.select_slider if s.label == "Time window"]
    return slider


def _time_axes(spec) -> list[str]:
    """Layout names of the time panels' x axes (``xaxis``, ``xaxis3``, ...)."""
    from dashboard.charts.overview_grid import PANEL_BY_KEY, axis_ids

    return [f"xaxis{axis_ids(i)[0][1:]}" for i, k in enumerate(spec["layout"]["meta"]["panels"])
            if PANEL_BY_KEY[k].over_time]


def _axis_of(spec, key: str) -> tuple[str, str]:
    from dashboard.charts.overview_grid import axis_ids

    return axis_ids(spec["layout"]["meta"]["panels"].index(key))


def _band(ci) -> list[tuple[float, float]]:
    return [] if ci is None else [(float(ci[0]), float(ci[1]))]


def test_overview_grid_draws_every_threshold_at_the_results_value(demo_store, page_test):
    from dashboard import palette
    from dashboard.charts._common import BAND_OPACITY
    from dashboard.charts.overview_grid import PANEL_BY_KEY, axis_ids

    for test_id in demo_store.test_ids:  # a cycle ramp (work rate) and a treadmill ramp (none)
        at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
        assert not at.exception, at.exception
        session = demo_store.store.load_session(test_id)
        settings, _ = demo_store.store.get_settings(test_id)
        result = analyze_session(session, AnalysisSettings.from_dict(settings))
        spec = _grid(at)
        panels = spec["layout"]["meta"]["panels"]
        assert ("gas_work" in panels) == bool(result.averaged["work_w"].notna().any() if "work_w" in result.averaged
                                              else False)
        assert {"gas_time", "vslope", "equivalents", "rer", "ve_vco2", "hr_pulse"} <= set(panels)
        shapes = spec["layout"]["shapes"]
        for kind in ("vt1", "vt2"):
            pick = getattr(result, kind)
            if pick is None:
                continue
            colour = palette.THRESHOLD[kind]["color"]
            for i, key in enumerate(panels):
                xa, ya = axis_ids(i)
                lines = [s for s in shapes if s["type"] == "line" and s.get("line", {}).get("color") == colour
                         and (s.get("xref") == xa or s.get("yref") == ya)]
                bands = [s for s in shapes if s["type"] == "rect" and s.get("opacity") == BAND_OPACITY
                         and s.get("fillcolor") == colour and (s.get("xref") == xa or s.get("yref") == ya)]
                if PANEL_BY_KEY[key].over_time:
                    assert [(s["x0"], s["x1"]) for s in lines] == [(pick.t_s, pick.t_s)], (kind, key)
                    assert [(s["x0"], s["x1"]) for s in bands] == _band(pick.ci90_t_s), (kind, key)
                elif key == "vslope":
                    assert [s["x0"] for s in lines] == [pick.vo2_ml_min], (kind, key)
                    assert [(s["x0"], s["x1"]) for s in bands] == _band(pick.ci90_vo2_ml_min), (kind, key)
                elif key == "gas_work":
                    assert [s["y0"] for s in lines] == [pick.vo2_ml_min], (kind, key)
                    assert [(s["y0"], s["y1"]) for s in bands] == _band(pick.ci90_vo2_ml_min), (kind, key)
                    (marker,) = [t for t in spec["data"] if t.get("name") == f"{kind.upper()} marker"]
                    assert marker["x"] == [pick.work_w] and marker["y"] == [pick.vo2_ml_min]
                elif key == "ve_vco2":
                    assert [s["y0"] for s in lines] == [pick.ve_l_min], (kind, key)
                    assert len(bands) == len(_band(pick.ci90_t_s))  # VE over the time interval
                    assert all(b["y0"] <= pick.ve_l_min <= b["y1"] for b in bands)
                elif key == "vt_ve":
                    assert [s["x0"] for s in lines] == [pick.ve_l_min], (kind, key)
                    assert len(bands) == len(_band(pick.ci90_t_s))
                    assert all(b["x0"] <= pick.ve_l_min <= b["x1"] for b in bands)


def test_time_window_zooms_every_time_panel_together(demo_store, page_test):
    test_id = demo_store.test_ids[0]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    slider = _window_slider(at)
    lo, hi = slider.value
    spec = _grid(at)
    axes = _time_axes(spec)
    assert len(axes) >= 4 and all("range" not in spec["layout"][a] for a in axes)  # whole test: autorange
    assert all(spec["layout"][a].get("matches") == "x" for a in axes[1:])  # linked in the browser too
    tick = spec["layout"][axes[0]]
    assert all(":" in str(t) for t in tick["ticktext"])  # m:ss labels, values in seconds
    # a window chosen on the slider (AppTest cannot move a select_slider range with formatted
    # labels; the page reads the slider's key, so a run that starts with it set is the same)
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id,
                   **{review.window_key(test_id): (lo + 300.0, lo + 600.0)}).run()
    assert _window_slider(at).value == (lo + 300.0, lo + 600.0)
    assert not at.exception, at.exception
    spec = _grid(at)
    for a in axes:
        assert spec["layout"][a]["range"] == [lo + 300.0, lo + 600.0]
    xa, _ = _axis_of(spec, "vslope")
    assert spec["layout"][f"xaxis{xa[1:]}"]["range"][1] > 1000.0  # VO2 axis, not time


def _box_select_script() -> None:
    import streamlit as st

    from dashboard import data
    from dashboard.views import review

    test_id = st.session_state["tm_test_id"]
    st.session_state[f"chart_grid_{test_id}"] = st.session_state["tm_event"]
    review._on_chart_select(data.get_store(), test_id, chart="grid")


def test_box_selection_on_the_grid_highlights_without_moving_a_threshold(demo_store, page_test):
    test_id = demo_store.test_ids[0]
    points = [{"curve_number": 3, "point_index": i, "x": 1000.0 + i, "y": 900.0 + i, "customdata": [t, i]}
              for i, t in enumerate((400.0, 430.0, 460.0))]
    event = {"selection": {"points": points, "point_indices": [0, 1, 2], "box": [{"x": [0, 1], "y": [0, 1]}], "lasso": []}}
    _, version_before = demo_store.store.get_settings(test_id)
    at = page_test(_box_select_script, tm_user=demo_store.user, tm_test_id=test_id, tm_event=event).run()
    assert not at.exception, at.exception
    assert at.session_state[review.span_key(test_id)] == (400.0, 460.0)
    assert review.SAVE_QUEUE not in at.session_state or not at.session_state[review.SAVE_QUEUE]  # nothing saved
    data.wait_for_saves()
    assert demo_store.store.get_settings(test_id)[1] == version_before


def test_a_click_on_a_grid_point_is_a_threshold_time():
    avg = pd.DataFrame({"t_s": [100.0, 110.0, 120.0], "vo2_ml_min": [1000.0, 1100.0, 1200.0]})
    click = {"selection": {"points": [{"curve_number": 2, "point_index": 0, "x": 80.0, "y": 1.0},  # a breath dot
                                      {"curve_number": 9, "point_index": 1, "x": 55.0, "y": 60.0,
                                       "customdata": [110.0, 1.0]}], "box": [], "lasso": []}}
    assert review.chart_pick(click, chart="grid", avg=avg) == {"t_s": 110.0, "vo2_ml_min": 1100.0, "index": 1}
    assert review.chart_pick({"selection": {"points": [{"x": 1.0, "y": 2.0}]}}, chart="grid", avg=avg) is None


def test_highlighted_span_is_drawn_on_every_panel_and_can_be_cleared(demo_store, page_test):
    from dashboard.charts.linking import SPAN_FILL, SPAN_TRACE

    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id,
                   **{review.span_key(test_id): (400.0, 460.0)}).run()
    assert not at.exception, at.exception
    assert any("Highlighted on all charts: breaths selected at 6:40–7:40" in c.value for c in at.caption)
    spec = _grid(at)
    axes = _time_axes(spec)
    bands = [s for s in spec["layout"]["shapes"] if s.get("fillcolor") == SPAN_FILL]
    assert sorted(b["xref"] for b in bands) == sorted(f"x{a[5:]}" for a in axes)  # one band per time panel
    assert {(b["x0"], b["x1"]) for b in bands} == {(400.0, 460.0)}
    xa, _ = _axis_of(spec, "vslope")
    assert any(t.get("name", "").startswith(SPAN_TRACE) and t.get("xaxis") == xa for t in spec["data"])
    at.button(key=f"zoom_span_{test_id}").click().run()  # the shared window moves to the span
    assert not at.exception, at.exception
    assert _window_slider(at).value == (390.0, 470.0)
    assert at.session_state[review.window_key(test_id)] == (390.0, 470.0)
    spec = _grid(at)
    for a in axes:
        assert spec["layout"][a]["range"] == [390.0, 470.0]
    at.button(key=f"clear_span_{test_id}").click().run()
    assert not at.exception, at.exception
    assert review.span_key(test_id) not in at.session_state
    assert not [s for s in _grid(at)["layout"]["shapes"] if s.get("fillcolor") == SPAN_FILL]


def test_a_version_saved_elsewhere_shows_after_a_rerun(demo_store, page_test):
    # another reviewer (here: another store handle, as on a second server) saves a VT1 placement;
    # this page had the test open with nothing unsaved and shows the new version on its next run
    from store import open_store

    test_id = demo_store.test_ids[1]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    assert "manual" not in _threshold_table(at).iloc[0]["Threshold"]
    other = open_store(demo_store.url)
    try:
        settings, version = other.get_settings(test_id)
        settings["vt1_override"] = {"t_s": 600.0, "vo2_ml_min": None, "reason": "set on the other server"}
        other.save_settings(test_id, settings, actor=demo_store.user, reason="other server", expected_version=version)
    finally:
        other.close()
    at.run()
    assert not at.exception, at.exception
    vt1 = _threshold_table(at)
    vt1 = vt1[vt1["Threshold"].str.startswith("VT1")].iloc[0]
    assert "manual" in vt1["Threshold"] or vt1["Set by"] not in ("", "automatic")


def test_first_run_of_a_session_draws_the_overview_first_and_the_next_run_the_sections(demo_store, page_test):
    """A browser session's first Review run sends the overview, the notes and the caution, and the
    small component that reports the overview drawn; the run that report starts (any next run)
    draws the sections under the overview as well."""
    test_id = demo_store.test_ids[0]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id, **{review.PAGE_DRAWN: False}).run()
    assert not at.exception, at.exception
    grid = [c for c in at.get("plotly_chart") if c.proto.id and f"chart_grid_{test_id}" in c.proto.id]
    assert len(grid) == 1
    assert any("not a medical device" in c.value for c in at.caption)
    assert any("follow below once the overview is drawn" in c.value for c in at.caption)
    assert [s.value for s in at.subheader if s.value in ("Headline results", "Thresholds", "Training zones")] == []
    assert len(at.metric) == 0 and len(at.dataframe) == 0
    assert len(at.get("bidi_component")) == 1  # the report that the overview is drawn
    assert at.session_state[review.PAGE_DRAWN] is True

    at.run()  # the run the browser's report starts
    assert not at.exception, at.exception
    heads = [s.value for s in at.subheader]
    for title in ("Headline results", "Flags and patterns", "Thresholds", "Set a threshold", "Training zones",
                  "Excluded breaths", "Versions, audit trail and sign-off"):
        assert title in heads
    assert not any("follow below once the overview is drawn" in c.value for c in at.caption)
    assert len(at.get("bidi_component")) == 0
    assert len([c for c in at.get("plotly_chart") if c.proto.id and f"chart_grid_{test_id}" in c.proto.id]) == 1


@pytest.mark.parametrize(("text", "seconds"), [
    ("12:30", 750.0), ("0:05", 5.0), (" 12:30 ", 750.0), ("1:02:05", 3725.0), ("12:30.5", 750.5),
    ("750", 750.0), ("750.5", 750.5), ("0", 0.0),
])
def test_a_typed_threshold_time_reads_mss_and_seconds(text, seconds):
    # m:ss as dashboard.timefmt.clock_text writes it (the charts' ticks and hover, the tables)
    assert review.time_from_text(text) == seconds
    assert review.time_from_text(clock_text(seconds)) == round(seconds)


@pytest.mark.parametrize("text", ["", "abc", "-5", "-0:05", "12:60", "12:5", "1:60:00", "1:2:3", "12:30:00:00", "nan", "1.5:30"])
def test_a_typed_threshold_time_that_is_no_time_is_refused_plainly(text):
    with pytest.raises(ValueError, match=r"Type the time as m:ss \(12:30\) or in seconds \(750\)"):
        review.time_from_text(text)


def test_a_time_that_is_no_time_changes_nothing_and_says_how_to_type_it(demo_store, page_test):
    test_id = demo_store.test_ids[0]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    before = _threshold_table(at).to_dict("records")
    at.text_input(key=f"thr_t_{test_id}").input("12:5")
    at.button[[b.label for b in at.button].index("Set VT1")].click().run()
    assert not at.exception, at.exception
    assert any("Type the time as m:ss (12:30) or in seconds (750); received '12:5'" in e.value for e in at.error)
    assert _threshold_table(at).to_dict("records") == before
    assert not any(w.startswith("Unsaved changes") for w in _warnings(at))
    assert [t.label for t in at.text_input if t.key == f"thr_t_{test_id}"] == ["Time (m:ss or seconds)"]
