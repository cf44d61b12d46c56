"""Colours and line styles of the dashboard, defined once.

The eight colours are the colour-blind-safe set of Okabe & Ito (2008), "Color Universal
Design" (hex values as published there, from memory). Each signal is given a role here; charts
never spell a colour themselves. Thresholds differ by line style as well as colour, so they stay
distinguishable in greyscale prints.
"""

from __future__ import annotations

#: Okabe & Ito (2008) palette.
BLACK = "#000000"
ORANGE = "#E69F00"
SKY_BLUE = "#56B4E9"
BLUISH_GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
REDDISH_PURPLE = "#CC79A7"
GREY = "#7F7F7F"

OKABE_ITO: tuple[str, ...] = (BLACK, ORANGE, SKY_BLUE, BLUISH_GREEN, YELLOW, BLUE, VERMILLION, REDDISH_PURPLE)

#: Colour of each canonical signal (names from :mod:`analysis.columns`).
SIGNAL: dict[str, str] = {
    "vo2_ml_min": BLUE,
    "vco2_ml_min": VERMILLION,
    "ve_l_min": BLUISH_GREEN,
    "hr_bpm": REDDISH_PURPLE,
    "work_w": GREY,
    "speed_kmh": GREY,
    "grade_pct": BLACK,
    "peto2_mmhg": SKY_BLUE,
    "petco2_mmhg": BLACK,
    "ve_vo2": BLUE,
    "ve_vco2": VERMILLION,
    "spo2_pct": SKY_BLUE,
}

#: Threshold markers: colour and plotly dash style.
THRESHOLD: dict[str, dict[str, str]] = {
    "vt1": {"color": ORANGE, "dash": "dash"},
    "vt2": {"color": REDDISH_PURPLE, "dash": "dot"},
}

#: Method candidates on the V-slope chart (marker symbols differ as well as colours).
CANDIDATE_SYMBOLS: tuple[str, ...] = ("diamond", "square", "triangle-up", "cross", "star", "x")
CANDIDATE_COLOURS: tuple[str, ...] = (ORANGE, SKY_BLUE, BLUISH_GREEN, REDDISH_PURPLE, BLACK, YELLOW)

#: Shading of test phases (translucent, so the data stays readable).
PHASE_FILL: dict[str, str] = {
    "rest": "rgba(86, 180, 233, 0.10)",
    "warmup": "rgba(240, 228, 66, 0.16)",
    "exercise": "rgba(0, 0, 0, 0.0)",
    "recovery": "rgba(0, 158, 115, 0.10)",
}
#: The same phase colours, stronger, for the legend swatches naming the shaded bands.
PHASE_LEGEND: dict[str, str] = {
    "rest": "rgba(86, 180, 233, 0.35)",
    "warmup": "rgba(240, 228, 66, 0.55)",
    "exercise": "rgba(0, 0, 0, 0.0)",
    "recovery": "rgba(0, 158, 115, 0.35)",
}

#: Breaths left out of the analysis.
EXCLUDED = VERMILLION
EXCLUDED_SYMBOL = "x-thin-open"

#: Raw breath dots behind the averaged line.
BREATH_DOT_OPACITY = 0.30

#: Training zones, from easy to hard.
ZONE_FILL: tuple[str, ...] = (
    "rgba(0, 158, 115, 0.14)",
    "rgba(230, 159, 0, 0.16)",
    "rgba(213, 94, 0, 0.16)",
)
