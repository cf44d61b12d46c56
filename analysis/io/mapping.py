"""Which source column holds which canonical signal: guessing, explicit choices, profiles.

Guessing works only from generic spellings of trade terms ("VO2", "V'O2", "Oxygen uptake",
"HR", "Load", "RR", "PETCO2", ...) and unit hints written in the header ("(L/min)",
"ml/min", "[W]"). It does not know any particular product's export layout.
"""

from __future__ import annotations

import json
import re
import unicodedata
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from analysis import columns as C
from analysis.errors import InvalidParameter, TidemarkError
from analysis.io._units import CONDITION_WORDS, allowed_units, unit_code

#: Mapping target meaning "this source column is deliberately not used".
IGNORE = "ignore"

#: Targets accepted in place of a canonical name (converted on the way in).
TARGET_ALIASES: dict[str, tuple[str, str]] = {
    "vo2_l_min": (C.VO2_ML_MIN, "l_min"),
    "vco2_l_min": (C.VCO2_ML_MIN, "l_min"),
}

PROFILE_KIND = "tidemark column mapping"
PROFILE_VERSION = 1

# Generic spellings, compared after lower-casing and removing spaces, underscores, hyphens,
# apostrophes, dots and accents ("V'O2" -> "vo2", "Heart rate" -> "heartrate").
_SYNONYMS: dict[str, tuple[str, ...]] = {
    C.T_S: ("time", "t", "elapsedtime", "elapsed", "testtime", "totaltime", "timeelapsed", "runtime", "clocktime"),
    C.VO2_ML_MIN: ("vo2", "vo2abs", "vo2absolute", "oxygenuptake", "o2uptake", "oxygenconsumption", "o2consumption"),
    C.VCO2_ML_MIN: (
        "vco2",
        "co2output",
        "co2production",
        "carbondioxideoutput",
        "carbondioxideproduction",
        "co2elimination",
    ),
    C.VE_L_MIN: ("ve", "minuteventilation", "ventilation", "expiredventilation", "expiratoryventilation"),
    C.HR_BPM: ("hr", "heartrate", "pulse", "pulserate", "heartfrequency"),
    C.WORK_W: ("load", "watts", "watt", "power", "work", "workrate", "wr", "workload", "poweroutput"),
    C.SPEED_KMH: ("speed", "velocity", "beltspeed", "treadmillspeed"),
    C.GRADE_PCT: ("grade", "incline", "slope", "gradient", "inclination", "elevation"),
    C.RF_BPM: (
        "rr",
        "bf",
        "rf",
        "fr",
        "fb",
        "respiratoryrate",
        "respirationrate",
        "respiratoryfrequency",
        "breathingrate",
        "breathingfrequency",
        "breathfrequency",
    ),
    C.VT_L: ("vt", "tv", "vte", "tidalvolume"),
    C.PETO2_MMHG: ("peto2", "eto2", "endtidalo2", "endtidalpo2", "endtidaloxygen", "po2et"),
    C.PETCO2_MMHG: ("petco2", "etco2", "endtidalco2", "endtidalpco2", "endtidalcarbondioxide", "pco2et"),
    C.SPO2_PCT: ("spo2", "o2sat", "oxygensaturation", "saturation", "pulseoximetry"),
    C.PHASE: ("phase", "testphase", "period"),
    C.MARKER: (
        "marker",
        "markers",
        "mark",
        "event",
        "events",
        "comment",
        "comments",
        "note",
        "notes",
        "remark",
        "remarks",
        "annotation",
        "label",
    ),
}
#: Common non-English spellings of the trade terms (our own choice, documented in docs/import.md):
#: German (Zeit, HF = Herzfrequenz, AF = Atemfrequenz, AZV = Atemzugvolumen, AMV = Atemminutenvolumen,
#: Last/Leistung, Geschwindigkeit, Steigung), French (temps, FC = fréquence cardiaque, FR, puissance,
#: vitesse, pente), Spanish/Portuguese/Italian (tiempo, tempo, FC, carga, potencia/potenza, velocidad).
_NON_ENGLISH: dict[str, tuple[str, ...]] = {
    C.T_S: ("zeit", "gesamtzeit", "testzeit", "temps", "tiempo", "tempo", "tempototale"),
    C.VE_L_MIN: ("amv", "atemminutenvolumen", "ventilacion", "ventilazione", "debitventilatoire"),
    C.HR_BPM: ("hf", "herzfrequenz", "puls", "fc", "frequencecardiaque", "frecuenciacardiaca",
               "frequenzacardiaca", "frequenciacardiaca"),
    C.WORK_W: ("last", "leistung", "belastung", "puissance", "charge", "carga", "potencia", "potenza", "carico"),
    C.SPEED_KMH: ("geschwindigkeit", "vitesse", "velocidad", "velocita", "velocidade"),
    C.GRADE_PCT: ("steigung", "neigung", "pente", "pendiente", "pendenza", "inclinacion", "inclinazione"),
    C.RF_BPM: ("af", "atemfrequenz", "frequencerespiratoire", "frecuenciarespiratoria", "frequenzarespiratoria"),
    C.VT_L: ("azv", "atemzugvolumen", "volumecourant", "volumencorriente", "volumecorrente"),
    C.SPO2_PCT: ("sattigung", "sauerstoffsattigung", "saturacion", "saturazione"),
    C.PHASE: ("phase", "fase"),
    C.MARKER: ("kommentar", "bemerkung", "ereignis", "commentaire", "evenement", "comentario", "evento"),
}
_SYNONYMS = {name: spellings + tuple(s for s in _NON_ENGLISH.get(name, ()) if s not in spellings)
             for name, spellings in _SYNONYMS.items()}
_LOOKUP: dict[str, str] = {spelling: name for name, spellings in _SYNONYMS.items() for spelling in spellings}

_BRACKETED = re.compile(r"[\(\[\{]([^\)\]\}]*)[\)\]\}]")
_STRIP_CHARS = re.compile(r"[\s_\-'’´`‘.·]+")


def _plain(text: str) -> str:
    """Lower case without accents or combining marks (the dot of V̇O2 included)."""
    decomposed = unicodedata.normalize("NFKD", text)
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch)).lower().strip()


def split_header(header: str) -> tuple[str, str | None]:
    """A header as ``(key, unit code)``: ``"V'O2 (L/min)"`` -> ``("vo2", "l_min")``.

    Bracketed text and a trailing word are taken as the unit only when they read as a unit;
    otherwise they stay part of the key (so ``"VO2 (% pred)"`` does not become ``"vo2"``).

    Examples
    --------
    >>> split_header("VO2 (mL/min)"), split_header("Heart rate"), split_header("Power W")
    (('vo2', 'ml_min'), ('heartrate', None), ('power', 'w'))
    """
    text = _plain(header)
    unit: str | None = None
    for match in list(_BRACKETED.finditer(text)):
        inner = match.group(1)
        code = unit_code(inner)
        inner_words = inner.replace(",", " ").split()
        if code is not None or (inner_words and all(w in CONDITION_WORDS for w in inner_words)):
            unit = unit or code
            text = text.replace(match.group(0), " ")
    words = text.split()
    while len(words) > 1:
        last = words[-1]
        if last in CONDITION_WORDS:
            words.pop()
            continue
        code = unit_code(last)
        if code is None:
            break
        unit = unit or code
        words.pop()
    key = _STRIP_CHARS.sub("", " ".join(words))
    for word in CONDITION_WORDS:
        if key.endswith(word) and key != word and key[: -len(word)] in _LOOKUP:
            key = key[: -len(word)]
    return key, unit


def is_per_kg(header: str) -> bool:
    """True when a header names a per-kilogram quantity ("VO2/kg", "VO2 (ml/kg/min)", "VO2 rel")."""
    key, unit = split_header(header)
    return unit == "per_kg" or "/kg" in key or key.endswith(("kg", "rel", "relative"))


def _normalise_target(target: str) -> tuple[str, str | None]:
    t = target.strip().lower()
    if t in ("", IGNORE, "-", "none"):
        return IGNORE, None
    if t in TARGET_ALIASES:
        return TARGET_ALIASES[t]
    if t in C.COLUMNS:
        return t, None
    raise InvalidParameter(
        "column mapping target",
        f"one of {', '.join(C.COLUMNS)}, vo2_l_min, vco2_l_min or '{IGNORE}'",
        target,
    )


@dataclass(frozen=True)
class ColumnMapping:
    """Source header -> canonical column, plus the unit of each mapped column.

    Parameters
    ----------
    columns : mapping of str to str
        Source header (as written in the file) -> canonical column name
        (:data:`analysis.columns.COLUMNS`), ``"vo2_l_min"``/``"vco2_l_min"`` (stored as the
        mL/min column with unit ``"l_min"``), or ``"ignore"`` to leave a column out.
    units : mapping of str to str
        Canonical column -> unit code of the source values (``"l_min"``, ``"ml_min"``, ``"s"``,
        ``"min"``, ``"mm:ss"``, ``"kpa"``, ...). Columns without an entry are detected.
    guess_rest : bool
        When importing, guess columns this mapping does not mention (default True).

    Raises
    ------
    InvalidParameter
        An unknown target, a canonical column mapped from two headers, or a unit the column
        cannot be in.

    Examples
    --------
    >>> m = ColumnMapping({"Oxygen (L/min)": "vo2_l_min", "Zeit": "t_s"})
    >>> m.columns["Oxygen (L/min)"], m.units["vo2_ml_min"]
    ('vo2_ml_min', 'l_min')
    """

    columns: Mapping[str, str] = field(default_factory=dict)
    units: Mapping[str, str] = field(default_factory=dict)
    guess_rest: bool = True

    def __post_init__(self) -> None:
        cols: dict[str, str] = {}
        units: dict[str, str] = {}
        seen: dict[str, str] = {}
        for header, target in dict(self.columns).items():
            if not isinstance(header, str) or not isinstance(target, str):
                raise InvalidParameter("column mapping", "text header -> text column name", (header, target))
            name, implied_unit = _normalise_target(target)
            if name != IGNORE:
                if name in seen:
                    raise InvalidParameter(
                        f"column mapping for {name}",
                        "one source column",
                        f"both '{seen[name]}' and '{header}'",
                    )
                seen[name] = header
                if implied_unit:
                    units[name] = implied_unit
            cols[header] = name
        for name, code in dict(self.units).items():
            name_n, _ = _normalise_target(name)
            code_n = str(code).strip().lower()
            if code_n not in allowed_units(name_n):
                raise InvalidParameter(
                    f"unit of {name_n}", f"one of {', '.join(allowed_units(name_n)) or '(no units)'}", code
                )
            units[name_n] = code_n
        object.__setattr__(self, "columns", cols)
        object.__setattr__(self, "units", units)
        object.__setattr__(self, "guess_rest", bool(self.guess_rest))

    def mapped(self) -> dict[str, str]:
        """Canonical column -> source header (ignored columns left out)."""
        return {name: header for header, name in self.columns.items() if name != IGNORE}

    def source_of(self, canonical: str) -> str | None:
        """The source header mapped to ``canonical``, or ``None``."""
        return self.mapped().get(canonical)

    def overridden_by(self, other: ColumnMapping) -> ColumnMapping:
        """This mapping with ``other``'s choices taking precedence."""
        targets = set(other.mapped())
        cols = {h: n for h, n in self.columns.items() if h not in other.columns and n not in targets}
        cols.update(other.columns)
        units = {n: u for n, u in self.units.items() if n not in targets}
        units.update(other.units)
        return ColumnMapping(cols, units, self.guess_rest and other.guess_rest)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready form (see :meth:`from_dict`)."""
        return {
            "kind": PROFILE_KIND,
            "version": PROFILE_VERSION,
            "columns": dict(self.columns),
            "units": dict(self.units),
            "guess_rest": self.guess_rest,
        }

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> ColumnMapping:
        """Inverse of :meth:`to_dict`; raises :class:`InvalidParameter` on a malformed dict."""
        if not isinstance(data, Mapping):
            raise InvalidParameter("column mapping", "a JSON object", type(data).__name__)
        if data.get("kind", PROFILE_KIND) != PROFILE_KIND:
            raise InvalidParameter("column mapping kind", repr(PROFILE_KIND), data.get("kind"))
        if int(data.get("version", PROFILE_VERSION)) > PROFILE_VERSION:
            raise InvalidParameter("column mapping version", f"at most {PROFILE_VERSION}", data.get("version"))
        columns = data.get("columns", {})
        units = data.get("units", {})
        if not isinstance(columns, Mapping) or not isinstance(units, Mapping):
            raise InvalidParameter("column mapping", "'columns' and 'units' objects", data)
        return cls(dict(columns), dict(units), bool(data.get("guess_rest", True)))


def guess_mapping(headers: Sequence[str], *, unit_row: Sequence[str | None] | None = None) -> ColumnMapping:
    """Guess which header holds which canonical column, from generic spellings.

    Parameters
    ----------
    headers : sequence of str
        Column headers as written in the file.
    unit_row : sequence of str, optional
        A row of units under the headers (``"s"``, ``"L/min"``, ...), when the file has one.

    Returns
    -------
    ColumnMapping
        Only the headers that were recognised; the first header wins when two read the same.
        Units written in a header (or the unit row) are recorded in ``units``. Per-kilogram
        columns are never taken as VO2 or VCO2.

    Examples
    --------
    >>> m = guess_mapping(["Time", "V'O2 (L/min)", "VCO2", "VE", "Heart rate", "VO2/kg"])
    >>> m.mapped()["vo2_ml_min"], m.units["vo2_ml_min"], "VO2/kg" in m.columns
    ("V'O2 (L/min)", 'l_min', False)
    """
    columns: dict[str, str] = {}
    units: dict[str, str] = {}
    taken: set[str] = set()
    for i, header in enumerate(headers):
        if not isinstance(header, str) or header in columns:
            continue
        raw = header.strip().lower()
        if raw in C.COLUMNS or raw in TARGET_ALIASES:
            name, unit = _normalise_target(raw)
        else:
            key, unit = split_header(header)
            known = _LOOKUP.get(key)
            if known is None:
                continue
            name = known
        unit_cell = unit_row[i] if unit_row is not None and i < len(unit_row) else None
        if unit is None and isinstance(unit_cell, str):
            unit = unit_code(unit_cell)
        if name in taken:
            continue
        if name in (C.VO2_ML_MIN, C.VCO2_ML_MIN) and (unit == "per_kg" or is_per_kg(header)):
            continue
        allowed = allowed_units(name)
        if unit is not None and allowed and unit not in allowed:
            continue  # e.g. "HR (%)" or "Load (%)": a different quantity
        columns[header] = name
        taken.add(name)
        if unit is not None and allowed:
            units[name] = unit
    return ColumnMapping(columns, units)


class ProfileError(TidemarkError):
    """A mapping profile file cannot be read or written."""


def save_profile(mapping: ColumnMapping, path: str | Path) -> Path:
    """Write ``mapping`` as a JSON profile (UTF-8) and return the path.

    Raises
    ------
    ProfileError
        The file cannot be written.
    """
    path = Path(path)
    tmp = path.with_name(path.name + ".tmp")
    try:
        tmp.write_text(json.dumps(mapping.to_dict(), indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
        tmp.replace(path)
    except OSError as exc:
        if tmp.parent.is_dir():
            tmp.unlink(missing_ok=True)
        raise ProfileError(
            f"mapping profile '{path}' cannot be written ({exc.strerror or exc}) — check the folder exists and is writable"
        ) from None
    return path


def load_profile(path: str | Path) -> ColumnMapping:
    """Read a JSON profile written by :func:`save_profile`.

    Raises
    ------
    ProfileError
        The file is missing or not valid JSON.
    InvalidParameter
        The JSON does not describe a valid mapping.
    """
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise ProfileError(f"mapping profile '{path}' does not exist — check the path") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ProfileError(
            f"mapping profile '{path}' cannot be read ({exc}) — save it again with --save-profile"
        ) from None
    return ColumnMapping.from_dict(data)
