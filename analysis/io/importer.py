"""Generic import of a cart export (CSV/TSV/semicolon text or .xlsx) into a :class:`Session`.

See ``docs/import.md`` for what is accepted, what is rejected and what is flagged.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import partial
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.errors import ImportRejected, Problem, name_list, require, shorten
from analysis.io._cells import TIME_FORMATS, detect_decimal, parse_numbers, parse_times, text_values
from analysis.io._conditions import VE_CONDITIONS, apply_conditions, preamble_statements
from analysis.io._decode import DEFAULT_MAX_BYTES, check_size, container_kind, decode_text, split_lines
from analysis.io._gc import gc_paused
from analysis.io._limits import check_line_count
from analysis.io._table import LocatedTable, Row, choose_delimiter, classify, locate_table, split_rows
from analysis.io._units import CANONICAL_UNIT, UNIT_LABELS, factor
from analysis.io._validate import ProblemLog, checked_meta, finish_session, report_cells, unknown_phase_labels
from analysis.io._xlsx import list_sheets, sheet_rows
from analysis.io.mapping import _LOOKUP as _HEADER_KEYS
from analysis.io.mapping import IGNORE, ColumnMapping, guess_mapping, is_per_kg, split_header
from analysis.io.preamble import PreambleItem, read_preamble_item
from analysis.io.session_file import parse_meta_line
from analysis.session import Session

GAS_UNITS: tuple[str, ...] = ("auto", "ml_min", "l_min")

#: With the gas unit on "auto", VO2/VCO2 columns whose median is below this are read as L/min.
#: No human breathes below about 100 mL/min O2 or above 10 L/min, so the two ranges cannot be
#: confused (common practice).
GAS_L_MIN_MEDIAN_BELOW = 15.0

_GAS = (C.VO2_ML_MIN, C.VCO2_ML_MIN, C.VE_L_MIN)

#: The person's data an analysis needs beyond the breaths, as ``(metadata key, label)``: when
#: none of the file, its preamble or the user gives one, the import says so (a gap, not a refusal).
PERSON_GAPS: tuple[tuple[str, str], ...] = (
    ("body_mass_kg", "body mass"),
    ("age_y", "age"),
    ("sex", "sex"),
    ("height_cm", "height"),
)


@dataclass(frozen=True)
class ImportOutcome:
    """Result of a successful import.

    Attributes
    ----------
    session : Session
        Breaths in canonical columns (``source_row`` = line or sheet row in the original),
        metadata, and flags (``session.flags``: ``source_row``, ``column``, ``reason``).
    mapping : ColumnMapping
        The mapping actually used (save it as a profile to reuse it).
    gas_unit_detected : str
        Unit the VO2/VCO2 values were in: ``'ml_min'``, ``'l_min'`` or ``'mixed'``.
    time_format_detected : str
        ``'s'``, ``'min'``, ``'ms'``, ``'mm:ss'`` or ``'h:mm:ss'``.
    delimiter : str
        Cell delimiter of a text file (``','``, ``';'``, ``'\\t'``, ``'|'``, ``' '``), ``''`` for .xlsx.
    decimal : str
        Decimal mark of the numbers (``'.'`` or ``','``).
    skipped_lines : list of int
        Lines (or sheet rows) that are not part of the table: text above the header, blank or
        comment lines, event rows without gas values, summary/footer lines after the table.
    notes : list of str
        Everything the user should know about how the file was read.
    preamble : tuple of PreambleItem
        Labelled lines above the table read into the metadata (``Test date:;10.02.2026``), for
        the preview the reviewer confirms (:mod:`analysis.io.preamble`).
    """

    session: Session
    mapping: ColumnMapping
    gas_unit_detected: str
    time_format_detected: str
    delimiter: str
    decimal: str
    skipped_lines: list[int] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    sheet: str | None = None
    encoding: str = "utf-8"
    preamble: tuple[PreambleItem, ...] = ()


def _cell_on_line(cells_by_line: Mapping[int, Sequence[object]], line_numbers: np.ndarray, k: int, i: int) -> object:
    """The original cell in column ``k`` of body row ``i`` (quoted in error messages)."""
    return cells_by_line[int(line_numbers[i])][k]


def _has_letters(cells: Sequence[object]) -> np.ndarray:
    """True where a cell holds a letter (words, not a mistyped number)."""
    return np.array([c is not None and any(ch.isalpha() for ch in str(c)) for c in cells], dtype=bool)


def _event_words(
    body: Sequence[Row], index: Mapping[str, int], words: Mapping[str, np.ndarray], event: np.ndarray
) -> dict[int, str]:
    """Text written in numeric cells of event rows, by body row (``"ramp on"``)."""
    out: dict[int, str] = {}
    for i in np.flatnonzero(event):
        cells = body[int(i)][1]
        found = list(dict.fromkeys(str(cells[index[n]]).strip() for n in words if words[n][i]))
        if found:
            out[int(i)] = "; ".join(found)
    return out


#: A VO2-per-kg column implies a body mass only when VO2 / (VO2 per kg) agrees along the test:
#: 10th to 90th percentile within this fraction of the median (printed per-kg values carry
#: 0.1 mL/kg/min, about 3 % at rest; our own choice).
PER_KG_AGREEMENT = 0.05


def _mass_from_per_kg_column(
    headers: Sequence[str], rows: Sequence[Sequence[object]], vo2_ml_min: np.ndarray, *, decimal: str, used: set[str]
) -> tuple[str, float] | None:
    """``(header, body mass in kg)`` from an unused VO2-per-kg column (mL/kg/min), or None."""
    for k, header in enumerate(headers):
        if header in used or not is_per_kg(header) or not split_header(header)[0].startswith("vo2"):
            continue
        per_kg, _, _ = parse_numbers([r[k] if k < len(r) else None for r in rows], decimal=decimal)
        ok = np.isfinite(per_kg) & np.isfinite(vo2_ml_min) & (per_kg > 0)
        if np.count_nonzero(ok) < 10:
            continue
        ratio = vo2_ml_min[ok] / per_kg[ok]
        mid = float(np.median(ratio))
        p10, p90 = np.percentile(ratio, [10, 90])
        if 20.0 <= mid <= 300.0 and (p90 - p10) <= PER_KG_AGREEMENT * mid:
            return header, mid
    return None


def _ranges(lines: Sequence[int]) -> str:
    """``[1, 2, 3, 7]`` -> ``'1-3, 7'``."""
    out: list[str] = []
    items = sorted(set(lines))
    i = 0
    while i < len(items):
        j = i
        while j + 1 < len(items) and items[j + 1] == items[j] + 1:
            j += 1
        out.append(str(items[i]) if i == j else f"{items[i]}-{items[j]}")
        i = j + 1
    return ", ".join(out)


def _lines(numbers: Sequence[int]) -> str:
    """``'line 4'`` or ``'lines 1-3, 7'``."""
    return ("line " if len(set(numbers)) == 1 else "lines ") + _ranges(numbers)


def _resolve_mapping(
    headers: list[str], unit_row: list[str | None] | None, explicit: ColumnMapping | None
) -> tuple[ColumnMapping, list[str]]:
    notes: list[str] = []
    guessed = guess_mapping(headers, unit_row=unit_row)
    if explicit is None:
        return guessed, notes
    present = {h: n for h, n in explicit.columns.items() if h in headers}
    absent = [h for h, n in explicit.columns.items() if h not in headers and n != IGNORE]
    if absent:
        notes.append("mapping entries for headers not in this file were not used: " + name_list(absent, quote=True))
    chosen = ColumnMapping(present, dict(explicit.units), explicit.guess_rest)
    if not explicit.guess_rest:
        return chosen, notes
    return guessed.overridden_by(chosen), notes


def _check_mapping(
    mapping: ColumnMapping, headers: list[str], problems: ProblemLog, file_name: str, *,
    sheet: str | None = None, other_sheets: Sequence[str] = (),
) -> None:
    mapped = mapping.mapped()
    for name in (C.VO2_ML_MIN, C.VCO2_ML_MIN):
        header = mapped.get(name)
        if header is not None and is_per_kg(header):
            problems.add(
                f"column '{header}' holds {C.COLUMNS[name].label} per kilogram of body mass",
                f"Tidemark needs absolute {C.COLUMNS[name].label} (mL/min or L/min); map that column instead",
                column=header,
            )
    missing = [n for n in C.REQUIRED if n not in mapped]
    if missing:
        labels = ", ".join(f"{C.COLUMNS[n].label} ({n})" for n in missing)
        fix = "name the column(s) explicitly, e.g. --map \"Oxygen=vo2_ml_min\" (or choose them in the import page)"
        if other_sheets:
            fix = (
                f"sheet '{shorten(sheet)}' was read; if the breath table is on another sheet "
                f"({name_list(other_sheets, quote=True)}), choose it with --sheet; otherwise {fix}"
            )
        problems.add(
            f"required column(s) not found: {labels}; the columns are: {name_list(headers, quote=True)}",
            fix,
        )


def _meta_from_preamble(
    preamble: list[Row], lines: list[str] | None, items: list[PreambleItem] | None = None
) -> list[tuple[str, str, int | None]]:
    """Metadata entries from ``# key: value`` lines and labelled lines (``Body mass (kg);58``)
    above the table; the labelled ones are also collected in ``items`` for the reviewer's preview."""
    entries: list[tuple[str, str, int | None]] = []
    for number, cells in preamble:
        if lines is not None:
            text = lines[number - 1]
        else:
            firsts = [c for c in cells if isinstance(c, str) and c.strip()]
            text = firsts[0] if firsts else ""
        parsed = parse_meta_line(text)
        if parsed:
            entries.append((parsed[0], parsed[1], number))
            continue
        item = read_preamble_item(number, list(cells))
        if item is not None:
            entries.append((item.key, item.value, number))
            if items is not None:
                items.append(item)
    return entries


def _preamble_texts(preamble: list[Row], lines: list[str] | None) -> list[tuple[int, str]]:
    """``(line, text)`` of the lines above the table that are not ``# key: value`` metadata."""
    out: list[tuple[int, str]] = []
    for number, cells in preamble:
        text = lines[number - 1] if lines is not None else ";".join(str(c) for c in cells if c is not None)
        if not parse_meta_line(text):
            out.append((number, text))
    return out


def _gas_unit(
    name: str,
    raw: np.ndarray,
    *,
    gas_unit: str,
    mapping: ColumnMapping,
    header: str,
) -> tuple[str, str, bool]:
    """Unit code, how it was decided, and whether it belongs in the mapping."""
    if gas_unit != "auto":
        return gas_unit, "as set for the import", True
    if name in mapping.units:
        hinted = split_header(header)[1] == mapping.units[name]
        return mapping.units[name], ("from the header" if hinted else "from the mapping"), True
    positive = raw[np.isfinite(raw) & (raw > 0)]
    if positive.size == 0:
        return "ml_min", "no values to judge by; mL/min assumed", False
    median = float(np.median(positive))
    code = "l_min" if median < GAS_L_MIN_MEDIAN_BELOW else "ml_min"
    return code, f"by magnitude (median {median:.4g})", False


def _locate_xlsx(
    data: bytes, sheet: str | int | None, file_name: str, notes: list[str]
) -> tuple[str, list[Row], LocatedTable]:
    if sheet is not None:
        name, rows = sheet_rows(data, sheet, file_name=file_name)
        return name, rows, locate_table(rows, file_name=file_name)
    names = list_sheets(data, file_name=file_name)
    first_error: ImportRejected | None = None
    # The sheet that looks most like breath data: most required columns recognised by their
    # headers, then most rows (a summary or notes sheet loses to the breath table).
    best: tuple[tuple[int, int], str, list[Row], LocatedTable] | None = None
    for name in names:
        _, rows = sheet_rows(data, name, file_name=file_name)
        try:
            located = locate_table(rows, file_name=file_name)
        except ImportRejected as exc:
            first_error = first_error or exc
            continue
        recognised = guess_mapping(located.headers, unit_row=located.unit_row).mapped()
        score = (sum(1 for n in C.REQUIRED if n in recognised), len(located.body))
        if best is None or score > best[0]:
            best = (score, name, rows, located)
    if best is not None:
        _, name, rows, located = best
        if len(names) > 1:
            notes.append(f"sheet '{shorten(name)}' was read (the workbook has: {name_list(names)}); choose another with --sheet")
        return name, rows, located
    if len(names) > 1 or first_error is None:
        raise ImportRejected(
            Problem(
                f"none of the sheets ({name_list(names)}) holds a table with a header row",
                "check the workbook holds the breath-by-breath data",
                file_name,
            )
        )
    raise first_error


@dataclass(frozen=True)
class _Found:
    located: LocatedTable
    lines: list[str] | None
    delimiter: str
    sheet: str | None
    encoding: str


def _find_table(data: bytes, *, file_name: str, sheet: str | int | None, notes: list[str]) -> _Found:
    kind = container_kind(data)
    if kind == "xls":
        raise ImportRejected(
            Problem(
                "this is an old-style Excel .xls workbook, which Tidemark does not read",
                "save it as .xlsx or as CSV and import that file",
                file_name,
            )
        )
    if kind == "xlsx":
        sheet_used, _, located = _locate_xlsx(data, sheet, file_name, notes)
        return _Found(located, None, "", sheet_used, "xlsx")
    decoded = decode_text(data, file_name=file_name)
    notes.extend(decoded.notes)
    check_line_count(decoded.text, file_name=file_name)
    lines = split_lines(decoded.text)
    if not any(line.strip() for line in lines):
        raise ImportRejected(Problem("the file holds only blank lines", "export the test again", file_name))
    delimiter = choose_delimiter(lines, file_name=file_name)
    rows = split_rows(lines, delimiter=delimiter, file_name=file_name)
    return _Found(locate_table(rows, file_name=file_name), lines, delimiter, None, decoded.encoding)


def read_headers(
    data: bytes, *, file_name: str, sheet: str | int | None = None, max_bytes: int = DEFAULT_MAX_BYTES
) -> list[str]:
    """The column headers of the table in a cart export, exactly as the importer sees them.

    For a mapping editor: empty headers read ``"(column N)"``, repeated ones get ``" #2"``.

    Raises
    ------
    ImportRejected
        No table with a header row was found (the message says why).
    """
    check_size(len(data), max_bytes=max_bytes, file_name=file_name)
    return list(_find_table(bytes(data), file_name=file_name, sheet=sheet, notes=[]).located.headers)


@gc_paused
def import_bytes(
    data: bytes,
    *,
    file_name: str,
    mapping: ColumnMapping | None = None,
    sheet: str | int | None = None,
    gas_unit: str = "auto",
    time_format: str = "auto",
    meta_overrides: Mapping[str, Any] | None = None,
    max_bytes: int = DEFAULT_MAX_BYTES,
    ve_condition: str = "auto",
    barometric_mmhg: float | None = None,
    ambient_c: float | None = None,
) -> ImportOutcome:
    """Import one breath-by-breath cart export.

    Parameters
    ----------
    data : bytes
        File content: CSV, tab- or semicolon-separated text (UTF-8, UTF-16 with byte-order
        mark, or Windows-1252), or an .xlsx workbook.
    file_name : str
        Original file name, used in every message.
    mapping : ColumnMapping, optional
        Explicit column choices; they take precedence over the guess (see
        :class:`ColumnMapping`, ``guess_rest``).
    sheet : str or int, optional
        Worksheet of an .xlsx file (name or 0-based index). Default: the first sheet holding
        a table.
    gas_unit : {'auto', 'ml_min', 'l_min'}
        Unit of the VO2 and VCO2 columns. ``'auto'`` uses the header ("L/min"), the mapping,
        then magnitude (median below 15 -> L/min). 1 L/min = 1000 mL/min (SI).
    time_format : {'auto', 's', 'min', 'ms', 'mm:ss', 'h:mm:ss'}
        How the time column is written. ``'auto'``: colons give m:ss / h:mm:ss, plain numbers
        are seconds unless the header says min or ms.
    meta_overrides : mapping, optional
        Metadata set by the user; wins over ``# key: value`` lines in the file.
    max_bytes : int
        Files larger than this are rejected (default :data:`DEFAULT_MAX_BYTES`).
    ve_condition : {'auto', 'btps', 'stpd', 'atps'}
        Condition the ventilation columns (VE, tidal volume) were measured in. ``'auto'``: as
        stated in the header, a ``# ve_condition:`` line or a line above the table, else BTPS.
        VO2/VCO2 follow their header or the lines above the table, else STPD. Values stated in
        another condition are converted to BTPS (ventilation) and STPD (VO2/VCO2) with
        :func:`analysis.gas_conditions.volume_factor` (ATS/ACCP 2003).
    barometric_mmhg : float, optional
        Barometric pressure during the test (mmHg), for that conversion; default: the file's
        ``barometric_mmhg`` metadata.
    ambient_c : float, optional
        Room temperature during the test (°C), for a conversion from ATPS; default: the file's
        ``ambient_c`` metadata.

    Returns
    -------
    ImportOutcome

    Raises
    ------
    ImportRejected
        The file cannot be imported; every problem names the file, the line and column where
        known, and what would fix it (at most 10 listed). Nothing is written anywhere.
    InvalidParameter
        An argument outside the accepted values.

    Examples
    --------
    >>> export = b"Time;VO2 (L/min);VCO2 (L/min);VE\\n0:00;0,30;0,25;10\\n0:03;0,32;0,27;11\\n"
    >>> out = import_bytes(export, file_name="ramp.csv")
    >>> out.session.breaths["vo2_ml_min"].tolist(), out.gas_unit_detected, out.time_format_detected
    ([300.0, 320.0], 'l_min', 'mm:ss')
    >>> out.delimiter, out.decimal, out.session.flags.empty
    (';', ',', True)
    """
    require(isinstance(data, (bytes, bytearray)), "data", "bytes", type(data).__name__)
    require(gas_unit in GAS_UNITS, "gas_unit", f"one of {GAS_UNITS}", gas_unit)
    require(time_format in TIME_FORMATS, "time_format", f"one of {TIME_FORMATS}", time_format)
    require(isinstance(max_bytes, int) and max_bytes > 0, "max_bytes", "a positive whole number", max_bytes)
    require(ve_condition in VE_CONDITIONS, "ve_condition", f"one of {', '.join(VE_CONDITIONS)}", ve_condition)
    for option, value, low, high, unit in (("barometric_mmhg", barometric_mmhg, 400.0, 820.0, "mmHg"),
                                           ("ambient_c", ambient_c, 0.0, 45.0, "°C")):
        require(value is None or (isinstance(value, (int, float)) and not isinstance(value, bool)
                                  and math.isfinite(value) and low <= value <= high),
                option, f"a number from {low:g} to {high:g} {unit}, or nothing", value)
    data = bytes(data)
    file_name = file_name or "uploaded file"
    check_size(len(data), max_bytes=max_bytes, file_name=file_name)
    notes: list[str] = []
    found = _find_table(data, file_name=file_name, sheet=sheet, notes=notes)
    located, lines, delimiter = found.located, found.lines, found.delimiter

    problems = ProblemLog(file_name)
    headers = located.headers
    used, mapping_notes = _resolve_mapping(headers, located.unit_row, mapping)
    notes.extend(mapping_notes)
    incomplete = any(n not in used.mapped() for n in C.REQUIRED)
    others = [n for n in list_sheets(data, file_name=file_name) if n != found.sheet] if found.sheet and incomplete else []
    _check_mapping(used, headers, problems, file_name, sheet=found.sheet, other_sheets=others)
    problems.raise_if_any()
    mapped = used.mapped()
    index = {name: headers.index(header) for name, header in mapped.items()}

    body = located.body
    decimal = detect_decimal([cell for _, cells in body for cell in cells]) if body else "."
    line_numbers = np.array([n for n, _ in body], dtype=np.int64)

    def column(name: str) -> list[object]:
        k = index[name]
        return [cells[k] for _, cells in body]

    # Time first: trailing rows whose time is text are a footer (summary lines), not breaths.
    t_unit = used.units.get(C.T_S)
    t_format = time_format if time_format != "auto" else (t_unit if t_unit in ("mm:ss", "h:mm:ss") else "auto")
    t_vals, t_missing, t_bad, t_detected = parse_times(
        column(C.T_S), decimal=decimal, time_format=t_format, unit=t_unit
    )
    footer: list[int] = []
    end = len(body)
    t_index = index[C.T_S]
    while end > 0 and t_bad[end - 1] and any(ch.isalpha() for ch in str(body[end - 1][1][t_index])):
        end -= 1
    if 0 < end < len(body):
        footer = [int(n) for n in line_numbers[end:]]
        body = body[:end]
        line_numbers = line_numbers[:end]
        t_vals, t_missing, t_bad = t_vals[:end], t_missing[:end], t_bad[:end]

    first_t = t_vals[np.isfinite(t_vals)][:1]
    if first_t.size and first_t[0] >= 3600:
        notes.append(
            f"time starts at {first_t[0]:.0f} s (over an hour): if the export holds clock time, "
            "times stay on that clock (seconds since midnight)"
        )

    # Data-looking rows after the table would be lost breaths: refuse rather than drop them.
    tail = [(n, cells) for n, cells in located.after if classify(cells) == "data"]
    if tail:
        t_idx = index[C.T_S]
        v_idx = index[C.VO2_ML_MIN]
        tail_t = parse_times([c[t_idx] if t_idx < len(c) else None for _, c in tail], decimal=decimal, time_format=t_format, unit=t_unit)
        tail_v = parse_numbers([c[v_idx] if v_idx < len(c) else None for _, c in tail], decimal=decimal)
        lost = [n for (n, _), ok_t, ok_v in zip(tail, np.isfinite(tail_t[0]), np.isfinite(tail_v[0]), strict=True) if ok_t and ok_v]
        if lost:
            stop = located.after[0][0]
            problems.add(
                f"the table stops at line {stop}, but line(s) {_ranges(lost[:20])} after it look like more breaths",
                f"fix or remove line {stop} (a second header, or a row with text where numbers belong) and import again",
                row=stop,
            )
            problems.raise_if_any()

    values: dict[str, np.ndarray | list[str | None]] = {C.T_S: t_vals}
    missing: dict[str, np.ndarray] = {C.T_S: t_missing}
    bad: dict[str, np.ndarray] = {C.T_S: t_bad}
    for name in mapped:
        if name == C.T_S:
            continue
        cells = [c[index[name]] for _, c in body]
        if name in C.NUMERIC:
            values[name], missing[name], bad[name] = parse_numbers(cells, decimal=decimal)
        else:
            values[name] = text_values(cells)

    # Event rows: a time (or nothing) but none of VO2, VCO2, VE -> not a breath. Words in a
    # numeric cell of such a row ("ramp on" in the load column) are event text, not a broken
    # number. Skip them and carry their text to the next breath as a marker.
    words = {n: bad[n] & _has_letters(column(n)) for n in bad if n != C.T_S}
    gas_missing = np.logical_and.reduce([missing[n] | words[n] for n in _GAS])
    other_bad = np.logical_or.reduce([bad[n] & ~words.get(n, False) for n in bad])
    event = gas_missing & ~other_bad
    event_lines = [int(n) for n in line_numbers[event]]
    for n in words:
        bad[n] = bad[n] & ~event
    if event.any():
        keep = ~event
        event_words = _event_words(body, index, words, event)
        if event_words and C.MARKER not in values:
            values[C.MARKER] = [None] * len(body)
        if C.MARKER in values:
            markers: list[str | None] = [
                "; ".join(str(x) for x in (m, event_words.get(i)) if x) or None if event[i] else m
                for i, m in enumerate(values[C.MARKER])
            ]
            carried: list[str] = []
            moved = 0
            for i in range(len(markers)):
                here = markers[i]
                if event[i]:
                    if here:
                        carried.append(here)
                    continue
                if carried:
                    markers[i] = "; ".join(carried + ([here] if here else []))
                    carried = []
                    moved += 1
            last = int(np.flatnonzero(keep)[-1]) if keep.any() else None
            if carried and last is not None:  # events after the last breath go to the last breath
                end_text = markers[last]
                markers[last] = "; ".join(([end_text] if end_text else []) + carried)
                moved += 1
            values[C.MARKER] = markers
            if moved:
                notes.append(f"{moved} marker(s) from rows without gas values were moved to the next breath")
        for name in list(values):
            if isinstance(values[name], list):
                values[name] = [v for v, k in zip(values[name], keep, strict=True) if k]
            else:
                values[name] = np.asarray(values[name])[keep]
        for table in (missing, bad):
            for name in table:
                table[name] = table[name][keep]
        line_numbers = line_numbers[keep]
        notes.append(
            f"{len(event_lines)} row(s) without VO2, VCO2 and VE were skipped as event rows ({_lines(event_lines)})"
        )

    if located.interior_notes and len(line_numbers):
        # note rows inside the table ("Recovery start"): their words go to the next breath
        if C.MARKER not in values:
            values[C.MARKER] = [None] * len(line_numbers)
        with_notes: list[str | None] = list(values[C.MARKER])
        for line, text in located.interior_notes:
            i = min(int(np.searchsorted(line_numbers, line)), len(with_notes) - 1)
            with_notes[i] = "; ".join(x for x in (text, with_notes[i]) if x)
        values[C.MARKER] = with_notes
        note_lines = [line for line, _ in located.interior_notes]
        notes.append(
            f"{len(note_lines)} note row(s) inside the table were skipped ({_lines(note_lines)}); "
            "their words were kept as the marker of the next breath"
        )
    t_kept = np.asarray(values[C.T_S], dtype=float)
    same_time = int(np.count_nonzero(np.diff(t_kept[np.isfinite(t_kept)]) == 0))
    if same_time:
        notes.append(
            f"{same_time} breath(s) have the same time as the breath before (times written to the "
            "whole second?): kept in the order of the file"
        )
    cells_by_line = dict(located.body)
    for name in mapped:
        if name in bad:
            k = index[name]
            report_cells(
                problems,
                name=name,
                header=mapped[name],
                bad=bad[name],
                missing=missing[name],
                line_numbers=line_numbers,
                cell_at=partial(_cell_on_line, cells_by_line, line_numbers, k),
            )
    problems.raise_if_any()

    # Units.
    unit_notes: dict[str, str] = {}
    kept_units: dict[str, str] = {}
    gas_codes: dict[str, str] = {}
    for name in mapped:
        if name not in C.NUMERIC or name == C.T_S:
            continue
        arr = np.asarray(values[name], dtype=float)
        if name in (C.VO2_ML_MIN, C.VCO2_ML_MIN):
            code, how, keep_code = _gas_unit(name, arr, gas_unit=gas_unit, mapping=used, header=mapped[name])
            gas_codes[name] = code
            notes.append(f"{C.COLUMNS[name].label} read in {UNIT_LABELS[code]}: {how}")
            if keep_code:
                kept_units[name] = code
        else:
            code = used.units.get(name, CANONICAL_UNIT[name])
            if name in used.units:
                kept_units[name] = code
        f = factor(name, code)
        if f != 1.0:
            values[name] = arr * f
            unit_notes[name] = f"values were read as {UNIT_LABELS[code]} and converted to {C.COLUMNS[name].unit}"
            if name not in gas_codes:
                notes.append(f"{C.COLUMNS[name].label} converted from {UNIT_LABELS[code]} to {C.COLUMNS[name].unit}")
        else:
            values[name] = arr
    if t_unit:
        kept_units[C.T_S] = t_unit
    if time_format != "auto":
        kept_units[C.T_S] = time_format

    preamble_items: list[PreambleItem] = []
    meta = checked_meta(_meta_from_preamble(located.preamble, lines, preamble_items), problems, overrides=meta_overrides)
    absent = [label for key, label in PERSON_GAPS if key not in meta]
    if absent:
        notes.append(
            f"not in the file and not set: {', '.join(absent)} — values per kg and predicted values stay "
            "empty until you add them (e.g. --set body_mass_kg=72.5, or the fields of the upload form)"
        )
    if "body_mass_kg" not in meta and C.VO2_ML_MIN in values:
        hint = _mass_from_per_kg_column(
            headers, [cells_by_line[int(n)] for n in line_numbers], np.asarray(values[C.VO2_ML_MIN], dtype=float),
            decimal=decimal, used=set(mapped.values()),
        )
        if hint is not None:
            header, mass_kg = hint
            notes.append(
                f"VO2 divided by the column {shorten(header)!r} gives a body mass of {mass_kg:.1f} kg: "
                f"if that is the person's, set it (--set body_mass_kg={mass_kg:.1f}); it was not set for you"
            )
    apply_conditions(
        values, mapped, meta,
        statements=preamble_statements(_preamble_texts(located.preamble, lines)),
        ve_condition=ve_condition, barometric_mmhg=barometric_mmhg, ambient_c=ambient_c,
        known_keys=tuple(_HEADER_KEYS), problems=problems, notes=notes,
    )
    problems.raise_if_any()

    frame = pd.DataFrame({"source_row": line_numbers})
    for name, vals in values.items():
        frame[name] = pd.Series(vals, dtype=object if name in (C.PHASE, C.MARKER) else float)
    for name in (C.VO2_ML_MIN, C.VCO2_ML_MIN):
        if name in gas_codes and gas_codes[name] != "ml_min":
            unit_notes[name] = f"values were read as {UNIT_LABELS[gas_codes[name]]} — set the gas unit if that is wrong"
        elif name in gas_codes:
            unit_notes[name] = "values were read as mL/min — set the gas unit to L/min if that is wrong"

    if C.PHASE in values:
        strange = unknown_phase_labels(values[C.PHASE])
        if strange:
            notes.append(
                f"phase label(s) {name_list(strange, quote=True)} name no phase Tidemark knows (rest, warm-up, "
                "exercise, recovery); those rows were left without a phase and the phases found from the data"
            )
    session = finish_session(
        frame, meta=meta, file_name=file_name, problems=problems, headers=mapped, unit_notes=unit_notes
    )
    for name in mapped:
        if name not in session.breaths.columns:
            notes.append(f"column '{mapped[name]}' ({name}) holds no values and was left out")
    unused = [
        h
        for k, h in enumerate(headers)
        if h not in used.columns and any(c is not None and str(c).strip() for c in (r[k] for _, r in body))
    ]
    if unused:
        notes.append("columns not used: " + name_list(unused, quote=True))

    skipped = sorted(
        {n for n, _ in located.preamble}
        | set(located.interior_skipped)
        | set(event_lines)
        | set(footer)
        | {n for n, _ in located.after}
    )
    before = [n for n, _ in located.preamble]
    if before:
        notes.append(f"{_lines(before)} above the table header (line {located.header_line}) were skipped")
    after = footer + [n for n, cells in located.after if classify(cells) != "blank"]
    if after:
        notes.append(f"{_lines(after)} after the table were skipped")
    if located.unit_line is not None:
        notes.append(f"line {located.unit_line} was read as the units of the columns")

    codes = set(gas_codes.values())
    gas_detected = codes.pop() if len(codes) == 1 else "mixed"
    final_mapping = ColumnMapping(
        dict(used.columns), kept_units, used.guess_rest
    )
    return ImportOutcome(
        session=session,
        mapping=final_mapping,
        gas_unit_detected=gas_detected,
        time_format_detected=t_detected,
        delimiter=delimiter,
        decimal=decimal,
        skipped_lines=skipped,
        notes=notes,
        sheet=found.sheet,
        encoding=found.encoding,
        preamble=tuple(preamble_items),
    )


def read_input_file(path: str | Path, *, max_bytes: int = DEFAULT_MAX_BYTES) -> bytes:
    """The bytes of an export file, after checking it exists, is a file and is within ``max_bytes``.

    Raises
    ------
    ImportRejected
        Missing, a folder, unreadable, empty or too large (checked before reading).
    """
    path = Path(path)
    try:
        if path.is_dir():
            raise ImportRejected(Problem("this is a folder, not a file", "give the path of the export file", str(path)))
        size = path.stat().st_size
        check_size(size, max_bytes=max_bytes, file_name=path.name)
        return path.read_bytes()
    except FileNotFoundError:
        raise ImportRejected(Problem("the file does not exist", "check the path and name", str(path))) from None
    except OSError as exc:
        raise ImportRejected(
            Problem(f"the file cannot be read ({exc.strerror or exc})", "check the path and its permissions", str(path))
        ) from None


def import_file(
    path: str | Path,
    *,
    mapping: ColumnMapping | None = None,
    sheet: str | int | None = None,
    gas_unit: str = "auto",
    time_format: str = "auto",
    meta_overrides: Mapping[str, Any] | None = None,
    max_bytes: int = DEFAULT_MAX_BYTES,
    ve_condition: str = "auto",
    barometric_mmhg: float | None = None,
    ambient_c: float | None = None,
) -> ImportOutcome:
    """Read ``path`` and :func:`import_bytes` it (the size is checked before reading).

    Raises
    ------
    ImportRejected
        The file is missing, unreadable, too large, or cannot be imported.
    """
    path = Path(path)
    data = read_input_file(path, max_bytes=max_bytes)
    return import_bytes(
        data,
        file_name=path.name,
        mapping=mapping,
        sheet=sheet,
        gas_unit=gas_unit,
        time_format=time_format,
        meta_overrides=meta_overrides,
        max_bytes=max_bytes,
        ve_condition=ve_condition,
        barometric_mmhg=barometric_mmhg,
        ambient_c=ambient_c,
    )
