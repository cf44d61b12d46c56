"""A small SVG chart writer for the printed report: static vector charts, no script, no download.

One :class:`Chart` is a rectangular plot with a left (and optionally a right) y axis, line and
dot series, vertical threshold lines with labels, reference lines and a legend. Everything is
written as plain SVG elements; every text passes through :func:`html.escape`. Numbers are
rounded to 0.1 px so a chart of a few hundred points stays a few kilobytes.
"""

from __future__ import annotations

import hashlib
import html
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

FONT = "DejaVu Sans, Helvetica, Arial, sans-serif"


def nice_ticks(lo: float, hi: float, *, max_ticks: int = 6) -> list[float]:
    """Round tick values covering ``lo``–``hi`` (steps 1, 2, 2.5 or 5 × 10^n).

    Examples
    --------
    >>> nice_ticks(0, 4800)
    [0.0, 1000.0, 2000.0, 3000.0, 4000.0]
    """
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo] if math.isfinite(lo) else []
    raw = (hi - lo) / max(max_ticks - 1, 1)
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 2.5, 5, 10) if m * power >= raw)
    first = math.ceil(lo / step - 1e-9) * step
    out = []
    v = first
    while v <= hi + step * 1e-9:
        out.append(round(v, 10) + 0.0)
        v += step
    return out


def _fmt_tick(v: float) -> str:
    if abs(v) >= 1000:
        return f"{v:,.0f}".replace(",", "\u2009")
    if float(v).is_integer():
        return f"{v:.0f}"
    return f"{v:g}"


@dataclass
class Series:
    """One data series: ``kind`` ``"line"`` or ``"dots"``, on the ``"left"`` or ``"right"`` axis."""

    x: np.ndarray
    y: np.ndarray
    name: str
    color: str
    kind: str = "line"
    axis: str = "left"
    dash: str | None = None
    width: float = 1.4
    legend: bool = True


@dataclass
class VLine:
    """A vertical line at ``x`` with a short label at its top (thresholds)."""

    x: float
    label: str
    color: str
    dash: str | None = None
    band: tuple[float, float] | None = None


@dataclass
class Chart:
    """A chart of ``width`` × ``height`` px; add series and lines, then :meth:`svg`."""

    width: float
    height: float
    title: str
    x_label: str
    y_label: str
    y2_label: str | None = None
    series: list[Series] = field(default_factory=list)
    vlines: list[VLine] = field(default_factory=list)
    #: Reference lines ``(x0, y0, x1, y1, label, colour)`` in data units on the left axis.
    refs: list[tuple[float, float, float, float, str, str]] = field(default_factory=list)
    x_range: tuple[float, float] | None = None
    y_range: tuple[float, float] | None = None
    y2_range: tuple[float, float] | None = None
    x_ticks: tuple[list[float], list[str]] | None = None
    x_tick_format: Callable[[float], str] | None = None
    square: bool = False

    def add(self, s: Series) -> None:
        x = np.asarray(s.x, dtype=float)
        y = np.asarray(s.y, dtype=float)
        keep = np.isfinite(x) & np.isfinite(y)
        if keep.any():
            s.x, s.y = x[keep], y[keep]
            self.series.append(s)

    # -- scales --------------------------------------------------------------------------
    def _extent(self, axis: str, which: str) -> tuple[float, float] | None:
        values = [s.x if which == "x" else s.y for s in self.series if which == "x" or s.axis == axis]
        if which == "x":
            values += [np.array([v.x]) for v in self.vlines]
        if not values:
            return None
        allv = np.concatenate(values)
        lo, hi = float(np.min(allv)), float(np.max(allv))
        if hi <= lo:
            hi = lo + 1.0
        return lo, hi

    def svg(self) -> str:
        """The chart as an ``<svg>`` element (inline in HTML, scales to its box)."""
        w, h = self.width, self.height
        left, right = 46.0, (44.0 if self.y2_label else 12.0)
        top, bottom = 30.0, 34.0
        pw, ph = w - left - right, h - top - bottom
        if self.square:
            side = min(pw, ph)
            pw = ph = side
        xr = self.x_range or self._extent("left", "x") or (0.0, 1.0)
        yr = self.y_range or self._extent("left", "y") or (0.0, 1.0)
        yt = nice_ticks(*yr)
        if not self.y_range and yt:
            yr = (min(yr[0], yt[0]), max(yr[1], yt[-1]))
        if self.square and not self.x_range:
            xr = yr
        y2r = self.y2_range or self._extent("right", "y")
        y2t = nice_ticks(*y2r) if y2r else []
        if y2r and not self.y2_range and y2t:
            y2r = (min(y2r[0], y2t[0]), max(y2r[1], y2t[-1]))

        def sx(v: float) -> float:
            return left + (v - xr[0]) / (xr[1] - xr[0]) * pw

        def sy(v: float, axis: str = "left") -> float:
            r = yr if axis == "left" or not y2r else y2r
            return top + ph - (v - r[0]) / (r[1] - r[0]) * ph

        out: list[str] = [
            f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {w:.0f} {h:.0f}" role="img" '
            f'aria-label="{html.escape(self.title)}" font-family="{FONT}" font-size="8.5">',
            f'<text x="{left:.1f}" y="11" font-size="9.5" font-weight="600">{html.escape(self.title)}</text>',
        ]
        clip = "c" + hashlib.sha256(f"{self.title}|{w}|{h}".encode()).hexdigest()[:8]
        out.append(f'<clipPath id="{clip}"><rect x="{left:.1f}" y="{top:.1f}" width="{pw:.1f}" height="{ph:.1f}"/></clipPath>')
        # grid and axes
        for v in yt:
            y = sy(v)
            out.append(f'<line x1="{left:.1f}" x2="{left + pw:.1f}" y1="{y:.1f}" y2="{y:.1f}" stroke="#e3e3e3" stroke-width="0.6"/>')
            out.append(f'<text x="{left - 3:.1f}" y="{y + 3:.1f}" text-anchor="end">{html.escape(_fmt_tick(v))}</text>')
        for v in y2t:
            y = sy(v, "right")
            out.append(f'<text x="{left + pw + 3:.1f}" y="{y + 3:.1f}">{html.escape(_fmt_tick(v))}</text>')
        if self.x_ticks is not None:
            xt_vals, xt_text = self.x_ticks
        else:
            xt_vals = nice_ticks(*xr, max_ticks=max(3, int(pw / 55)))
            fmt = self.x_tick_format or _fmt_tick
            xt_text = [fmt(v) for v in xt_vals]
        for v, text in zip(xt_vals, xt_text, strict=True):
            if not xr[0] - 1e-9 <= v <= xr[1] + 1e-9:
                continue
            x = sx(v)
            out.append(f'<line x1="{x:.1f}" x2="{x:.1f}" y1="{top:.1f}" y2="{top + ph:.1f}" stroke="#efefef" stroke-width="0.6"/>')
            out.append(f'<text x="{x:.1f}" y="{top + ph + 10:.1f}" text-anchor="middle">{html.escape(text)}</text>')
        out.append(f'<rect x="{left:.1f}" y="{top:.1f}" width="{pw:.1f}" height="{ph:.1f}" fill="none" stroke="#888" stroke-width="0.7"/>')
        out.append(f'<text x="{left + pw / 2:.1f}" y="{top + ph + 22:.1f}" text-anchor="middle">{html.escape(self.x_label)}</text>')
        out.append(f'<text transform="translate(10,{top + ph / 2:.1f}) rotate(-90)" text-anchor="middle">{html.escape(self.y_label)}</text>')
        if self.y2_label and y2r:
            out.append(f'<text transform="translate({w - 6:.1f},{top + ph / 2:.1f}) rotate(90)" text-anchor="middle">'
                       f"{html.escape(self.y2_label)}</text>")
        # threshold bands and lines
        body: list[str] = []
        for vl in self.vlines:
            if vl.band is not None:
                b0, b1 = max(vl.band[0], xr[0]), min(vl.band[1], xr[1])
                if b1 > b0:
                    body.append(f'<rect x="{sx(b0):.1f}" y="{top:.1f}" width="{sx(b1) - sx(b0):.1f}" height="{ph:.1f}" '
                                f'fill="{vl.color}" fill-opacity="0.12"/>')
        for x0, y0, x1, y1, _label, color in self.refs:
            body.append(f'<line x1="{sx(x0):.1f}" y1="{sy(y0):.1f}" x2="{sx(x1):.1f}" y2="{sy(y1):.1f}" stroke="{color}" '
                        f'stroke-width="0.9" stroke-dasharray="2 2"/>')
        for s in self.series:
            axis = "right" if s.axis == "right" and y2r else "left"
            if s.kind == "dots":
                dots = "".join(f'<circle cx="{sx(a):.1f}" cy="{sy(b, axis):.1f}" r="0.9"/>' for a, b in zip(s.x, s.y, strict=True))
                body.append(f'<g fill="{s.color}" fill-opacity="0.55">{dots}</g>')
            else:
                pts = " ".join(f"{sx(a):.1f},{sy(b, axis):.1f}" for a, b in zip(s.x, s.y, strict=True))
                dash = f' stroke-dasharray="{s.dash}"' if s.dash else ""
                body.append(f'<polyline points="{pts}" fill="none" stroke="{s.color}" stroke-width="{s.width}"{dash} '
                            'stroke-linejoin="round"/>')
        for vl in self.vlines:
            if xr[0] <= vl.x <= xr[1]:
                dash = f' stroke-dasharray="{vl.dash}"' if vl.dash else ""
                body.append(f'<line x1="{sx(vl.x):.1f}" x2="{sx(vl.x):.1f}" y1="{top:.1f}" y2="{top + ph:.1f}" stroke="{vl.color}" '
                            f'stroke-width="1.1"{dash}/>')
        out.append(f'<g clip-path="url(#{clip})">' + "".join(body) + "</g>")
        for vl in self.vlines:
            if xr[0] <= vl.x <= xr[1]:
                out.append(f'<text x="{sx(vl.x) + 2:.1f}" y="{top + 8:.1f}" fill="{vl.color}" font-weight="600">{html.escape(vl.label)}</text>')
        for _x0, _y0, x1, y1, label, color in self.refs:
            if label:
                out.append(f'<text x="{sx(x1) - 2:.1f}" y="{max(sy(y1), top) + 9:.1f}" text-anchor="end" fill="{color}">'
                           f"{html.escape(label)}</text>")
        # legend (above the plot, right of the title)
        x = left
        legend: list[str] = []
        for s in self.series:
            if not s.legend:
                continue
            swatch = (f'<circle cx="{x + 5:.1f}" cy="21" r="2" fill="{s.color}"/>' if s.kind == "dots" else
                      f'<line x1="{x:.1f}" x2="{x + 10:.1f}" y1="21" y2="21" stroke="{s.color}" stroke-width="1.6"'
                      + (f' stroke-dasharray="{s.dash}"' if s.dash else "") + "/>")
            legend.append(swatch + f'<text x="{x + 13:.1f}" y="24">{html.escape(s.name)}</text>')
            x += 18 + 4.6 * len(s.name)
        out.extend(legend)
        out.append("</svg>")
        return "".join(out)


def thin(x: Sequence[float] | np.ndarray, y: Sequence[float] | np.ndarray, *, max_points: int = 400) -> tuple[np.ndarray, np.ndarray]:
    """Every n-th point so a series has at most ``max_points`` (the report stays small)."""
    xa, ya = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    if xa.size <= max_points:
        return xa, ya
    step = math.ceil(xa.size / max_points)
    return xa[::step], ya[::step]
