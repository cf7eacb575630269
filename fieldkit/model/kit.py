"""The technician's own instruments, kept once and picked for each visit.

A gauge belongs to the technician, not to a visit: its serial, its span and its calibration date
stay the same from one machine to the next. A visit takes a *copy* of the item when it is picked
(:meth:`KitItem.as_gauge`), so a visit closed years ago still reads the same after the gauge is
retired or re-calibrated.
"""

from __future__ import annotations

import datetime as dt
import re
from enum import StrEnum

from pydantic import Field, model_validator

from fieldkit.errors import FieldkitError
from fieldkit.model.base import Strict
from fieldkit.model.gauge import EN837_CLASSES, Gauge
from fieldkit.model.quantity import AnyQuantity
from fieldkit.units import Q_, Kind, Quantity, kind_of, parse_value

MAX_LABEL = 120


class InstrumentKind(StrEnum):
    PRESSURE_GAUGE = "pressure_gauge"
    THERMOMETER = "thermometer"
    FLOW_METER = "flow_meter"
    TACHOMETER = "tachometer"

    @property
    def measures(self) -> Kind:
        return _MEASURES[self]

    @property
    def label(self) -> str:
        return self.value.replace("_", " ")


_MEASURES = {
    InstrumentKind.PRESSURE_GAUGE: Kind.PRESSURE,
    InstrumentKind.THERMOMETER: Kind.TEMPERATURE,
    InstrumentKind.FLOW_METER: Kind.FLOW,
    InstrumentKind.TACHOMETER: Kind.SPEED,
}


class KitItem(Strict):
    """One instrument of the kit. ``scale_start`` below zero makes a compound gauge
    (``-1..15 bar``); a scale ending at zero is a vacuum gauge (``-1..0 bar``)."""

    id: str = Field(min_length=1, max_length=40, pattern=r"^[A-Za-z0-9_.\-]+$")
    kind: InstrumentKind
    label: str = Field(default="", max_length=MAX_LABEL)
    full_scale: AnyQuantity
    scale_start: AnyQuantity | None = None
    accuracy_class: float = Field(gt=0, le=10, description="limit of error as % of span")
    standard: str = Field(default="EN 837-1", max_length=80)
    serial: str = Field(default="", max_length=60)
    calibration_due: dt.date | None = None
    retired_on: dt.date | None = None

    @model_validator(mode="after")
    def _check(self) -> KitItem:
        if kind_of(self.full_scale) is not self.kind.measures:
            raise ValueError(
                f"a {self.kind.label} measures {self.kind.measures.value}; "
                f"its scale cannot end at a {kind_of(self.full_scale).value}"
            )
        # The gauge model carries the span rules (class list, start below end); check once here.
        self.as_gauge()
        return self

    def as_gauge(self) -> Gauge:
        """The copy a visit keeps: span, class, serial and calibration date as they were."""
        return Gauge(
            id=self.id,
            label=self.label or f"{self.kind.label} {self.serial}".strip(),
            full_scale=self.full_scale,
            scale_start=self.scale_start,
            accuracy_class=self.accuracy_class,
            standard=self.standard,
            serial=self.serial,
            calibration_due=self.calibration_due,
            kit_item=self.id,
        )

    @classmethod
    def from_gauge(cls, gauge: Gauge, kind: InstrumentKind) -> KitItem:
        """The kit entry for a gauge typed in on a visit: the inverse of :meth:`as_gauge`, kept
        beside it so the two field lists cannot drift apart."""
        return cls(
            id=gauge.id,
            kind=kind,
            label=gauge.label,
            full_scale=gauge.full_scale,
            scale_start=gauge.scale_start,
            accuracy_class=gauge.accuracy_class,
            standard=gauge.standard,
            serial=gauge.serial,
            calibration_due=gauge.calibration_due,
        )

    @property
    def retired(self) -> bool:
        return self.retired_on is not None

    def span_text(self) -> str:
        return self.as_gauge().span_text(sep=" to ")


def calibration_warning(gauge: Gauge | KitItem, on: dt.date) -> str:
    """Why a gauge should not be trusted on ``on`` without a check, or '' when it is in date."""
    due = gauge.calibration_due
    if due is None or due >= on:
        return ""
    return (
        f"gauge {gauge.id}: calibration was due on {due.isoformat()}; "
        "its readings are not backed by a calibration"
    )


_NUMBER = r"[-+]?[\d.,\s]+"


def _bare_number(text: str) -> bool:
    """A span end typed without its unit, to take the other end's."""
    return re.fullmatch(_NUMBER, text) is not None


def _unit_part(text: str) -> str:
    return re.sub(rf"^{_NUMBER}", "", text)


def parse_span(text: str, decimal_comma: bool = False) -> tuple[Quantity | None, Quantity]:
    """``'0..60 bar'``, ``'-1..15 bar'`` (compound), ``'-30..0 inHg'`` (vacuum), or ``'60 bar'``
    (from zero) → (start or None, full scale). The unit after the upper end serves both ends."""
    raw = text.strip()
    if ".." not in raw:
        return None, parse_value(raw, decimal_comma=decimal_comma).quantity
    low_text, high_text = (part.strip() for part in raw.split("..", 1))
    try:
        high = parse_value(high_text, decimal_comma=decimal_comma).quantity
    except FieldkitError:
        # A vacuum dial is marked from its far end ("30 inHg vac..0"): the unit may come first.
        if not _bare_number(high_text):
            raise
        low = parse_value(low_text, decimal_comma=decimal_comma).quantity
        high = parse_value(f"{high_text} {_unit_part(low_text)}", decimal_comma=decimal_comma).quantity
    else:
        try:
            low = parse_value(low_text, decimal_comma=decimal_comma).quantity
        except FieldkitError:
            if not _bare_number(low_text):
                raise
            low = parse_value(f"{low_text} {_unit_part(high_text)}", decimal_comma=decimal_comma).quantity
    if high.magnitude == 0:
        high = Q_(0.0, high.units)  # "0 inHg vac" reads -0.0; the dial's end is plain 0
    if low.magnitude == 0 and kind_of(high) is not Kind.TEMPERATURE:
        return None, high
    return low, high


__all__ = ["EN837_CLASSES", "InstrumentKind", "KitItem", "calibration_warning", "parse_span"]
