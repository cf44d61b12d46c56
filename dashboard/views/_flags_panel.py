"""The flags and pattern summary as a page section (Review: all flags; coach view: sport-relevant only).

Every data-derived piece of text passes through :func:`dashboard.lab.markdown_text`.
"""

from __future__ import annotations

from collections.abc import Mapping

import streamlit as st

from analysis.results import TestResults
from dashboard.flag_rows import flag_groups, pattern_summary, reference_set_name
from dashboard.lab import markdown_text

#: Shown with the coach's list: the clinical flags are the lab's to discuss.
COACH_NOTE = (
    "Only findings that bear on training are listed here; the lab's report and staff give the full interpretation."
)
REVIEW_TITLE = "Flags and patterns"
COACH_TITLE = "Findings for training"


def flag_line(row: Mapping[str, str]) -> str:
    """One flag as a markdown line: name, value, finding, limit and source (escaped)."""
    e = markdown_text
    return (
        f"- **{e(row['Flag'])}** ({e(row['Severity'])}): {e(row['Finding'])} "
        f"Limit {e(row['Limit'])} — {e(row['Source'])}"
    )


def render_flags(results: TestResults, *, sport_only: bool = False) -> None:
    """Flags grouped with their limit and source, then (Review) the patterns with their caution."""
    st.subheader(COACH_TITLE if sport_only else REVIEW_TITLE)
    groups = flag_groups(results, sport_only=sport_only)
    if not groups:
        st.caption("No finding that bears on training." if sport_only else "No value crossed the limits checked.")
    for group, rows in groups:
        st.markdown(f"**{markdown_text(group)}**\n\n" + "\n".join(flag_line(r) for r in rows))
    ref = reference_set_name(results)
    if ref and groups:
        st.caption(f"% predicted from {markdown_text(ref)}.")
    if sport_only:
        st.caption(COACH_NOTE)
        return
    texts, caution, statement = pattern_summary(results)
    if texts:
        st.markdown("\n".join(f"- {markdown_text(t)}" for t in texts))
    if caution:
        st.caption(markdown_text(f"{caution} Patterns follow: {statement}."))
    _oscillation(results)


def _oscillation(results: TestResults) -> None:
    """The ventilation oscillation drawn (smoothed VE, trend, counted cycles), folded unless present."""
    from dashboard.charts.oscillation import oscillation_caption, oscillation_figure, oscillation_of

    osc = oscillation_of(results)
    if osc is None:
        return
    with st.expander("Ventilation oscillation (drawn)", expanded=osc.present):
        st.caption(oscillation_caption(osc))
        st.plotly_chart(oscillation_figure(osc), width="stretch", key="oscillation_chart")
