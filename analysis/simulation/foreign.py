"""Foreign exports: a simulated session written as another cart might export it.

The layouts are our own invention — generic spellings of the trade terms, other units (L/min,
mL, kPa, m/s), times as m:ss, h:mm:ss or minutes, semicolon or tab separators, decimal commas,
preambles of key/value lines, unit rows and footer lines — so that a suite can send half of
its tests through :func:`analysis.io.import_bytes` (what ``tidemark import`` uses) and back.
They imitate no product's file.

:func:`foreign_export_bytes` is a pure function (bytes out, nothing written);
:func:`foreign_meta_overrides` gives the metadata a user would type for the layouts whose
preamble the importer does not read (``tidemark import --set key=value``).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import require
from analysis.session import Session
from analysis.simulation.foreign_lab import LAB_LAYOUTS, lab_export_bytes

#: Metadata keys a user would carry over to an import (body data, MVV/FEV1, medication).
PERSON_KEYS: tuple[str, ...] = (
    "subject_id",
    "sex",
    "age_y",
    "height_cm",
    "body_mass_kg",
    "hb_g_dl",
    "mvv_l_min",
    "fev1_l",
    "beta_blocker",
    "test_date",
    "mode",
    "barometric_mmhg",
)
_KPA_PER_MMHG = 133.322387415 / 1000.0  # 1 mmHg = 133.322387415 Pa (SI definition)
_PHASE_WORDS = {"rest": "Rest", "warmup": "Warm-up", "exercise": "Exercise", "recovery": "Recovery"}


@dataclass(frozen=True)
class _Col:
    header: str
    source: str
    fmt: Callable[[float], str] | None = None
    scale: float = 1.0


@dataclass(frozen=True)
class _Layout:
    name: str
    sep: str
    decimal: str
    time: str  # "mm:ss", "mm:ss.ss", "h:mm:ss.s", "min", "s"
    preamble: str  # "kv_sep", "key_equals", "hash_meta", "none"
    unit_row: bool
    footer: bool
    phase: bool
    columns: tuple[_Col, ...]
    encoding: str = "utf-8"


def _f(digits: int) -> Callable[[float], str]:
    return lambda x: f"{x:.{digits}f}"


def _int(x: float) -> str:
    return f"{round(x):d}"


def _load_cols(mode: str, style: int) -> tuple[_Col, ...]:
    if mode == "cycle":
        return (_Col(("Load (W)", "Work rate [W]", "Power", "WR (W)")[style], C.WORK_W, _int),)
    speed = (
        _Col("Speed (km/h)", C.SPEED_KMH, _f(1)),
        _Col("Belt speed [m/s]", C.SPEED_KMH, _f(2), 1 / 3.6),
        _Col("Speed", C.SPEED_KMH, _f(1)),
        _Col("Velocity (km/h)", C.SPEED_KMH, _f(1)),
    )[style]
    grade = (
        _Col("Grade (%)", C.GRADE_PCT, _f(1)),
        _Col("Incline [%]", C.GRADE_PCT, _f(1)),
        _Col("Slope", C.GRADE_PCT, _f(1)),
        _Col("Gradient (%)", C.GRADE_PCT, _f(1)),
    )[style]
    return speed, grade


def _layouts(mode: str) -> tuple[_Layout, ...]:
    return (
        _Layout(
            "semicolon_decimal_comma", ";", ",", "mm:ss.ss", "kv_sep", True, False, True,
            (
                _Col("V'O2", C.VO2_ML_MIN, _f(3), 0.001),
                _Col("V'CO2", C.VCO2_ML_MIN, _f(3), 0.001),
                _Col("V'E", C.VE_L_MIN, _f(1)),
                _Col("HR", C.HR_BPM, _int),
                *_load_cols(mode, 0),
                _Col("BF", C.RF_BPM, _f(1)),
                _Col("VT", C.VT_L, _f(2)),
                _Col("PetO2", C.PETO2_MMHG, _f(1)),
                _Col("PetCO2", C.PETCO2_MMHG, _f(1)),
                _Col("SpO2", C.SPO2_PCT, _int),
                _Col("Phase", C.PHASE),
                _Col("Event", C.MARKER),
            ),
        ),
        _Layout(
            "tab_kpa_ml", "\t", ".", "s", "key_equals", False, True, True,
            (
                _Col("VO2 (mL/min)", C.VO2_ML_MIN, _int),
                _Col("VCO2 (mL/min)", C.VCO2_ML_MIN, _int),
                _Col("Minute ventilation (L/min)", C.VE_L_MIN, _f(2)),
                _Col("Heart rate (bpm)", C.HR_BPM, _int),
                *_load_cols(mode, 1),
                _Col("Respiratory rate (1/min)", C.RF_BPM, _f(1)),
                _Col("Tidal volume (mL)", C.VT_L, _int, 1000.0),
                _Col("End-tidal O2 (kPa)", C.PETO2_MMHG, _f(2), _KPA_PER_MMHG),
                _Col("End-tidal CO2 (kPa)", C.PETCO2_MMHG, _f(2), _KPA_PER_MMHG),
                _Col("O2 sat (%)", C.SPO2_PCT, _int),
                _Col("Test phase", C.PHASE),
                _Col("Remark", C.MARKER),
            ),
        ),
        _Layout(
            "comma_hms_meta", ",", ".", "h:mm:ss.s", "hash_meta", False, True, True,
            (
                _Col("Oxygen uptake (L/min)", C.VO2_ML_MIN, _f(3), 0.001),
                _Col("CO2 output (L/min)", C.VCO2_ML_MIN, _f(3), 0.001),
                _Col("Ventilation (L/min)", C.VE_L_MIN, _f(1)),
                _Col("Pulse", C.HR_BPM, _int),
                *_load_cols(mode, 2),
                _Col("Breathing frequency", C.RF_BPM, _f(1)),
                _Col("Tidal volume (L)", C.VT_L, _f(3)),
                _Col("PETO2 (mmHg)", C.PETO2_MMHG, _f(1)),
                _Col("PETCO2 (mmHg)", C.PETCO2_MMHG, _f(1)),
                _Col("Oxygen saturation", C.SPO2_PCT, _int),
                _Col("Period", C.PHASE),
                _Col("Comment", C.MARKER),
            ),
        ),
        _Layout(
            "semicolon_minutes_no_phase", ";", ",", "min", "none", False, False, False,
            (
                _Col("VO2 [L/min]", C.VO2_ML_MIN, _f(3), 0.001),
                _Col("VCO2 [L/min]", C.VCO2_ML_MIN, _f(3), 0.001),
                _Col("VE [L/min]", C.VE_L_MIN, _f(1)),
                _Col("HR [1/min]", C.HR_BPM, _int),
                *_load_cols(mode, 3),
                _Col("RR [1/min]", C.RF_BPM, _f(1)),
                _Col("Vt [L]", C.VT_L, _f(2)),
                _Col("EtO2 [mmHg]", C.PETO2_MMHG, _f(1)),
                _Col("EtCO2 [mmHg]", C.PETCO2_MMHG, _f(1)),
                _Col("SpO2 [%]", C.SPO2_PCT, _int),
            ),
            encoding="utf-8-sig",
        ),
    )


#: Names of the foreign layouts, in the order :func:`foreign_export_bytes` numbers them.
FOREIGN_LAYOUTS: tuple[str, ...] = tuple(layout.name for layout in _layouts("cycle"))
#: Every layout :func:`foreign_export_bytes` writes by name: the four above and the lab-variety
#: layouts of :mod:`analysis.simulation.foreign_lab` (no person data; nothing typed on import).
ALL_FOREIGN_LAYOUTS: tuple[str, ...] = FOREIGN_LAYOUTS + LAB_LAYOUTS


def _time_text(t_s: float, style: str) -> str:
    if style == "s":
        return f"{t_s:.2f}"
    if style == "min":
        return f"{t_s / 60.0:.4f}"
    if style == "mm:ss.ss":
        m, s = divmod(round(t_s, 2), 60.0)
        return f"{int(m)}:{s:05.2f}"
    h, rest = divmod(round(t_s, 1), 3600.0)
    m, s = divmod(rest, 60.0)
    return f"{int(h)}:{int(m):02d}:{s:04.1f}"


def _time_header(style: str) -> str:
    return {"s": "Elapsed time (s)", "min": "Time [min]", "mm:ss.ss": "Time", "h:mm:ss.s": "t (h:mm:ss)"}[style]


def _preamble(session: Session, layout: _Layout) -> list[str]:
    meta = session.meta
    code = str(meta.get("subject_id", "unknown"))
    if layout.preamble == "kv_sep":
        date = str(meta.get("test_date", ""))
        parts = date.split("-")
        shown = f"{parts[2]}.{parts[1]}.{parts[0]}" if len(parts) == 3 else date
        mass = str(meta.get("body_mass_kg", "")).replace(".", layout.decimal)
        return [
            "Breath-by-breath export",
            f"Patient code{layout.sep}{code}",
            f"Test date{layout.sep}{shown}",
            f"Body mass{layout.sep}{mass}{layout.sep}kg",
            "",
        ]
    if layout.preamble == "key_equals":
        return [
            "[Subject]",
            f"Identifier = {code}",
            f"Sex = {meta.get('sex', '')}",
            f"Age = {meta.get('age_y', '')}",
            "[Breath data]",
        ]
    if layout.preamble == "hash_meta":
        lines = ["# exported breath table"]
        for key in PERSON_KEYS:
            if key in meta:
                lines.append(f"# {key}: {meta[key]}")
        return lines
    return []


def foreign_export_bytes(session: Session, *, layout: int | str) -> bytes:
    """The session as the bytes of an invented cart export.

    Parameters
    ----------
    session : Session
        A simulated session (canonical columns).
    layout : int or str, keyword-only
        A name from :data:`ALL_FOREIGN_LAYOUTS`, or a position in :data:`FOREIGN_LAYOUTS`
        (taken modulo their number, so a seed can choose one).

    Returns
    -------
    bytes
        The file content. Times keep 0.01-0.1 s (or 0.0001 min); gas values are rounded as a
        cart prints them (1 mL/min); HR, SpO2 and work rate are whole numbers.

    Examples
    --------
    >>> from analysis.simulation import simulate_case
    >>> from analysis.io import import_bytes
    >>> s = simulate_case("rehab", 0)
    >>> data = foreign_export_bytes(s, layout="semicolon_decimal_comma")
    >>> out = import_bytes(data, file_name="export.csv")
    >>> len(out.session.breaths) == len(s.breaths), out.delimiter, out.decimal
    (True, ';', ',')
    """
    if isinstance(layout, str) and layout in LAB_LAYOUTS:
        return lab_export_bytes(session, layout=layout)
    mode = str(session.meta.get("mode", "cycle"))
    layouts = _layouts(mode)
    if isinstance(layout, str):
        names = [x.name for x in layouts]
        require(layout in names, "layout", f"one of {tuple(names)}", layout)
        chosen = layouts[names.index(layout)]
    else:
        require(isinstance(layout, (int, np.integer)) and not isinstance(layout, bool), "layout", "a name or a whole number", layout)
        chosen = layouts[int(layout) % len(layouts)]
    b = session.breaths
    cols = [c for c in chosen.columns if c.source in b.columns]
    sep, dec = chosen.sep, chosen.decimal

    def cell(col: _Col, value: object) -> str:
        if col.fmt is None:
            if col.source == C.PHASE:
                return _PHASE_WORDS.get(str(value), str(value))
            text = "" if value is None or (isinstance(value, float) and np.isnan(value)) else str(value)
            return text.replace(sep, " ")
        x = float(value)  # type: ignore[arg-type]
        if not np.isfinite(x):
            return ""
        text = col.fmt(x * col.scale)
        return text.replace(".", dec) if dec != "." else text

    lines = _preamble(session, chosen)
    lines.append(sep.join([_time_header(chosen.time)] + [c.header for c in cols]))
    if chosen.unit_row:
        units = {C.VO2_ML_MIN: "L/min", C.VCO2_ML_MIN: "L/min", C.VE_L_MIN: "L/min", C.HR_BPM: "1/min",
                 C.WORK_W: "W", C.SPEED_KMH: "km/h", C.GRADE_PCT: "%", C.RF_BPM: "1/min", C.VT_L: "L",
                 C.PETO2_MMHG: "mmHg", C.PETCO2_MMHG: "mmHg", C.SPO2_PCT: "%"}
        lines.append(sep.join(["mm:ss"] + [units.get(c.source, "") for c in cols]))
    t = b[C.T_S].to_numpy(dtype=float)
    columns = {c.source: b[c.source].to_numpy() for c in cols}
    for i in range(len(b)):
        time_text = _time_text(float(t[i]), chosen.time)
        if dec != "." and chosen.time in ("s", "min", "mm:ss.ss", "h:mm:ss.s"):
            time_text = time_text.replace(".", dec)
        lines.append(sep.join([time_text] + [cell(c, columns[c.source][i]) for c in cols]))
    if chosen.footer and len(b):
        numeric = [c for c in cols if c.fmt is not None]
        for label, fn in (("Mean", np.nanmean), ("Max", np.nanmax)):
            values = {c.source: cell(c, float(fn(pd.to_numeric(b[c.source], errors="coerce")))) for c in numeric}
            lines.append(sep.join([label] + [values.get(c.source, "") for c in cols]))
    text = "\r\n".join(lines) + "\r\n"
    return text.encode(chosen.encoding)


def foreign_meta_overrides(session: Session, *, layout: int | str) -> dict[str, str]:
    """Metadata a user would set when importing this layout (``--set key=value``): the
    person's data for layouts whose preamble the importer does not read, nothing for the
    layout that carries ``# key: value`` lines, nothing for the lab-variety layouts (the user
    who types nothing)."""
    name = layout if isinstance(layout, str) else FOREIGN_LAYOUTS[int(layout) % len(FOREIGN_LAYOUTS)]
    if name == "comma_hms_meta" or name in LAB_LAYOUTS:
        return {}
    return {key: str(session.meta[key]) for key in PERSON_KEYS if key in session.meta}
