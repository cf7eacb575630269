"""A service visit: who, which machine, which gauges, and every reading taken.

Readings are never overwritten: a correction is a new reading that replaces the old one, and a
deletion marks the old one, so the job card can always show what was entered and when.
"""

from __future__ import annotations

import datetime as dt
import difflib
import uuid
from datetime import UTC, datetime
from enum import StrEnum
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError, available_timezones

from pydantic import Field, field_validator, model_validator

from fieldkit.errors import FieldkitError
from fieldkit.model.base import SCHEMA_VERSION, Strict
from fieldkit.model.condition import Condition, ConditionSpec, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.quantity import AnyQuantity, Pressure
from fieldkit.model.repair import Departure, WorkItem
from fieldkit.units import Kind, PressureReference, kind_of, parse_value

__all__ = [
    "Condition",
    "ConditionSpec",
    "FunctionState",
    "Gauge",
    "Observation",
    "Reading",
    "Scenario",
    "Visit",
    "VisitStatus",
]

MAX_TEXT = 4000

#: The dates a visit and its readings may carry. Wider than any real service visit, narrow
#: enough that a time moved into any site's time zone (the job card prints local times) stays
#: a valid date: year 1 or 9999 is a typo or a logger's reset clock, refused with this message.
EARLIEST = dt.date(1900, 1, 1)
LATEST = dt.date(2199, 12, 31)
DATE_RANGE = f"{EARLIEST.isoformat()} to {LATEST.isoformat()}"


def in_date_range(day: dt.date) -> bool:
    return EARLIEST <= day <= LATEST


def new_id() -> str:
    return uuid.uuid4().hex[:12]


def utc_now() -> datetime:
    return datetime.now(UTC).replace(microsecond=0)


def check_time_zone(name: str) -> str:
    """An IANA time zone name (as zoneinfo knows it), stripped; '' means UTC. A wrong name is
    refused with the nearest real one, so a typo is fixed in one go."""
    name = name.strip()
    if not name:
        return ""
    try:
        ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        close = difflib.get_close_matches(name, sorted(available_timezones()), n=1, cutoff=0.6)
        hint = f"; did you mean '{close[0]}'?" if close else " (an IANA name, e.g. 'America/Chicago')"
        raise ValueError(f"'{name}' is not a time zone name such as 'Europe/London'{hint}") from None
    return name


class VisitStatus(StrEnum):
    OPEN = "open"
    CLOSED = "closed"


class Reading(Strict):
    id: str = Field(default_factory=new_id, pattern=r"^[A-Za-z0-9_\-]{1,40}$")
    test_point: str = Field(min_length=1, max_length=40)
    value: AnyQuantity
    reference: PressureReference | None = None
    entered: str = Field(default="", max_length=64, description="the text as typed")
    condition: Condition = Field(default_factory=Condition)
    gauge: str | None = None
    taken_at: datetime = Field(default_factory=utc_now)
    note: str = Field(default="", max_length=MAX_TEXT)
    replaces: str | None = Field(default=None, description="id of the reading this one corrects")
    deleted_at: datetime | None = None
    #: Why a correction was made (asked for when a reading is corrected; kept with the new value).
    reason: str = Field(default="", max_length=MAX_TEXT)
    #: Taken after the repair, to prove it; the diagnosis reads only the readings before it.
    after_repair: bool = False
    #: Set by the store, never saved: why a stored value could not be read at all (an earlier
    #: version or a hand edit stored 'nan bar' or '24 furlongs'). ``entered`` then holds the
    #: stored text and ``value`` is a placeholder no computation may use; the reading does not
    #: stand (:meth:`Visit.current_readings`), the diagnosis names it as skipped, and it can be
    #: corrected or deleted like any other.
    unreadable: str = Field(default="", exclude=True)

    @model_validator(mode="before")
    @classmethod
    def _reference_from_text(cls, data: object) -> object:
        # "0.75 bar abs" written in a file carries its reference in the text; keep it.
        if isinstance(data, dict) and isinstance(data.get("value"), str):
            try:
                parsed = parse_value(data["value"])
            except FieldkitError as exc:
                raise ValueError(f"value: {exc}") from None
            said = data.get("reference")
            data = {**data, "value": parsed.quantity}
            if parsed.reference is not None and parsed.reference is not PressureReference.GAUGE:
                if said is not None and said != parsed.reference.value:
                    raise ValueError(f"value says {parsed.reference.value} but reference says {said}")
                data["reference"] = parsed.reference.value
            elif parsed.reference is not None and said is None:
                data["reference"] = PressureReference.GAUGE.value
        return data

    @model_validator(mode="after")
    def _pressures_are_gauge_unless_said(self) -> Reading:
        # Text without a reference reads as gauge; a quantity built in code must mean the same.

        if self.reference is None and kind_of(self.value) is Kind.PRESSURE:
            self.reference = PressureReference.GAUGE
        return self

    @field_validator("taken_at", "deleted_at")
    @classmethod
    def _aware(cls, value: datetime | None) -> datetime | None:
        if value is None:
            return None
        if value.tzinfo is None:
            raise ValueError("times must carry a time zone (ISO 8601 with Z or +hh:mm)")
        if not in_date_range(value.date()):
            raise ValueError(f"{value.isoformat()} is outside the dates fieldkit works with ({DATE_RANGE})")
        return value.astimezone(UTC)


class Observation(Strict):
    """One answered check (rules/observations.toml): a finding from eyes, ears or a thermometer."""

    id: str = Field(default_factory=new_id, pattern=r"^[A-Za-z0-9_\-]{1,40}$")
    check: str = Field(min_length=1, max_length=60, description="the observation's id in the rules")
    answer: str = Field(min_length=1, max_length=40)
    circuit: str | None = Field(default=None, max_length=40)
    test_point: str | None = Field(default=None, max_length=40)
    at: datetime = Field(default_factory=utc_now)
    note: str = Field(default="", max_length=MAX_TEXT)


class Scenario(Strict):
    """Demo and test data only: the fault a sample visit was written to show."""

    fault: str
    story: str = ""


class Visit(Strict):
    schema_version: int = SCHEMA_VERSION
    id: str = Field(default_factory=new_id, pattern=r"^[A-Za-z0-9_\-]{1,40}$")
    job_number: str = Field(min_length=1, max_length=40)
    customer: str = Field(default="", max_length=200)
    site: str = Field(default="", max_length=200)
    machine: str = Field(min_length=1, max_length=60, description="id of the machine profile")
    machine_serial: str = Field(default="", max_length=60)
    hour_meter: float | None = Field(default=None, ge=0, le=1_000_000)
    technician: str = Field(default="", max_length=120)
    date: dt.date = Field(default_factory=lambda: utc_now().date())
    oil: str = Field(default="", max_length=60)
    barometric_pressure: Pressure | None = None
    gauges: list[Gauge] = Field(default_factory=list)
    readings: list[Reading] = Field(default_factory=list)
    notes: str = Field(default="", max_length=MAX_TEXT)
    status: VisitStatus = VisitStatus.OPEN
    summary: str = Field(default="", max_length=MAX_TEXT)
    scenario: Scenario | None = None
    #: What the operator reports, in their words, and the symptoms picked (rules/symptoms.toml).
    complaint: str = Field(default="", max_length=MAX_TEXT)
    symptoms: list[str] = Field(default_factory=list)
    observations: list[Observation] = Field(default_factory=list)
    #: The repair and the machine's state on departure (fieldkit.model.repair).
    work: list[WorkItem] = Field(default_factory=list)
    departure: Departure | None = None
    #: IANA time zone of the site (e.g. 'Europe/London'); the card prints times in it. '' = UTC.
    time_zone: str = Field(default="", max_length=60)

    @field_validator("date")
    @classmethod
    def _sensible_date(cls, value: dt.date) -> dt.date:
        if not in_date_range(value):
            raise ValueError(f"{value.isoformat()} is outside the dates fieldkit works with ({DATE_RANGE})")
        return value

    @field_validator("time_zone")
    @classmethod
    def _known_zone(cls, value: str) -> str:
        return check_time_zone(value)

    @model_validator(mode="after")
    def _consistent(self) -> Visit:
        gauge_ids = [g.id for g in self.gauges]
        if len(set(gauge_ids)) != len(gauge_ids):
            raise ValueError("gauge ids must be unique")
        reading_ids = [r.id for r in self.readings]
        if len(set(reading_ids)) != len(reading_ids):
            raise ValueError("reading ids must be unique")
        for i, r in enumerate(self.readings):
            if r.gauge is not None and r.gauge not in gauge_ids:
                raise ValueError(
                    f"readings[{i}] names gauge '{r.gauge}', which is not in this visit's gauges"
                )
            if r.replaces is not None and r.replaces not in reading_ids:
                raise ValueError(
                    f"readings[{i}] replaces '{r.replaces}', which is not a reading of this visit"
                )
        return self

    def current_readings(self) -> list[Reading]:
        """Readings that stand: not deleted and not replaced by a correction (a stored value
        the store could not read stands for nothing: see :meth:`unreadable_readings`)."""
        replaced = {r.replaces for r in self.readings if r.replaces}
        return [
            r for r in self.readings if r.deleted_at is None and r.id not in replaced and not r.unreadable
        ]

    def without_unreadable(self) -> tuple[Visit, list[Reading]]:
        """The visit without the readings whose stored value could not be read (for an export,
        which another fieldkit must be able to read), and those left out. A correction of one
        stays, as a reading of its own that keeps its reason."""
        gone = [r for r in self.readings if r.unreadable]
        if not gone:
            return self, []
        ids = {r.id for r in gone}
        kept = [
            r.model_copy(update={"replaces": None}) if r.replaces in ids else r
            for r in self.readings
            if r.id not in ids
        ]
        return self.model_copy(update={"readings": kept}), gone

    def unreadable_readings(self) -> list[Reading]:
        """Stored readings whose value could not be read, not yet corrected or deleted."""
        replaced = {r.replaces for r in self.readings if r.replaces}
        return [r for r in self.readings if r.deleted_at is None and r.id not in replaced and r.unreadable]

    def diagnosis_view(self) -> Visit:
        """The visit as it stood before the repair: what found the fault."""
        if not any(r.after_repair for r in self.readings):
            return self
        keep = [r for r in self.readings if not r.after_repair]
        kept = {r.id for r in keep}
        return self.model_copy(
            update={"readings": [r for r in keep if r.replaces is None or r.replaces in kept]}
        )

    def retest_view(self) -> Visit:
        """The visit as the machine stands after the repair: at every point re-tested, the
        after-repair readings replace the earlier ones; other points keep what was found."""
        after = [r for r in self.current_readings() if r.after_repair]
        if not after:
            return self
        retested = {r.test_point for r in after}
        standing = [r for r in self.current_readings() if r.after_repair or r.test_point not in retested]
        return self.model_copy(update={"readings": standing})

    def retest_readings(self) -> list[Reading]:
        """Readings that stand and were taken after the repair."""
        return [r for r in self.current_readings() if r.after_repair]

    def local_zone(self) -> dt.tzinfo:
        return ZoneInfo(self.time_zone) if self.time_zone else UTC

    def gauge(self, gauge_id: str | None) -> Gauge | None:
        return next((g for g in self.gauges if g.id == gauge_id), None)
