"""Library page additions (AppTest): plausibility warning, preamble metadata, sheet choice, mapping reset."""

from __future__ import annotations


def _library_script() -> None:
    from dashboard.views.library import render

    render()


def _csv(rows: list[tuple[float, float, float, float]], preamble: str = "") -> bytes:
    body = "Time (s);VO2 (mL/min);VCO2 (mL/min);VE (L/min)\n" + "\n".join(
        f"{t:.0f};{v:.0f};{c:.0f};{e:.1f}".replace(".", ",") for t, v, c, e in rows
    )
    return (preamble + body + "\n").encode("utf-8")


def test_a_22_hour_file_is_checked_with_a_plausibility_warning(demo_store, page_test):
    # one breath every 40 s for 22 hours (1,980 breaths): read, but the reviewer is warned
    rows = [(i * 40.0, 800.0 + (i % 50) * 20, 700.0 + (i % 50) * 22, 20.0 + (i % 50) * 0.8) for i in range(1981)]
    at = page_test(_library_script, tm_user=demo_store.user).run()
    at.file_uploader(key="lib_upload").set_value(("day-long.csv", _csv(rows), "text/csv")).run()
    assert not at.exception, at.exception
    assert any("22 h 00 min" in w.value for w in at.warning), [w.value for w in at.warning]
