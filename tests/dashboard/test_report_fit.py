"""The PDF's page geometry: the printable area each report block must fit (dashboard.report.pdf)."""

from __future__ import annotations

import pytest

from dashboard.report import pdf


def test_printable_area_of_a4_and_letter():
    # ISO 216 A4 210 x 297 mm, ANSI Letter 8.5 x 11 in (215.9 x 279.4 mm); 96 CSS px per inch
    w, h = pdf.printable_px("A4")
    assert w == pytest.approx((210 - 22) / 25.4 * 96) and h == pytest.approx((297 - 20) / 25.4 * 96)
    assert (round(w), round(h)) == (711, 1047)
    w, h = pdf.printable_px("Letter")
    assert (round(w), round(h)) == (733, 980)
    assert set(pdf.PAPER_MM) == set(pdf.PAPER)


def test_fit_never_shrinks_text_below_the_floor():
    # the zoom the fit may use is bounded: a block that needs less breaks instead (unreadable text)
    assert 0.8 <= pdf.MIN_ZOOM < 1.0 and 0.95 <= pdf.FIT_SAFETY <= 1.0
    assert "Math.max(minZoom" in pdf.FIT_JS and ".page" in pdf.FIT_JS
