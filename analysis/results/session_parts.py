"""Records of what an analysis used: the subject, the phases, the breaths, the averaging."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from analysis.records import derived, described


@dataclass(frozen=True)
class Subject:
    """Who was tested and how, after the settings' metadata overrides."""

    source_name: str = described(description="file name of the session")
    subject_id: str | None = described(default=None, description="subject code from the session metadata")
    sex: str | None = described(default=None, description="`male` or `female` (metadata, after overrides)")
    age_y: float | None = described(default=None, unit="years", description="age at the test")
    height_cm: float | None = described(default=None, unit="cm", description="height")
    body_mass_kg: float | None = described(default=None, unit="kg", description="body mass")
    hb_g_dl: float | None = described(default=None, unit="g/dL", description="haemoglobin")
    test_date: str | None = described(default=None, description="date of the test as written in the session")
    protocol: str | None = described(default=None, description="protocol text from the session metadata")
    beta_blocker: bool | None = described(
        default=None,
        description="metadata `beta_blocker: yes|no` (true/false; null when not recorded): the "
        "heart-rate criterion of maximality does not apply under beta-blockade",
    )
    mode: str | None = described(
        default=None, description="`cycle` or `treadmill` (metadata, else from the load columns)"
    )


@dataclass(frozen=True)
class BreathCounts:
    """How many breaths the file held and how many the analysis used."""

    total: int = described(description="breaths in the file")
    used: int = described(description="breaths left after exclusions")
    excluded: int = described(description="breaths excluded (automatically or by the reviewer)")


@dataclass(frozen=True)
class AveragingUsed:
    """The averaging applied to the breaths before every result."""

    method: str = described(description="`breaths`, `time_bin`, `rolling_time` or `middle_of_n`")
    size: float = described(description="breaths or seconds, depending on the method")

    @derived(description="the averaging in words, as shown on every page")
    def label(self) -> str:
        from analysis.breaths import AveragingSpec

        return AveragingSpec(self.method, self.size).label  # type: ignore[arg-type]


def _flag(value: object) -> bool | None:
    """``beta_blocker`` metadata as true/false (``None`` when missing or not a yes/no word)."""
    from analysis.errors import InvalidParameter
    from analysis.settings import yes_no

    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    try:
        return yes_no(value, name="beta_blocker") == "yes"
    except InvalidParameter:
        return None


def subject_from_metadata(meta: dict[str, Any], *, source_name: str, mode: str | None) -> Subject:
    """The :class:`Subject` record of the metadata an analysis used."""

    def text(key: str) -> str | None:
        v = meta.get(key)
        return None if v is None else str(v)

    def number(key: str) -> float | None:
        v = meta.get(key)
        return None if v is None else float(v)

    return Subject(
        source_name=source_name,
        subject_id=text("subject_id"),
        sex=text("sex"),
        age_y=number("age_y"),
        height_cm=number("height_cm"),
        body_mass_kg=number("body_mass_kg"),
        hb_g_dl=number("hb_g_dl"),
        test_date=text("test_date"),
        protocol=text("protocol"),
        beta_blocker=_flag(meta.get("beta_blocker")),
        mode=mode,
    )
