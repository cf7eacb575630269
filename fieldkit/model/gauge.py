"""Gauges and meters as the technician connects them: range and accuracy class.

The accuracy class decides whether a reading near a limit is a pass, a fail or 'inconclusive',
so it is part of every reading's record.
"""

from __future__ import annotations

import datetime as dt

from pydantic import Field, model_validator

from fieldkit.model.base import Strict
from fieldkit.model.quantity import AnyQuantity, spelling_of
from fieldkit.units import Q_, DisplaySystem, Kind, Quantity, format_value, kind_of

#: EN 837-1 accuracy classes for Bourdon-tube pressure gauges (limit of error, % of span).
EN837_CLASSES = (0.1, 0.25, 0.6, 1.0, 1.6, 2.5, 4.0)


class Gauge(Strict):
    id: str = Field(min_length=1, max_length=40, pattern=r"^[A-Za-z0-9_.\-]+$")
    label: str = ""
    full_scale: AnyQuantity = Field(description="top of the scale, e.g. '60 bar' or '100 L/min'")
    scale_start: AnyQuantity | None = Field(
        default=None, description="bottom of the scale; '-1 bar' for a compound gauge"
    )
    accuracy_class: float = Field(
        gt=0, le=10, description="limit of error as % of span (EN 837-1 class for pressure gauges)"
    )
    standard: str = "EN 837-1"
    #: Copied from the technician's kit (fieldkit.model.kit) when the gauge was picked, so an
    #: old visit keeps what the gauge was on the day even after it is retired.
    serial: str = Field(default="", max_length=60)
    calibration_due: dt.date | None = None
    kit_item: str | None = None

    @model_validator(mode="after")
    def _check(self) -> Gauge:
        kind = kind_of(self.full_scale)
        if kind is Kind.PRESSURE and self.standard == "EN 837-1" and self.accuracy_class not in EN837_CLASSES:
            raise ValueError(
                f"accuracy class {self.accuracy_class} is not an EN 837-1 class "
                f"({', '.join(map(str, EN837_CLASSES))})"
            )
        if self.scale_start is not None and kind_of(self.scale_start) is not kind:
            raise ValueError("scale_start and full_scale must be the same kind of quantity")
        if self.scale_start is not None and self.scale_start >= self.full_scale:
            raise ValueError("scale_start must be below full_scale")
        return self

    @property
    def kind(self) -> Kind:
        return kind_of(self.full_scale)

    def span_text(self, system: DisplaySystem | None = None, sep: str = "–") -> str:
        """The gauge's true span as its dial reads: see :func:`span_text`."""
        return span_text(self.scale_start, self.full_scale, system, sep)

    @property
    def span(self) -> Quantity:
        start = self.scale_start if self.scale_start is not None else 0 * self.full_scale
        span: Quantity = self.full_scale - start
        return span


#: A dial marked in inHg reads vacuum without a sign ("30 inHg vac"; common practice on vacuum and
#: compound gauges). Other units show the sign, as compound gauges in bar or kPa are marked.
_UNSIGNED_VACUUM_SPELLINGS = ("inHg",)


def dial_text(q: Quantity | None, system: DisplaySystem | None = None) -> str:
    """One end of a scale as the dial (or, with ``system``, the user's units) marks it: zero as
    '0', a vacuum in inHg as '30 inHg vac', anything else with its sign ('-1 bar')."""
    if q is None or q.magnitude == 0:
        return "0"
    kind = kind_of(q)
    if system is not None:
        return format_value(q, system, kind=kind)
    spelling = spelling_of(q)
    if spelling in _UNSIGNED_VACUUM_SPELLINGS and q.magnitude < 0:
        return f"{format_value(Q_(-float(q.magnitude), q.units), kind=kind, spelling=spelling)} vac"
    return format_value(q, kind=kind, spelling=spelling)


def span_text(
    start: Quantity | None, top: Quantity, system: DisplaySystem | None = None, sep: str = "–"
) -> str:
    """A scale's true span: '0–600 bar', '-1 bar–1.5 bar' (compound), '30 inHg vac–0' (vacuum).

    In the dial's own units by default; in the user's units with ``system``, adding the dial's
    marking when it is in other units ('-1.016 bar–0 (dial 30 inHg vac–0)') so the printed span
    can be matched to the instrument in the hand."""
    if system is None:
        if start is None or start.magnitude == 0:
            return f"0{sep}{dial_text(top)}"
        return f"{dial_text(start)}{sep}{dial_text(top)}"
    shown = f"{dial_text(start, system)}{sep}{dial_text(top, system)}"
    kind = kind_of(top)
    dial = span_text(start, top, None, sep)
    if dial != shown and system.spelling_for(kind) != spelling_of(top):
        return f"{shown} (dial {dial})"
    return shown
