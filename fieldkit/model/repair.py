"""What the technician did about the fault, and the state the machine was left in.

The visit's readings are split in two by :attr:`Reading.after_repair`: those that found the fault
and those that prove the repair. The diagnosis reads the first; the re-test compares the second
with the first at the same point and condition.
"""

from __future__ import annotations

import uuid
from datetime import UTC, datetime
from enum import StrEnum

from pydantic import Field, model_validator

from fieldkit.model.base import Strict
from fieldkit.model.quantity import AnyQuantity
from fieldkit.units import DisplaySystem, format_value

MAX_TEXT = 4000


def _new_id() -> str:
    return uuid.uuid4().hex[:12]


def _now() -> datetime:
    return datetime.now(UTC).replace(microsecond=0)


class WorkKind(StrEnum):
    FITTED = "fitted"
    ADJUSTED = "adjusted"
    CLEANED = "cleaned"
    REPAIRED = "repaired"
    INSPECTED = "inspected"


class WorkItem(Strict):
    """One piece of work: a part fitted or a valve adjusted (with its new setting), in plain words."""

    id: str = Field(default_factory=_new_id, pattern=r"^[A-Za-z0-9_\-]{1,40}$")
    kind: WorkKind
    part: str = Field(
        min_length=1, max_length=200, description="what was worked on, e.g. 'charge relief valve'"
    )
    setting: AnyQuantity | None = Field(
        default=None, description="the new setting, e.g. '24 bar' for a relief"
    )
    note: str = Field(default="", max_length=MAX_TEXT)
    done_at: datetime = Field(default_factory=_now)

    def describe(self) -> str:
        return self.describe_in(None)

    def describe_in(self, system: DisplaySystem | None) -> str:
        """In words, the new setting in the display system given (None: as typed)."""
        text = f"{self.part}: {self.kind.value}"
        if self.setting is not None:
            shown = format_value(self.setting, system) if system is not None else format_value(self.setting)
            text += f", set to {shown}"
        if self.note:
            text += f" ({self.note})"
        return text


class MachineStatus(StrEnum):
    FIT = "fit_to_run"
    LIMITED = "fit_with_limits"
    DO_NOT_OPERATE = "do_not_operate"

    @property
    def label(self) -> str:
        return {
            "fit_to_run": "Fit to run",
            "fit_with_limits": "Fit to run with limits",
            "do_not_operate": "Do not operate",
        }[self.value]


class Departure(Strict):
    """The machine's state when the technician leaves it: the card's answer to 'can we use it?'."""

    status: MachineStatus
    limits: str = Field(default="", max_length=MAX_TEXT, description="for fit with limits: which limits")
    why: str = Field(
        default="",
        max_length=MAX_TEXT,
        description="why it must not run, or why an open danger is acceptable",
    )
    next_action: str = Field(default="", max_length=MAX_TEXT)
    decided_at: datetime = Field(default_factory=_now)

    @model_validator(mode="after")
    def _says_enough(self) -> Departure:
        if self.status is MachineStatus.LIMITED and not self.limits.strip():
            raise ValueError("'fit to run with limits' must say which limits (e.g. 'no travel on slopes')")
        if self.status is MachineStatus.DO_NOT_OPERATE and not self.why.strip():
            raise ValueError("'do not operate' must say why, for the tag-out notice")
        return self


__all__ = ["Departure", "MachineStatus", "WorkItem", "WorkKind"]
