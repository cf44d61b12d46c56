"""Plotly figures for the dashboard: pure functions from analysis results to figures.

No Streamlit here, so every chart can be tested on its own. Colours come from
:mod:`dashboard.palette`; every axis states its unit.

Review charts (Dashboard-core): :func:`time_course_figure`, :func:`vslope_figure`,
:func:`equivalents_figure`, each with a ``*_from_results(results, session=None)`` form that
takes an :class:`analysis.results.TestResults` directly (used by the report). The two time
charts take ``time_window=`` and ``highlight=`` and the V-slope chart ``highlight=``; the page
links them through :mod:`dashboard.charts.linking`. Oxygen and progress charts live in their own modules.
"""

from dashboard.charts.equivalents import equivalents_figure, equivalents_from_results
from dashboard.charts.time_course import time_course_figure, time_course_from_results
from dashboard.charts.vslope import vslope_figure, vslope_from_results

__all__ = [
    "equivalents_figure",
    "equivalents_from_results",
    "time_course_figure",
    "time_course_from_results",
    "vslope_figure",
    "vslope_from_results",
]
