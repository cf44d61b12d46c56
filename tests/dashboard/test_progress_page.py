"""Progress page (AppTest): one person across two tests, change from a chosen baseline."""

from __future__ import annotations

from collections.abc import Iterator

import pytest

from analysis.progress import TestRecord, progress_table
from dashboard.charts.progress import overlay_figure, progress_figure
from tests.dashboard.conftest import store_for_pages
from tests.dashboard.pages_helpers import analysis_json, analysis_result, parse_number, signed_in
from tests.support import ROOT

#: The demo cardiac-rehab patient's baseline and 12-week follow-up (same person code).
REHAB_FILES = (
    "SEL-0318_2025-11-12_rehab-baseline.session.csv",
    "SEL-0318_2026-02-04_rehab-week12.session.csv",
)


@pytest.fixture(scope="module")
def rehab_store(tmp_path_factory) -> Iterator[tuple]:
    from store.demo_loader import load_demo_sessions

    paths = [ROOT / "demo_sessions" / f for f in REHAB_FILES]
    missing = [p.name for p in paths if not p.is_file()]
    if missing:
        pytest.fail(f"demo sessions missing: {missing} (run `tidemark demo`)")
    url = f"sqlite:///{tmp_path_factory.mktemp('progress-store') / 'tidemark.sqlite'}"
    ids = load_demo_sessions(paths, url=url)
    with store_for_pages(url) as store:
        yield store, ids


def _progress():
    from dashboard.views import progress

    progress.render()


def _rows(at):
    table = at.dataframe[0].value
    return {(r["Test date"], r["Result"]): r for _, r in table.iterrows()}


def test_change_from_baseline_equals_analysis(rehab_store, page_test):
    store, ids = rehab_store
    at = page_test(_progress, **signed_in(store.demo_user()))
    at.run()
    assert not at.exception
    base, follow = (analysis_json(store, i) for i in ids)
    rows = _rows(at)
    assert rows[("2025-11-12", "VO2peak")]["Change from baseline"] == "baseline"
    assert rows[("2025-11-12", "VO2peak")]["Beyond typical error"] == "–"  # not compared with itself
    assert rows[("2026-02-04", "VO2peak")]["Beyond typical error"] in {"yes", "no"}
    shown = parse_number(rows[("2026-02-04", "VO2peak")]["Value"])
    assert shown == pytest.approx(follow["vo2_peak_ml_min"], abs=0.5)
    change = parse_number(rows[("2026-02-04", "VO2peak")]["Change from baseline"])
    assert change == pytest.approx(follow["vo2_peak_ml_min"] - base["vo2_peak_ml_min"], abs=0.6)
    # The simulated follow-up improved VO2peak (Simulator's demo cast): the change is positive.
    assert change > 0
    assert any("from memory" in str(v) for v in at.dataframe[1].value["Source"])


def test_choosing_another_baseline_changes_the_changes(rehab_store, page_test):
    store, ids = rehab_store
    at = page_test(_progress, **signed_in(store.demo_user()))
    at.run()
    before = parse_number(_rows(at)[("2026-02-04", "VE/VCO2 slope (whole exercise)")]["Change from baseline"])
    at.selectbox(key="progress_baseline").set_value(ids[1]).run()
    assert not at.exception
    rows = _rows(at)
    assert rows[("2026-02-04", "VE/VCO2 slope (whole exercise)")]["Change from baseline"] == "baseline"
    after = parse_number(rows[("2025-11-12", "VE/VCO2 slope (whole exercise)")]["Change from baseline"])
    assert after == pytest.approx(-before, abs=0.11)


def test_overlay_chart_for_two_tests(rehab_store, page_test):
    store, ids = rehab_store
    at = page_test(_progress, **signed_in(store.demo_user()))
    at.run()
    assert at.multiselect(key="progress_overlay_tests").value == list(ids)
    at.radio(key="progress_overlay").set_value("vco2_vo2").run()
    assert not at.exception
    # the demo baseline ramps at 10 W/min, the follow-up at 12 W/min (analysis.simulation.cast)
    ramp = [w.value for w in at.warning if w.value.startswith("Ramp rates differ")]
    assert ramp and "10 W/min" in ramp[0] and "12 W/min" in ramp[0]
    import json

    charts = [json.loads(c.proto.spec) for c in at.get("plotly_chart")]
    overlay = charts[-1]
    assert len(overlay["data"]) == 2  # the two chosen tests
    assert overlay["layout"]["xaxis"]["title"]["text"] == "VO2 (mL/min)"
    assert overlay["layout"]["yaxis"]["title"]["text"] == "VCO2 (mL/min)"


def test_charts_from_progress_table(rehab_store):
    store, ids = rehab_store
    records = [TestRecord(i, d, analysis_result(store, i)) for i, d in zip(ids, ("2025-11-12", "2026-02-04"))]
    table = progress_table(records)
    fig = progress_figure(table, "vo2_peak_ml_min")
    names = [t.name for t in fig.data]
    assert names[:3] == ["Typical-error band", "VO2peak", "Baseline"]
    assert fig.layout.yaxis.title.text == "VO2peak (mL/min)"
    assert list(fig.data[1].y) == pytest.approx([x.results.vo2_peak_ml_min for x in records])
    assert fig.data[0].mode == "lines" and fig.data[0].fill == "toself"  # an area, no corner dots
    # One test only: the band is an error bar around the baseline value (half-width = (high - low) / 2).
    single = progress_table(records[:1])
    one = progress_figure(single, "vo2_peak_ml_min")
    row = single[single["metric"] == "vo2_peak_ml_min"].iloc[0]
    band = one.data[0]
    assert band.name == "Typical-error band" and band.mode == "markers"
    assert band.y[0] == pytest.approx((row["band_low"] + row["band_high"]) / 2)
    assert band.error_y.array[0] == pytest.approx((row["band_high"] - row["band_low"]) / 2)
    import pandas as pd

    aligned = pd.DataFrame({"test": ["a", "a", "b"], "x": [0.0, 10.0, 0.0], "y": [1.0, 2.0, 3.0]})
    ov = overlay_figure(aligned, overlay="vo2_time")
    assert [t.name for t in ov.data] == ["a", "b"]
    assert ov.layout.xaxis.title.text == "Time from start of exercise (m:ss)"
    assert list(ov.layout.xaxis.ticktext) == ["0:00"] and list(ov.data[0].text) == ["0:00", "0:10"]  # m:ss


def test_values_at_the_same_load_and_population_typical_errors(rehab_store, page_test):
    from analysis.pipeline import analyze_session
    from analysis.progress_compare import TYPICAL_ERRORS_BY_POPULATION, iso_comparison
    from analysis.settings import AnalysisSettings

    store, ids = rehab_store
    at = page_test(_progress, **signed_in(store.demo_user()))
    at.run()
    assert not at.exception
    # the rehab patient's tests carry patient flags: the patients' typical errors are suggested
    assert at.radio(key="progress_population").value == "patients"
    sources = list(at.dataframe[1].value["Source"])
    assert sources == [te.provenance for te in TYPICAL_ERRORS_BY_POPULATION["patients"].values()]
    iso_table = next(df.value for df in at.dataframe if "Beyond typical error" in df.value.columns and "Source" in df.value.columns)
    base, follow = (analyze_session(store.load_session(i), AnalysisSettings.from_dict(store.get_settings(i)[0])) for i in ids)
    iso = iso_comparison(base.averaged, follow.averaged, population="patients")
    hr = next(v for v in iso.values if v.column == "hr_bpm")
    row = iso_table[iso_table["Result"] == "Heart rate"].iloc[0]
    assert parse_number(row["Change"]) == pytest.approx(hr.change, abs=0.6)
    assert row["Beyond typical error"] == ("yes" if hr.beyond_typical_error else "no")
    assert any(c.value.startswith(f"At {iso.level:.0f} W, the highest work rate both tests reached") for c in at.caption)
    at.radio(key="progress_population").set_value("healthy").run()
    assert list(at.dataframe[1].value["Typical error (%)"])[0] == "4"
