"""The subject and test details form (import and later edits): fields, defaults, changes.

Plain functions tested without Streamlit; the pages render the fields and pass the values to
the store (``import_test(options={"meta_overrides": ...})`` or ``update_test_metadata``).
"""

from __future__ import annotations

import datetime as _dt
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from analysis.errors import InvalidParameter
from analysis.subject import normalise_sex


@dataclass(frozen=True)
class DetailField:
    """One field of the form: metadata key, label, kind (``date``, ``number``, ``choice``, ``text``)."""

    key: str
    label: str
    kind: str
    unit: str = ""
    low: float | None = None
    high: float | None = None
    step: float | None = None
    choices: tuple[str, ...] = ()


#: The fields, in the order a lab fills them in. Ranges as the preamble reader's (plausible adults
#: and children; a value outside is refused by the form, not silently changed).
FIELDS: tuple[DetailField, ...] = (
    DetailField("test_date", "Test date", "date"),
    DetailField("body_mass_kg", "Body mass", "number", "kg", 10.0, 400.0, 0.1),
    DetailField("age_y", "Age", "number", "years", 3.0, 120.0, 1.0),
    DetailField("sex", "Sex", "choice", choices=("", "F", "M")),
    DetailField("height_cm", "Height", "number", "cm", 50.0, 250.0, 0.5),
    DetailField("hb_g_dl", "Haemoglobin (Hb)", "number", "g/dL", 3.0, 25.0, 0.1),
    DetailField("protocol", "Protocol", "text"),
    DetailField("operator", "Operator", "text"),
    DetailField("beta_blocker", "Beta-blocker", "choice", choices=("", "no", "yes")),
)
FIELD_KEYS: tuple[str, ...] = tuple(f.key for f in FIELDS)
CHOICE_LABELS: dict[str, str] = {"": "not given", "F": "female", "M": "male", "no": "no", "yes": "yes"}


def field_label(f: DetailField) -> str:
    return f"{f.label} ({f.unit})" if f.unit else f.label


def form_defaults(meta: Mapping[str, Any]) -> dict[str, Any]:
    """Initial values of the form from a session's metadata (``None`` where not set)."""
    out: dict[str, Any] = {}
    for f in FIELDS:
        value = meta.get(f.key)
        if f.kind == "date":
            out[f.key] = _date(value)
        elif f.kind == "number":
            out[f.key] = _number(value, f)
        elif f.kind == "choice":
            text = str(value or "").strip()
            if f.key == "sex":
                text = _sex_choice(text)
            out[f.key] = text if text in f.choices else ""
        else:
            out[f.key] = str(value or "")
    return out


def _sex_choice(text: str) -> str:
    """``"F"``, ``"M"`` or ``""`` from any spelling the one normaliser reads (``analysis.subject``)."""
    try:
        sex = normalise_sex(text)
    except InvalidParameter:
        return ""
    return {"male": "M", "female": "F"}.get(sex or "", "")


def _date(value: Any) -> _dt.date | None:
    if isinstance(value, _dt.date):
        return value
    try:
        return _dt.date.fromisoformat(str(value or "").strip()[:10])
    except ValueError:
        return None


def _number(value: Any, f: DetailField) -> float | None:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    if not math.isfinite(v) or (f.low is not None and v < f.low) or (f.high is not None and v > f.high):
        return None
    return v


def value_text(value: Any) -> str:
    """A form value as the metadata text stored (``""`` for not given)."""
    if value is None:
        return ""
    if isinstance(value, _dt.date):
        return value.isoformat()
    if isinstance(value, float):
        return f"{value:g}"
    return " ".join(str(value).split())


def changed_details(before: Mapping[str, Any], values: Mapping[str, Any]) -> dict[str, str]:
    """The fields whose value differs from the form's defaults, as metadata text.

    ``before`` is what :func:`form_defaults` gave; ``values`` what the form returned.
    """
    return {k: value_text(values.get(k)) for k in FIELD_KEYS if value_text(values.get(k)) != value_text(before.get(k))}


def import_overrides(file_meta: Mapping[str, Any], values: Mapping[str, Any]) -> dict[str, str]:
    """``meta_overrides`` for an import: every value the reviewer set or changed from the file's.

    A value the file already holds (in its ``# key: value`` or labelled lines) is not repeated.
    """
    defaults = form_defaults(file_meta)
    return {k: v for k, v in changed_details(defaults, values).items() if v}


def preamble_rows(items: Any) -> list[dict[str, str]]:
    """The labelled lines the importer read above the table, for the preview the reviewer confirms."""
    labels = {f.key: field_label(f) for f in FIELDS}
    labels["subject_id"] = "Person code"
    labels["barometric_mmhg"] = "Barometric pressure (mmHg)"
    labels["ambient_c"] = "Room temperature (°C)"
    return [
        {"Line": str(i.line), "In the file": f"{i.label}: {i.text}", "Read as": labels.get(i.key, i.key), "Value": i.value}
        for i in items
    ]
