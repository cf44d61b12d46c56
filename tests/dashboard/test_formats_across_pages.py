"""One way of writing numbers and times on every page (issue finding: inconsistent number formats,
times only in seconds; grid columns cut off).

Every page a reviewer reads is rendered (AppTest) on the demo store and its text collected:
metrics, tables, markdown, captions. Thousands are separated by a thin space (never a comma, as
in the report: ``dashboard.report.html_report.format_number``), and a moment of the test reads
m:ss (``dashboard.timefmt.clock_text``), never "715 s". Exports keep seconds (checked elsewhere).
"""

from __future__ import annotations

import json
import re

import pytest

from dashboard.report.html_report import format_number
from dashboard.timefmt import clock_text
from tests.dashboard.pages_helpers import analysis_json, page_text, signed_in

#: A comma between thousands ("2,741"): the style the pages do not use.
COMMA_THOUSANDS = re.compile(r"\d,\d{3}(?!\d)")
#: A moment of the test written in seconds ("715 s"); durations such as "10 s bins" are shorter.
SECONDS_MOMENT = re.compile(r"\b\d{3,} s\b")


def _review():
    from dashboard.views import review

    review.render()


def _reports():
    from dashboard.views import reports

    reports.render()


def _progress():
    from dashboard.views import progress

    progress.render()


def _library():
    from dashboard.views import library

    library.render()


def _oxygen():
    from dashboard.views import oxygen

    oxygen.render()


def _sharing():
    from dashboard.views import sharing

    sharing.render()


PAGES = {"review": _review, "reports": _reports, "progress": _progress, "library": _library, "oxygen": _oxygen,
         "sharing": _sharing}


#: Longer texts are sentences of the analysis (its notes and scenario descriptions, e.g. "2,000 m"
#: of altitude); the pages format the values they show themselves.
SHOWN_VALUE_CHARS = 60


def _texts(at) -> list[str]:
    """The values a page formats: metrics, table cells, short lines (threshold lines, captions)."""
    out = [t for t in page_text(at) if len(t) <= SHOWN_VALUE_CHARS or t.startswith(("**VT1:**", "**VT2:**"))]
    out += [f"{m.label} {m.value}" for m in at.metric]
    for df in [*at.dataframe, *at.table]:
        frame = df.value
        out += [str(c) for c in frame.columns]
        out += [str(v) for v in frame.to_numpy().ravel() if len(str(v)) <= SHOWN_VALUE_CHARS]
    return out


@pytest.mark.parametrize("name", sorted(PAGES))
def test_every_page_writes_thousands_and_moments_one_way(demo_store, page_test, name):
    if name == "sharing":
        demo_store.store.create_share(test_id=max(demo_store.test_ids), actor=demo_store.user, expires_in_days=7)
    at = page_test(PAGES[name], **signed_in(demo_store.user, tm_test_id=max(demo_store.test_ids))).run()
    assert not at.exception, at.exception
    texts = _texts(at)
    assert len(texts) > 5
    assert [t for t in texts if COMMA_THOUSANDS.search(t)] == []
    assert [t for t in texts if SECONDS_MOMENT.search(t)] == []


def test_review_threshold_cells_read_like_the_report(demo_store, page_test):
    test_id = max(demo_store.test_ids)
    reference = analysis_json(demo_store.store, test_id)
    at = page_test(_review, **signed_in(demo_store.user, tm_test_id=test_id)).run()
    assert not at.exception, at.exception
    table = next(df.value for df in at.dataframe if "Threshold" in df.value.columns)
    vt1 = table[table["Threshold"].str.startswith("VT1")].iloc[0]
    assert vt1["Time"] == clock_text(reference["vt1"]["time_s"])  # m:ss, as on the report
    assert vt1["VO2"] == format_number(reference["vt1"]["vo2_ml_min"], 0) + " mL/min"
    line = next(md.value for md in at.markdown if md.value.startswith("**VT1:**"))
    assert f"{format_number(reference['vt1']['vo2_ml_min'], 0)} mL/min at {clock_text(reference['vt1']['time_s'])}" in line


def _column_widths(element) -> dict[str, str]:
    """Column name -> width set on a st.dataframe (its column configuration, as sent to the browser)."""
    config = json.loads(element.proto.columns or "{}")
    return {name: str(c.get("width")) for name, c in config.items() if isinstance(c, dict) and c.get("width")}


def test_long_columns_are_given_room(demo_store, page_test):
    # Library list (protocol), share list (what a link covers and shows): wide columns, not cut off
    store = demo_store.store
    store.create_share(test_id=max(demo_store.test_ids), actor=demo_store.user, expires_in_days=7)
    at = page_test(_library, **signed_in(demo_store.user)).run()
    assert not at.exception, at.exception
    listing = next(df for df in at.dataframe if "Protocol" in df.value.columns)
    assert _column_widths(listing).get("Protocol") == "large"
    at = page_test(_sharing, **signed_in(demo_store.user)).run()
    assert not at.exception, at.exception
    links = next(df for df in at.dataframe if "Covers" in df.value.columns)
    widths = _column_widths(links)
    assert widths.get("Covers") == "large" and widths.get("Shows") == "medium"
