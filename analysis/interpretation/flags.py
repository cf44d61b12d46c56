"""The flag record: one finding read against a published limit."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from analysis.records import described

#: How much a flag weighs: ``abnormal`` beyond the published limit, ``caution`` a value a reader
#: should look at (borderline, or a limit that depends on conditions not recorded), ``info``
#: for context only.
Severity = Literal["info", "caution", "abnormal"]

#: The stable flag codes and the group each one is shown under.
FLAG_GROUPS: dict[str, str] = {
    "chronotropic_incompetence": "Heart rate",
    "hr_recovery_low": "Heart rate",
    "o2_pulse_flattening": "Cardiovascular",
    "dvo2_dwr_low": "Cardiovascular",
    "vo2peak_low": "Aerobic capacity",
    "oscillatory_ventilation": "Ventilation",
    "breathing_reserve_low": "Ventilation",
    "breathing_frequency_high": "Ventilation",
    "ve_vco2_slope_high": "Gas exchange",
    "petco2_low": "Gas exchange",
    "petco2_rise_low": "Gas exchange",
    "desaturation": "Gas exchange",
}

#: Each code in words (headings, pattern sentences).
FLAG_NAMES: dict[str, str] = {
    "chronotropic_incompetence": "chronotropic incompetence",
    "hr_recovery_low": "slow heart-rate recovery",
    "o2_pulse_flattening": "O2-pulse flattening",
    "dvo2_dwr_low": "low ΔVO2/ΔWR",
    "vo2peak_low": "low peak VO2",
    "oscillatory_ventilation": "oscillatory ventilation",
    "breathing_reserve_low": "low breathing reserve",
    "ve_vco2_slope_high": "high VE/VCO2 slope",
    "petco2_low": "low PETCO2",
    "petco2_rise_low": "blunted PETCO2 rise",
    "desaturation": "desaturation",
}

#: Flags a coach sees (they bear on training and the athlete's ceiling); the others are for
#: clinical staff only.
SPORT_RELEVANT: frozenset[str] = frozenset({"desaturation", "breathing_reserve_low", "vo2peak_low", "hr_recovery_low"})


@dataclass(frozen=True)
class Flag:
    """One finding outside a published limit, with the limit and where it comes from."""

    code: str = described(description="stable identifier, e.g. `desaturation` (see docs/interpretation.md)")
    severity: Severity = described(description="`abnormal`, `caution` or `info`")
    text: str = described(description="the finding in plain words, worded as a finding, never a diagnosis")
    value: float | None = described(description="the value read (unit in `unit`)")
    limit: str = described(description="the limit it was read against, in words with its unit")
    source: str = described(description="the publication the limit follows (with 'from memory' where recalled)")
    unit: str = described(default="", description="unit of `value`")
    sport_relevant: bool = described(default=False, description="shown in the coach's view too")

    @property
    def group(self) -> str:
        """The heading the flag is shown under."""
        return FLAG_GROUPS.get(self.code, "Other")

    @property
    def name(self) -> str:
        """The code in words."""
        return FLAG_NAMES.get(self.code, self.code.replace("_", " "))


def flag(code: str, *, severity: Severity, text: str, value: float | None, limit: str, source: str, unit: str = "") -> Flag:
    """A :class:`Flag` with its ``sport_relevant`` marker set from :data:`SPORT_RELEVANT`."""
    return Flag(
        code=code, severity=severity, text=text, value=None if value is None else float(value), limit=limit,
        source=source, unit=unit, sport_relevant=code in SPORT_RELEVANT,
    )
