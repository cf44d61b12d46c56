"""A plain-text summary of an import, shared by the command line and the dashboard."""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping
from typing import Any

from analysis import columns as C
from analysis.io._table import DELIMITER_NAMES
from analysis.io._units import UNIT_LABELS
from analysis.io.importer import ImportOutcome


def _clock(seconds: float) -> str:
    sign = "-" if seconds < 0 else ""
    seconds = abs(seconds)
    h, rest = divmod(round(seconds), 3600)
    m, s = divmod(rest, 60)
    return f"{sign}{h}:{m:02d}:{s:02d}" if h else f"{sign}{m}:{s:02d}"


def flag_counts(outcome: ImportOutcome) -> dict[str, int]:
    """Number of flagged rows per reason (a row counts once per reason)."""
    flags = outcome.session.flags
    if flags.empty:
        return {}
    unique = flags.drop_duplicates(["source_row", "reason"])
    return dict(Counter(unique["reason"]).most_common())


def gas_conditions_text(meta: Mapping[str, Any]) -> str:
    """Ventilation and VO2/VCO2 conditions of an imported session, and any conversion, in words."""
    parts = []
    for group, label, target in (("ve", "ventilation", "BTPS"), ("gas", "VO2/VCO2", "STPD")):
        stated = str(meta.get(f"{group}_condition_stated", "")).upper()
        factor = meta.get(f"{group}_{target.lower()}_factor")
        if factor is not None and stated:
            parts.append(f"{label} {target}, converted from {stated} × {float(factor):.4f}")
        elif stated or meta.get(f"{group}_condition"):
            parts.append(f"{label} {target}, as stated")
        else:
            parts.append(f"{label} taken as {target} (no condition stated)")
    return "; ".join(parts)


def describe_outcome(outcome: ImportOutcome) -> list[str]:
    """Lines describing what was imported and how the file was read.

    Breaths and duration, which header became which column (with unit conversions), the gas
    unit and time format detected, delimiter and decimal mark, skipped lines, flagged rows by
    reason, and every note.
    """
    s = outcome.session
    b = s.breaths
    lines: list[str] = []
    if len(b):
        t0, t1 = float(b[C.T_S].iloc[0]), float(b[C.T_S].iloc[-1])
        lines.append(f"breaths: {len(b)}, duration {_clock(t1 - t0)} ({t1 - t0:.1f} s, from {t0:g} s to {t1:g} s)")
    mapped = outcome.mapping.mapped()
    parts = []
    for name in C.COLUMNS:
        if name in mapped and name in b.columns:
            unit = outcome.mapping.units.get(name)
            conv = f" [{UNIT_LABELS.get(unit, unit)}]" if unit else ""
            parts.append(f"{name} <- '{mapped[name]}'{conv}")
    lines.append("columns: " + ", ".join(parts))
    source = f"sheet '{outcome.sheet}'" if outcome.sheet else (
        f"{DELIMITER_NAMES.get(outcome.delimiter, repr(outcome.delimiter))}-separated text ({outcome.encoding})"
    )
    lines.append(
        f"read as: {source}, decimal mark '{outcome.decimal}', gas unit {UNIT_LABELS.get(outcome.gas_unit_detected, outcome.gas_unit_detected)}, "
        f"time as {outcome.time_format_detected}"
    )
    lines.append("gas conditions: " + gas_conditions_text(s.meta))
    if outcome.preamble:
        lines.append(
            "read from the lines above the table: "
            + ", ".join(f"{i.key} = {i.value} (line {i.line}: '{i.label}')" for i in outcome.preamble)
        )
    counts = flag_counts(outcome)
    flagged_rows = s.flags["source_row"].nunique() if not s.flags.empty else 0
    if counts:
        detail = ", ".join(f"{reason}: {n}" for reason, n in counts.items())
        lines.append(f"flagged rows: {flagged_rows} (kept; {detail})")
    else:
        lines.append("flagged rows: none")
    if outcome.skipped_lines:
        lines.append(f"lines not part of the table: {len(outcome.skipped_lines)}")
    lines.extend(f"note: {n}" for n in outcome.notes)
    return lines
