"""Lab-variety exports: the untidy files a lab really meets, written from a simulated session.

Each :class:`LabLayout` switches on features of our own invention that break naive readers —
quoted cells, a UTF-8 byte-order mark, CRLF or LF line ends, trailing separators (empty
columns), a units row under the header, blank and comment lines inside the data, note rows (one cell of words), event rows
(text in a numeric column, no gas values), sensor drop-outs written as text in a breath row,
VO2/VCO2 in L/min or mL/min, VE labelled BTPS, time as ``h:mm:ss`` without decimals, a
body-mass-normalised VO2 column beside the absolute one, columns in a shuffled order and extra
columns the importer does not know. No layout imitates a product's file, column names or
wording. The importer is meant to read all of them with no metadata typed by the user.

:func:`lab_export_bytes` is pure (bytes out, nothing written). :data:`LAB_LAYOUTS` names the
fixed layouts; :func:`lab_layout` returns one, and tests may build their own
:class:`LabLayout` (property-based tests draw them).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from analysis import columns as C
from analysis.errors import require
from analysis.session import Session

#: Event text written into the load column of an event row (our own wording).
EVENT_WORDS: tuple[str, ...] = ("ramp on", "stage up", "stop pedalling", "cool-down", "mask adjusted")
#: Text a breath row carries where a sensor gave nothing (our own choice).
DROPOUT_TEXT = "--"

_TIME_STYLES = ("s", "hms", "mss")
_TIME_UNITS = {"s": "s", "hms": "h:mm:ss", "mss": "m:ss"}
_GAS_UNITS = ("ml_min", "l_min")


@dataclass(frozen=True)
class LabLayout:
    """Features of one lab-variety export (all of our own invention).

    Attributes
    ----------
    name : str
    sep, decimal : str
        Cell separator (``,``, ``;``, tab, ``|``) and decimal mark (``.`` or ``,``; a comma
        mark never with a comma separator unless ``quote``).
    quote : bool
        Every cell in double quotes.
    bom : bool
        UTF-8 byte-order mark at the start.
    line_end : str
        ``"\\r\\n"`` or ``"\\n"``.
    trailing_seps : int
        Extra separators at the end of every line (empty columns after the last).
    unit_row : bool
        Units on the line under the header instead of in the header.
    blank_every, comment_every : int
        A blank line / a ``# ...`` comment line after every n-th breath (0: none).
    event_every : int
        An event row (time, event text in the load column, nothing else) after every n-th
        breath (0: none).
    note_every : int
        A note row (one cell of words, e.g. ``--- stage 2 ---``, in a column that moves along)
        after every n-th breath (0: none).
    dropout_every : int
        Every n-th breath has :data:`DROPOUT_TEXT` in its heart-rate cell (0: none).
    gas_unit : str
        ``"ml_min"`` (whole numbers) or ``"l_min"`` (3 decimals) for VO2 and VCO2.
    ve_btps_label : bool
        The VE header says BTPS.
    time : str
        ``"s"`` (seconds, 2 decimals), ``"hms"`` (``h:mm:ss``, whole seconds) or ``"mss"``
        (``m:ss.s``).
    per_kg : bool
        A VO2 per kg column (mL/kg/min, 1 decimal) beside the absolute one.
    order_seed : int or None
        All columns (time included) in an order shuffled by this seed.
    extra_columns : bool
        Columns the importer does not know (a sample number, a valve state, a mixing-chamber
        temperature).
    preamble : bool
        Two free-text lines above the header.
    units_given : bool
        False: no units anywhere (no unit row, none in the header); the reader has to judge
        L/min from mL/min by magnitude.
    """

    name: str
    sep: str = ","
    decimal: str = "."
    quote: bool = False
    bom: bool = False
    line_end: str = "\r\n"
    trailing_seps: int = 0
    unit_row: bool = False
    blank_every: int = 0
    comment_every: int = 0
    event_every: int = 0
    note_every: int = 0
    dropout_every: int = 0
    gas_unit: str = "ml_min"
    ve_btps_label: bool = False
    time: str = "s"
    per_kg: bool = False
    order_seed: int | None = None
    extra_columns: bool = False
    preamble: bool = False
    units_given: bool = True


_FIXED: tuple[LabLayout, ...] = (
    LabLayout("lab_quoted_bom_crlf", sep=",", quote=True, bom=True, trailing_seps=1, gas_unit="l_min"),
    LabLayout("lab_units_row_hms", sep=";", decimal=",", unit_row=True, gas_unit="l_min", ve_btps_label=True,
              time="hms", line_end="\n"),
    LabLayout("lab_comments_events_tab", sep="\t", blank_every=17, comment_every=29, event_every=23,
              dropout_every=31, time="mss"),
    LabLayout("lab_shuffled_extra_per_kg", sep=",", order_seed=3, extra_columns=True, per_kg=True, line_end="\n"),
    LabLayout("lab_pipe_trailing_preamble", sep="|", trailing_seps=2, unit_row=True, gas_unit="l_min",
              time="hms", preamble=True),
    LabLayout("lab_everything", sep=";", decimal=",", quote=True, bom=True, unit_row=True, blank_every=13,
              comment_every=37, event_every=19, note_every=43, dropout_every=11, gas_unit="l_min", ve_btps_label=True,
              time="hms", per_kg=True, order_seed=7, extra_columns=True, preamble=True),
)

#: Names of the fixed lab-variety layouts.
LAB_LAYOUTS: tuple[str, ...] = tuple(x.name for x in _FIXED)


def lab_layout(name: str) -> LabLayout:
    """The fixed layout called ``name`` (one of :data:`LAB_LAYOUTS`)."""
    require(name in LAB_LAYOUTS, "layout", f"one of {LAB_LAYOUTS}", name)
    return _FIXED[LAB_LAYOUTS.index(name)]


@dataclass(frozen=True)
class _Field:
    header: str
    unit: str
    cells: Callable[[Session], list[str]]


def _number_cells(values: np.ndarray, digits: int, scale: float = 1.0) -> list[str]:
    out = []
    for x in values.astype(float):
        out.append("" if not np.isfinite(x) else f"{x * scale:.{digits}f}")
    return out


def _time_text(t_s: float, style: str) -> str:
    if style == "s":
        return f"{t_s:.2f}"
    if style == "mss":
        m, s = divmod(round(t_s, 1), 60.0)
        return f"{int(m)}:{s:04.1f}"
    whole = round(t_s)
    h, rest = divmod(whole, 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}"


def _fields(session: Session, layout: LabLayout) -> list[_Field]:
    b = session.breaths
    liters = layout.gas_unit == "l_min"
    gas_digits, gas_scale, gas_unit = (3, 0.001, "L/min") if liters else (0, 1.0, "mL/min")

    def col(name: str, digits: int, scale: float = 1.0) -> Callable[[Session], list[str]]:
        return lambda s: _number_cells(s.breaths[name].to_numpy(dtype=float), digits, scale)

    time_unit = _TIME_UNITS[layout.time]
    fields = [
        _Field("Time", time_unit, lambda s: [_time_text(float(x), layout.time) for x in s.breaths[C.T_S]]),
        _Field("VO2", gas_unit, col(C.VO2_ML_MIN, gas_digits, gas_scale)),
        _Field("VCO2", gas_unit, col(C.VCO2_ML_MIN, gas_digits, gas_scale)),
        _Field("VE BTPS" if layout.ve_btps_label else "VE", "L/min", col(C.VE_L_MIN, 1)),
        _Field("HR", "1/min", col(C.HR_BPM, 0)),
    ]
    if C.WORK_W in b.columns:
        fields.append(_Field("Load", "W", col(C.WORK_W, 0)))
    if C.SPEED_KMH in b.columns:
        fields.append(_Field("Speed", "km/h", col(C.SPEED_KMH, 1)))
    if C.GRADE_PCT in b.columns:
        fields.append(_Field("Grade", "%", col(C.GRADE_PCT, 1)))
    for name, header, unit, digits in (
        (C.RF_BPM, "RF", "1/min", 1),
        (C.VT_L, "VT", "L", 3),
        (C.PETO2_MMHG, "PETO2", "mmHg", 1),
        (C.PETCO2_MMHG, "PETCO2", "mmHg", 1),
        (C.SPO2_PCT, "SpO2", "%", 0),
    ):
        if name in b.columns:
            fields.append(_Field(header, unit, col(name, digits)))
    if layout.per_kg:
        mass = float(session.meta.get("body_mass_kg", 70.0))
        fields.append(_Field("VO2/kg", "mL/kg/min", col(C.VO2_ML_MIN, 1, 1.0 / mass)))
    if layout.extra_columns:
        n = len(b)
        fields.append(_Field("Sample no", "", lambda s: [str(i + 1) for i in range(n)]))
        fields.append(_Field("Valve", "", lambda s: ["open" if i % 2 else "shut" for i in range(n)]))
        fields.append(_Field("Chamber temperature", "C", lambda s: ["31.5"] * n))
    if layout.order_seed is not None:
        order = np.random.default_rng(layout.order_seed).permutation(len(fields))
        fields = [fields[int(i)] for i in order]
    return fields


def lab_export_bytes(session: Session, *, layout: LabLayout | str) -> bytes:
    """The session as the bytes of a lab-variety export.

    Parameters
    ----------
    session : Session
        Simulated breaths in canonical columns; its metadata stays out of the file (only the
        body mass is used, for the per-kg column).
    layout : LabLayout or str, keyword-only
        A layout or a name from :data:`LAB_LAYOUTS`.

    Returns
    -------
    bytes
        The file content. No person's data is written (the user types nothing either): the
        import must state the gaps. Gas values are rounded as printed (1 mL/min or
        0.001 L/min), time to 0.01 s, 0.1 s or 1 s by the layout's time style.

    Examples
    --------
    >>> from analysis.simulation import simulate_case
    >>> from analysis.io import import_bytes
    >>> s = simulate_case("rehab", 0)
    >>> out = import_bytes(lab_export_bytes(s, layout="lab_everything"), file_name="export.csv")
    >>> len(out.session.breaths) == len(s.breaths)
    True
    """
    chosen = lab_layout(layout) if isinstance(layout, str) else layout
    require(chosen.time in _TIME_STYLES, "time", f"one of {_TIME_STYLES}", chosen.time)
    require(chosen.gas_unit in _GAS_UNITS, "gas_unit", f"one of {_GAS_UNITS}", chosen.gas_unit)
    sep, dec = chosen.sep, chosen.decimal
    fields = _fields(session, chosen)
    columns = [f.cells(session) for f in fields]
    hr_index = next((k for k, f in enumerate(fields) if f.header == "HR"), None)
    load_index = next((k for k, f in enumerate(fields) if f.header in ("Load", "Speed")), 0)

    def cell(text: str) -> str:
        if chosen.quote:
            return '"' + text.replace('"', '""') + '"'
        return text

    def line(cells: list[str]) -> str:
        return sep.join(cell(c) for c in cells) + sep * chosen.trailing_seps

    def number(text: str) -> str:
        return text.replace(".", dec) if dec != "." else text

    lines: list[str] = []
    if chosen.preamble:
        lines += ["Breath table exported for review", "Operator initials: none given"]
    if chosen.unit_row or not chosen.units_given:
        lines.append(line([f.header for f in fields]))
        if chosen.units_given:
            lines.append(line([f.unit for f in fields]))
    else:
        lines.append(line([f"{f.header} ({f.unit})" if f.unit else f.header for f in fields]))
    time_index = next(k for k, f in enumerate(fields) if f.header == "Time")
    for i in range(len(session.breaths)):
        row = [number(columns[k][i]) if fields[k].unit else columns[k][i] for k in range(len(fields))]
        if chosen.dropout_every and hr_index is not None and (i + 1) % chosen.dropout_every == 0:
            row[hr_index] = DROPOUT_TEXT
        lines.append(line(row))
        n = i + 1
        if chosen.event_every and n % chosen.event_every == 0:
            event = [""] * len(fields)
            event[time_index] = row[time_index]
            event[load_index] = EVENT_WORDS[(n // chosen.event_every) % len(EVENT_WORDS)]
            lines.append(line(event))
        if chosen.note_every and n % chosen.note_every == 0:
            note = [""] * len(fields)
            note[(n // chosen.note_every) % len(fields)] = f"--- stage {n // chosen.note_every} ---"
            lines.append(line(note))
        if chosen.blank_every and n % chosen.blank_every == 0:
            lines.append("")
        if chosen.comment_every and n % chosen.comment_every == 0:
            lines.append(f"# checked after breath {n}")
    text = chosen.line_end.join(lines) + chosen.line_end
    return text.encode("utf-8-sig" if chosen.bom else "utf-8")
