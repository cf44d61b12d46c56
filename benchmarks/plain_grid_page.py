"""The baseline page of ``bench_dashboard.py``: a minimal Streamlit page with the same charts.

``streamlit run benchmarks/plain_grid_page.py`` with ``TIDEMARK_BENCH_PLAIN_GRID`` naming a JSON
file written from ``bench_dashboard.plain_grid_data``: the panels of the Review page's overview
grid for one test, each with the same series and the same points. The page draws them as one
plotly subplot grid in the plainest way (``make_subplots`` and one validated ``go.Scatter`` /
``go.Scattergl`` per series): no sign-in, no store, no analysis, no hover text, no thresholds
or shaded phases. What the Review page takes beyond this page is Tidemark's own cost.

With ``TIDEMARK_BENCH_FIGURE`` naming a plotly JSON file instead, the page draws that figure
as it is (the Review page's own overview grid, on an otherwise empty page): the difference to
the plain grid is the cost of the grid's decoration, the difference to the Review page the
cost of the rest of that page.
"""

from __future__ import annotations

import json
import os
from typing import Any

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots


def plain_figure(spec: dict[str, Any]) -> go.Figure:
    """The subplot grid of ``spec`` (``rows``, ``cols``, ``height``, ``traces``)."""
    fig = make_subplots(rows=spec["rows"], cols=spec["cols"])
    for trace in spec["traces"]:
        kind = go.Scattergl if trace["type"] == "scattergl" else go.Scatter
        x, y = (np.asarray(trace[k], dtype=float) for k in ("x", "y"))  # as from a data frame: 64-bit floats
        fig.add_trace(kind(x=x, y=y, mode=trace["mode"]), row=trace["row"], col=trace["col"])
    fig.update_layout(height=spec["height"], showlegend=False)
    return fig


if __name__ == "__main__":  # streamlit run
    import plotly.io as pio
    import streamlit as st

    if os.environ.get("TIDEMARK_BENCH_FIGURE"):
        with open(os.environ["TIDEMARK_BENCH_FIGURE"], encoding="utf-8") as f:
            figure = pio.from_json(f.read(), skip_invalid=True)
    else:
        with open(os.environ["TIDEMARK_BENCH_PLAIN_GRID"], encoding="utf-8") as f:
            figure = plain_figure(json.load(f))
    st.title("Plain grid")
    st.plotly_chart(figure)
