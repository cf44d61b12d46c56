"""Key/value lines above an export's breath table, read into session metadata.

Many exports put the subject and test details in lines such as ``Test date:;10.02.2026`` or
``Body mass (kg);58`` before the table header. :func:`read_preamble_item` recognises such a line
by its label (our own list of spellings, English and a few common non-English ones, below) and
returns the canonical metadata key with the value in the session file's units and format.
Labels are compared in lower case without accents, spaces, dots, dashes and colons; a unit in
brackets is read (``Body mass (lb)``). Our own list of spellings:

- ``test_date`` (ISO ``YYYY-MM-DD``): test date, date, date of test, datum, testdatum,
  untersuchungsdatum, date du test, fecha, data;
- ``body_mass_kg`` (kg; ``(lb)`` converted): body mass, mass, weight, body weight, gewicht,
  körpergewicht, poids, masse, peso, masa;
- ``height_cm`` (cm; ``(m)`` or a value below 3 taken as metres): height, stature, größe,
  körpergröße, taille, altura, estatura, statura, altezza;
- ``age_y`` (years): age, alter, âge, edad, età, idade;
- ``sex`` (``M``/``F``): sex, gender, geschlecht, sexe, sexo, sesso;
- ``hb_g_dl`` (g/dL; ``(g/L)`` and ``(mmol/L)`` converted): Hb, haemoglobin, hemoglobin,
  hämoglobin, hémoglobine, hemoglobina;
- ``protocol``, ``operator`` (text): protocol, protokoll, protocole, protocolo; operator, tester,
  technician, examiner, untersucher, opérateur, operador;
- ``beta_blocker`` (``yes``/``no``): beta-blocker, β-blocker, betablocker, bêta-bloquant;
- ``subject_id`` (text): subject, subject id, patient id, id, proband, athlete.

Values outside a plausible range (body mass 10–400 kg, height 50–250 cm, age 3–120 y, Hb
3–25 g/dL) are not taken.

Dates: ``2026-02-10`` (ISO), ``10.02.2026`` and ``10-02-2026`` (day first, the European habit),
``10/02/2026`` read day first only when the first number is above 12 or the second is at most 12
and the file's other dates say nothing else — an ambiguous slash date (both numbers 12 or below)
is refused (the reviewer types it). Spreadsheet cells holding a date are read as that date.

Conversions: 1 lb = 0.45359237 kg (international avoirdupois pound, 1959); Hb 1 g/dL = 10 g/L;
Hb 1 mmol/L (monomer) = 1.611 g/dL (common practice: Hb monomer molar mass 16,114 g/mol).

Every function here is pure and never raises on any input: a line that cannot be read is
simply not metadata (the importer then skips it as before).
"""

from __future__ import annotations

import datetime as _dt
import re
import unicodedata
from dataclasses import dataclass
from typing import Any

from analysis.errors import InvalidParameter
from analysis.subject import normalise_sex

#: International avoirdupois pound in kg (exact by definition, 1959).
KG_PER_LB = 0.45359237
#: g/dL per mmol/L of haemoglobin (monomer, 16,114 g/mol; common practice).
HB_G_DL_PER_MMOL_L = 1.611

_LABELS: dict[str, tuple[str, ...]] = {
    "test_date": ("testdate", "dateoftest", "date", "testdatum", "datum", "untersuchungsdatum", "datedutest",
                  "datedelexamen", "fecha", "fechadelaprueba", "data", "datadeltest"),
    "body_mass_kg": ("bodymass", "mass", "weight", "bodyweight", "gewicht", "korpergewicht", "poids", "masse",
                     "peso", "pesocorporal", "masa"),
    "height_cm": ("height", "stature", "grosse", "korpergrosse", "taille", "altura", "estatura", "statura",
                  "altezza"),
    "age_y": ("age", "alter", "edad", "eta", "idade"),
    "sex": ("sex", "gender", "geschlecht", "sexe", "sexo", "sesso"),
    "hb_g_dl": ("hb", "haemoglobin", "hemoglobin", "hamoglobin", "hemoglobine", "hemoglobina", "emoglobina"),
    "protocol": ("protocol", "protokoll", "protocole", "protocolo", "protocollo", "testprotocol"),
    "operator": ("operator", "tester", "technician", "examiner", "untersucher", "operateur", "operador",
                 "operatore"),
    "beta_blocker": ("betablocker", "betablockers", "bblocker", "betablocking", "betabloquant", "betabloqueante",
                     "betabloccante"),
    "barometric_mmhg": ("barometricpressure", "barometer", "pb", "pbar", "airpressure", "atmosphericpressure",
                        "ambientpressure", "luftdruck", "barometerstand", "pressionbarometrique",
                        "pressionatmospherique", "presionbarometrica", "pressionebarometrica", "pressaobarometrica"),
    "ambient_c": ("roomtemperature", "ambienttemperature", "labtemperature", "raumtemperatur", "umgebungstemperatur",
                  "temperatureambiante", "temperaturaambiente", "temperaturadelasala"),
    "subject_id": ("subject", "subjectid", "subjectcode", "patientid", "id", "proband", "probandid", "athlete",
                   "athleteid"),
}
_LOOKUP: dict[str, str] = {label: key for key, labels in _LABELS.items() for label in labels}

#: Keys this module writes (the import form offers the same).
PREAMBLE_KEYS: tuple[str, ...] = tuple(_LABELS)

_UNIT = re.compile(r"[\(\[]([^\)\]]*)[\)\]]")
_NUMBER = re.compile(r"^[-+]?\d+(?:[.,]\d+)?$")
_ISO = re.compile(r"^(\d{4})-(\d{1,2})-(\d{1,2})(?:[ T].*)?$")
_DMY = re.compile(r"^(\d{1,2})([./-])(\d{1,2})\2(\d{4})$")
_YES = {"yes", "y", "ja", "j", "oui", "si", "sí", "sim", "true", "1", "x"}
_NO = {"no", "n", "nein", "non", "nao", "não", "false", "0", "-"}


@dataclass(frozen=True)
class PreambleItem:
    """One metadata line read from above the table.

    ``label`` and ``text`` are as written in the file (for the preview the reviewer confirms);
    ``key`` and ``value`` are what goes into the session's metadata.
    """

    line: int
    label: str
    text: str
    key: str
    value: str


def _plain(text: str) -> str:
    decomposed = unicodedata.normalize("NFKD", text.replace("ß", "ss"))
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch)).lower()


def _label_key(label: str) -> tuple[str | None, str]:
    """``"Body mass (kg):"`` -> ``("body_mass_kg", "kg")``; unknown labels give ``(None, unit)``."""
    unit_match = _UNIT.search(label)
    unit = _plain(unit_match.group(1)).replace(" ", "") if unit_match else ""
    bare = _UNIT.sub("", label)
    squeezed = re.sub(r"[\s_\-.:'’β/]+", "", _plain(bare.replace("β", "beta")))
    return _LOOKUP.get(squeezed), unit


def _number(text: str) -> float | None:
    value = text.strip().replace("\u2009", "").replace(" ", "")
    if not _NUMBER.match(value):
        return None
    try:
        return float(value.replace(",", "."))
    except ValueError:
        return None


def _fmt(value: float) -> str:
    return f"{value:.4g}" if abs(value) < 1000 else f"{value:.0f}"


def parse_date(text: str) -> str | None:
    """A written date as ISO ``YYYY-MM-DD``, or ``None`` when it is not a clear date.

    Examples
    --------
    >>> parse_date("10.02.2026")
    '2026-02-10'
    >>> parse_date("2026-02-10")
    '2026-02-10'
    >>> parse_date("25/12/2025")
    '2025-12-25'
    >>> parse_date("03/04/2026") is None  # 3 April or 4 March: not guessed
    True
    """
    value = text.strip()
    iso = _ISO.match(value)
    if iso:
        y, m, d = (int(x) for x in iso.groups())
    else:
        dmy = _DMY.match(value)
        if not dmy:
            return None
        a, sep, b, y = int(dmy.group(1)), dmy.group(2), int(dmy.group(3)), int(dmy.group(4))
        if sep == "/":
            if a > 12 >= b:
                d, m = a, b
            elif b > 12 >= a:
                d, m = b, a
            else:
                return None
        else:
            d, m = a, b
    try:
        return _dt.date(y, m, d).isoformat()
    except ValueError:
        return None


def _cell_text(value: Any) -> str:
    if isinstance(value, _dt.datetime):
        return value.date().isoformat()
    if isinstance(value, _dt.date):
        return value.isoformat()
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return "" if value is None else str(value).strip()


def _value(key: str, text: str, unit: str) -> str | None:
    """The metadata value of ``text`` for ``key`` (``None`` when it does not read as one)."""
    if key == "test_date":
        return parse_date(text)
    if key in ("protocol", "operator", "subject_id"):
        clean = " ".join(text.split())
        return clean[:200] or None
    low = _plain(text.strip()).rstrip(".")
    if key == "sex":  # the one table of spellings (analysis.subject), written as M / F / other
        try:
            sex = normalise_sex(text)
        except InvalidParameter:
            return None
        return {"male": "M", "female": "F"}.get(sex or "", sex)
    if key == "beta_blocker":
        if low in _YES:
            return "yes"
        if low in _NO:
            return "no"
        return None
    if key in ("barometric_mmhg", "ambient_c"):
        return _ambient_value(key, low, unit)
    number = _number(text)
    if number is None:
        return None
    if key == "body_mass_kg":
        kg = number * KG_PER_LB if unit in ("lb", "lbs") else number
        return _fmt(kg) if 10 <= kg <= 400 else None
    if key == "height_cm":
        cm = number * 100 if unit == "m" or (not unit and number < 3) else number
        return _fmt(cm) if 50 <= cm <= 250 else None
    if key == "age_y":
        return _fmt(number) if 3 <= number <= 120 else None
    if key == "hb_g_dl":
        if unit in ("g/l", "gl") or (not unit and number > 30):
            g_dl = number / 10
        elif unit in ("mmol/l", "mmoll"):
            g_dl = number * HB_G_DL_PER_MMOL_L
        else:
            g_dl = number
        return _fmt(g_dl) if 3 <= g_dl <= 25 else None
    return None


#: mmHg per kPa and per hPa (1 mmHg = 133.322387415 Pa).
MMHG_PER_KPA = 1000.0 / 133.322387415
_WITH_UNIT = re.compile(r"^([-+]?\d+(?:[.,]\d+)?)\s*([a-z°]*)$")


def _ambient_value(key: str, low: str, unit: str) -> str | None:
    """Barometric pressure (mmHg; kPa, hPa and mbar converted) or room temperature (°C; °F
    converted) with the unit in the label or after the number; plausible ranges only."""
    match = _WITH_UNIT.match(low.replace(" ", ""))
    if match is None:
        return None
    number = float(match.group(1).replace(",", "."))
    unit = (unit or match.group(2)).replace("°", "")
    if key == "ambient_c":
        if unit in ("f", "degf"):
            number = (number - 32.0) * 5.0 / 9.0
        elif unit not in ("", "c", "degc"):
            return None
        return _fmt(number) if 0 <= number <= 45 else None
    if unit in ("kpa",):
        number *= MMHG_PER_KPA
    elif unit in ("hpa", "mbar", "mb"):
        number *= MMHG_PER_KPA / 10.0
    elif unit not in ("", "mmhg", "torr"):
        return None
    return _fmt(number) if 400 <= number <= 820 else None


def read_preamble_item(line: int, cells: list[Any] | tuple[Any, ...]) -> PreambleItem | None:
    """A metadata item from one line above the table (its cells), or ``None``.

    The line is ``label`` and ``value`` in its first two non-empty cells (``"Body mass (kg);58"``),
    or one cell ``"label: value"``. Unknown labels and values that do not read clearly give
    ``None``; nothing here raises.

    Examples
    --------
    >>> read_preamble_item(2, ["Test date:", "10.02.2026"]).value
    '2026-02-10'
    >>> read_preamble_item(3, ["Body mass (kg)", "58"]).key
    'body_mass_kg'
    >>> read_preamble_item(4, ["Gewicht (lb)", "132,3"]).value
    '60.01'
    >>> read_preamble_item(5, ["Barometric pressure", "1013 hPa"]).value
    '759.8'
    >>> read_preamble_item(6, ["Comment", "fine"]) is None
    True
    """
    try:
        texts = [_cell_text(c) for c in cells]
        texts = [t for t in texts if t]
        if len(texts) == 1 and ":" in texts[0]:
            label, _, value = texts[0].partition(":")
            texts = [label.strip(), value.strip()]
        if len(texts) != 2 or len(texts[0]) > 60:
            return None
        label, text = texts
        key, unit = _label_key(label)
        if key is None:
            return None
        read = _value(key, text, unit)
        if read is None:
            return None
        return PreambleItem(line=int(line), label=label, text=text, key=key, value=read)
    except Exception:  # noqa: BLE001 - a line that cannot be read is not metadata; never fail the import
        return None
