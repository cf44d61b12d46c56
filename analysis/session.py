"""The in-memory session: metadata plus one row per breath in canonical columns."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from analysis import columns as C

#: Metadata keys with a known meaning and type. Any other key is kept as text.
META_FLOAT_KEYS: tuple[str, ...] = (
    "age_y",
    "height_cm",
    "body_mass_kg",
    "hb_g_dl",
    "barometric_mmhg",
    "ambient_c",
    "ve_btps_factor",
    "gas_stpd_factor",
    "mvv_l_min",
    "fev1_l",
)
META_TEXT_KEYS: tuple[str, ...] = ("subject_id", "sex", "protocol", "test_date", "notes", "mode")


@dataclass
class Session:
    """One exercise test.

    Attributes
    ----------
    meta : dict
        Metadata from ``# key: value`` lines. Known numeric keys (``age_y``, ``height_cm``,
        ``body_mass_kg``, ``hb_g_dl``, ``barometric_mmhg``, ...) hold floats; the rest text.
    breaths : pandas.DataFrame
        One row per breath, canonical columns from :mod:`analysis.columns`, sorted by
        ``t_s``. An integer column ``source_row`` gives the 1-based line in the original file.
    flags : pandas.DataFrame
        Suspicious but usable rows: columns ``source_row``, ``column``, ``reason``. Flagged
        rows stay in ``breaths``; nothing is silently dropped.
    source_name : str
        The original file name (for messages).
    """

    meta: dict[str, Any]
    breaths: pd.DataFrame
    flags: pd.DataFrame = field(
        default_factory=lambda: pd.DataFrame(columns=["source_row", "column", "reason"])
    )
    source_name: str = ""

    def has(self, column: str) -> bool:
        """True when ``column`` exists and holds at least one value."""
        return column in self.breaths.columns and bool(self.breaths[column].notna().any())

    @property
    def body_mass_kg(self) -> float | None:
        v = self.meta.get("body_mass_kg")
        return float(v) if v is not None else None

    @property
    def subject_id(self) -> str:
        return str(self.meta.get("subject_id", ""))


def empty_breaths() -> pd.DataFrame:
    """An empty breath table with the required columns."""
    return pd.DataFrame({c: pd.Series(dtype=float) for c in C.REQUIRED})
