"""Operating conditions: what the machine was doing when a reading was taken.

A charge pressure means one thing in neutral and another with the drive in full stroke, so every
reading states its condition and every expected range says which condition it is for.
"""

from __future__ import annotations

from enum import StrEnum

from pydantic import Field

from fieldkit.model.base import Strict
from fieldkit.model.quantity import Speed, Temperature
from fieldkit.units import METRIC, DisplaySystem, format_value


class FunctionState(StrEnum):
    NEUTRAL = "neutral"
    FULL_STROKE = "full_stroke"
    STALLED = "stalled"
    UNDER_LOAD = "under_load"

    @property
    def short(self) -> str:
        """For tables: 'full stroke' rather than 'function at full stroke'."""
        return self.value.replace("_", " ")

    @property
    def label(self) -> str:
        return {
            "neutral": "function in neutral",
            "full_stroke": "function at full stroke",
            "stalled": "function stalled over relief",
            "under_load": "function under working load",
        }[self.value]


class ConditionSource(StrEnum):
    """Where a speed or oil temperature in a reading's condition came from. A condition is a
    fact about that reading, so the job card can say which ones were assumed rather than read."""

    #: typed by the technician for this reading
    TYPED = "typed"
    #: typed for an earlier reading and left in the field (assumed unchanged)
    CARRIED = "carried"
    #: the value of the latest speed or oil temperature reading on the visit (assumed unchanged)
    READING = "reading"

    @property
    def assumed(self) -> bool:
        return self is not ConditionSource.TYPED

    @property
    def words(self) -> str:
        return {
            "typed": "typed for the reading",
            "carried": "as typed for an earlier reading",
            "reading": "from the latest reading of it",
        }[self.value]


class Condition(Strict):
    """The condition a technician set for one reading. A speed or oil temperature left out is
    "not measured" (never the rated speed or a remembered value); ``speed_from``/``oil_from``
    say how a stated one was obtained (None in visits from before they were recorded)."""

    function: FunctionState = FunctionState.NEUTRAL
    speed: Speed | None = Field(default=None, description="engine or pump speed while reading")
    oil_temperature: Temperature | None = Field(default=None, description="oil temperature while reading")
    speed_from: ConditionSource | None = Field(default=None, description="how the speed was obtained")
    oil_from: ConditionSource | None = Field(default=None, description="how the oil temperature was obtained")

    def describe(self, system: DisplaySystem | None = None) -> str:
        """In words, temperatures in the display system given (the metric default otherwise)."""
        shown = system or METRIC
        parts = [self.function.short]
        if self.speed is not None:
            parts.append(format_value(self.speed, shown, significant=4))
        if self.oil_temperature is not None:
            parts.append(format_value(self.oil_temperature, shown, significant=2))
        return ", ".join(parts)


class ConditionSpec(Strict):
    """Which conditions an expected range applies to; empty means any."""

    function: list[FunctionState] = Field(default_factory=list)
    speed_min: Speed | None = None
    speed_max: Speed | None = None

    def matches(self, condition: Condition) -> bool:
        if self.function and condition.function not in self.function:
            return False
        if condition.speed is not None:
            if self.speed_min is not None and condition.speed < self.speed_min:
                return False
            if self.speed_max is not None and condition.speed > self.speed_max:
                return False
        return True
