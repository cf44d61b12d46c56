"""Gas conditions (BTPS / STPD / ATPS) written in an export: found, converted, or asked for.

Tidemark keeps ventilation (VE, tidal volume) at BTPS and gas exchange (VO2, VCO2) at STPD
(ATS/ACCP 2003; :mod:`analysis.gas_conditions`). A condition word in a column's header
(``"VE (L/min, STPD)"``, ``"VEbtps"``), a ``# ve_condition: ...`` metadata line, a line above
the table (``"Volumes: ATPS"``) or the import option says what the file holds. Values stated in
another condition are converted when the barometric pressure (and, for ATPS, the room
temperature) is known; otherwise the import is refused with a message saying how to state them.
A file that states nothing is read by the convention above.
"""

from __future__ import annotations

import math
import re
import unicodedata
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from analysis import columns as C
from analysis.errors import InvalidParameter
from analysis.gas_conditions import GAS_CONDITIONS, GasCondition, gas_condition, volume_factor
from analysis.io._validate import ProblemLog

Group = Literal["ve", "gas"]
#: Columns of each group and the condition Tidemark keeps them in.
GROUP_COLUMNS: dict[Group, tuple[str, ...]] = {"ve": (C.VE_L_MIN, C.VT_L), "gas": (C.VO2_ML_MIN, C.VCO2_ML_MIN)}
GROUP_TARGET: dict[Group, GasCondition] = {"ve": "btps", "gas": "stpd"}
GROUP_LABEL: dict[Group, str] = {"ve": "ventilation (VE, tidal volume)", "gas": "VO2/VCO2"}
#: Values of the import option ``ve_condition``.
VE_CONDITIONS: tuple[str, ...] = ("auto", *GAS_CONDITIONS)

_WORD = re.compile(r"[a-z0-9]+")
_GAS_WORDS = ("vo2", "vco2", "gasexchange", "gas", "o2", "co2", "oxygen", "uptake")
_VE_WORDS = ("ve", "ventilation", "volume", "volumes", "vt", "tidal", "flow", "amv", "azv")


def _plain(text: str) -> str:
    decomposed = unicodedata.normalize("NFKD", text)
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch)).lower()


def header_conditions(header: str, *, known_keys: Sequence[str] = ()) -> tuple[GasCondition, ...]:
    """The condition words in a header, each once, in order (``"VE (L/min, STPD)"`` -> ``("stpd",)``).

    A word stuck to a known column name counts too (``"VEbtps"`` with ``"ve"`` in ``known_keys``).
    """
    found: list[GasCondition] = []
    for token in _WORD.findall(_plain(header)):
        for condition in GAS_CONDITIONS:
            stuck = token.endswith(condition) and token[: -len(condition)] in known_keys
            if (token == condition or stuck) and condition not in found:
                found.append(condition)
    return tuple(found)


@dataclass(frozen=True)
class Statement:
    """A condition stated for a group of columns, and where it was found (for the summary)."""

    group: Group
    condition: GasCondition
    source: str
    line: int | None = None


def preamble_statements(rows: Sequence[tuple[int, str]]) -> list[Statement]:
    """Conditions stated in the text lines above the table (``(line, text)``).

    A line is cut at ``,``, ``;``, ``/`` and ``|``; a piece naming a condition belongs to VO2/VCO2
    when it names them (``"VO2 STPD"``, ``"gas exchange: STPD"``) and to ventilation otherwise
    (``"VE BTPS"``, ``"Volumes: ATPS"``, ``"Conditions: BTPS"``).
    """
    out: list[Statement] = []
    for line, text in rows:
        for piece in re.split(r"[,;/|]", _plain(text)):
            words = _WORD.findall(piece)
            conditions = [c for c in GAS_CONDITIONS if c in words]
            if len(conditions) != 1:
                continue
            named = set(words)
            group: Group = "gas" if named & set(_GAS_WORDS) and not named & set(_VE_WORDS) else "ve"
            shown = " ".join(text.split())[:80]
            out.append(Statement(group, conditions[0], f"line {line} above the table ('{shown}')", line))
    return out


def _number(meta: Mapping[str, Any], key: str) -> float | None:
    value = meta.get(key)
    if isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(float(value)):
        return float(value)
    return None


def apply_conditions(
    values: dict[str, Any],
    mapped: Mapping[str, str],
    meta: dict[str, Any],
    *,
    statements: Sequence[Statement],
    ve_condition: str,
    barometric_mmhg: float | None,
    ambient_c: float | None,
    known_keys: Sequence[str],
    problems: ProblemLog,
    notes: list[str],
) -> None:
    """Convert the gas columns in ``values`` to BTPS / STPD where a condition is stated.

    ``meta`` gains ``<group>_condition`` (the condition of the values kept), and where a
    condition was stated in the file or for the import ``<group>_condition_stated``,
    ``<group>_condition_source``; after a conversion also ``ve_btps_factor`` / ``gas_stpd_factor``
    and the ``barometric_mmhg`` / ``ambient_c`` used. Conversions that lack the pressure or the
    room temperature are added to ``problems`` (the caller raises them).
    """
    pb = barometric_mmhg if barometric_mmhg is not None else _number(meta, "barometric_mmhg")
    room_c = ambient_c if ambient_c is not None else _number(meta, "ambient_c")
    for group, names in GROUP_COLUMNS.items():
        target = GROUP_TARGET[group]
        present = [n for n in names if n in values and n in mapped]
        if not present:
            continue
        from_group = [s for s in statements if s.group == group]
        if len({s.condition for s in from_group}) > 1:
            lines = ", ".join(str(s.line) for s in from_group)
            problems.add(
                f"the lines above the table state different conditions for {GROUP_LABEL[group]} (lines {lines})",
                f"state the condition for the import ({_how(group)})",
                row=from_group[0].line,
            )
            continue
        for name in present:
            header = mapped[name]
            stated, source = _stated(group, header, meta, from_group, ve_condition, known_keys, problems)
            if stated is None:
                continue
            label = C.COLUMNS[name].label
            if stated == target:
                notes.append(f"{label} is stated as {stated.upper()} ({source}): kept as it is")
                _record(meta, group, target, stated, source)
                continue
            needs_room = "atps" in (stated, target)
            if pb is None or (needs_room and room_c is None):
                missing = "the barometric pressure" + (" and the room temperature" if needs_room else "")
                problems.add(
                    f"{label} is stated as {stated.upper()} ({source}); Tidemark keeps {label} at {target.upper()} "
                    f"and needs {missing} during the test to convert it",
                    f"give {missing} ({_how(group, pb_only=not needs_room)})",
                    column=header,
                )
                continue
            try:
                f = volume_factor(stated, target, barometric_mmhg=pb, ambient_c=room_c if needs_room else None)
            except InvalidParameter as exc:
                problems.add(
                    f"{label} cannot be converted from {stated.upper()} to {target.upper()}: {exc}",
                    "correct the barometric pressure or room temperature given for the test",
                    column=header,
                )
                continue
            values[name] = np.asarray(values[name], dtype=float) * f
            where = f"PB {pb:g} mmHg" + (f", room {room_c:g} °C" if needs_room else "")
            notes.append(
                f"{label} is stated as {stated.upper()} ({source}); converted to {target.upper()} "
                f"× {f:.4f} ({where}; gas laws, ATS/ACCP 2003)"
            )
            _record(meta, group, target, stated, source)
            meta[f"{group}_{target}_factor"] = round(f, 6)
            meta["barometric_mmhg"] = float(pb)
            if needs_room and room_c is not None:
                meta["ambient_c"] = float(room_c)


def _record(meta: dict[str, Any], group: Group, target: GasCondition, stated: GasCondition, source: str) -> None:
    meta[f"{group}_condition"] = target
    if not source.startswith("metadata"):
        meta[f"{group}_condition_stated"] = stated
        meta[f"{group}_condition_source"] = source


def _stated(
    group: Group,
    header: str,
    meta: Mapping[str, Any],
    from_preamble: Sequence[Statement],
    ve_condition: str,
    known_keys: Sequence[str],
    problems: ProblemLog,
) -> tuple[GasCondition | None, str]:
    """The condition stated for one column, and where: import option, header, metadata, preamble."""
    in_header = header_conditions(header, known_keys=known_keys)
    if group == "ve" and ve_condition != "auto":
        chosen = gas_condition(ve_condition)
        differs = [c.upper() for c in in_header if c != chosen]
        return chosen, "as set for the import" + (f"; the header '{header}' says {'/'.join(differs)}" if differs else "")
    if len(in_header) > 1:
        problems.add(
            f"the header names more than one condition ({', '.join(c.upper() for c in in_header)})",
            f"state the condition for the import ({_how(group)})",
            column=header,
        )
        return None, ""
    if in_header:
        return in_header[0], f"header '{header}'"
    key = f"{group}_condition"
    if key in meta:
        try:
            return gas_condition(meta[key], name=key), f"metadata {key}"
        except InvalidParameter:
            problems.add(f"metadata {key} is {meta[key]!r}", "write BTPS, STPD or ATPS")
            return None, ""
    if from_preamble:
        return from_preamble[0].condition, from_preamble[0].source
    return None, ""


def _how(group: Group, *, pb_only: bool = False) -> str:
    options = "--barometric-mmhg 755" if pb_only else "--barometric-mmhg 755 --ambient-c 22"
    state = ", or say what the values really are with --ve-condition btps|stpd|atps" if group == "ve" else ""
    units = "(mmHg)" if pb_only else "(mmHg, °C)"
    return (f"e.g. tidemark import FILE {options} {units}{state}; "
            "on the Library page use the 'Gas conditions' fields of the import")
