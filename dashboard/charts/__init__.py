"""Plotly figures for the dashboard: pure functions from analysis results to figures.

No Streamlit here, so every chart can be tested on its own. Colours come from
:mod:`dashboard.palette`; every axis states its unit.

Review charts (Dashboard-core): :func:`time_course_figure`, :func:`vslope_figure`,
:func:`equivalents_figure`. Oxygen and progress charts live in their own modules.
"""

from dashboard.charts.equivalents import equivalents_figure
from dashboard.charts.time_course import time_course_figure
from dashboard.charts.vslope import vslope_figure

__all__ = ["equivalents_figure", "time_course_figure", "vslope_figure"]
