"""Quantities inside pydantic models, written in files as the text a person would type.

A value is stored as ``"24.5 bar"``: readable in a hand-edited TOML profile or a visit JSON, parsed
by our own parser (never pint's), and written back with the float's shortest exact repr so that a
JSON export and import is an exact round trip.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import lru_cache
from typing import Annotated, Any

import pint
from pydantic import BeforeValidator, PlainSerializer, WithJsonSchema

from fieldkit.errors import FieldkitError
from fieldkit.units import (
    CANONICAL_UNIT,
    EXAMPLE,
    Q_,
    SPELLINGS,
    Kind,
    PressureReference,
    Quantity,
    format_value,
    kind_of,
    parse_value,
    unit,
)


@lru_cache(maxsize=None)
def _spelling_for(units: pint.Unit) -> str | None:
    for spelling, (expr, _kind) in SPELLINGS.items():
        if unit(expr) == units:
            return spelling
    return None


def spelling_of(q: Quantity) -> str | None:
    """Our spelling of a quantity's unit ('inHg', 'bar', 'L/min'), or None when we have none for it."""
    return _spelling_for(q.units)


def quantity_text(q: Quantity) -> str:
    """Exact text for a quantity, in the unit it was entered in when we know a spelling for it."""
    spelling = _spelling_for(q.units)
    return (
        format_value(q, kind=kind_of(q), spelling=spelling, exact=True)
        if spelling
        else format_value(q, exact=True)
    )


def _gauge_only(text: str, kind: Kind | None) -> Quantity:
    """Parse a value for a field that has no reference of its own (limits, settings, scales):
    they are gauge pressures, so '0.8 bar abs' here is refused rather than silently read as gauge."""
    parsed = parse_value(text, kind)
    if parsed.reference is not None and parsed.reference is not PressureReference.GAUGE:
        raise ValueError(
            f"'{text}' is an {parsed.reference.value} pressure; write it as gauge pressure here "
            f"(absolute minus the standard atmosphere, 1.01325 bar)"
        )
    return parsed.quantity


def _parser(kind: Kind) -> Callable[[Any], Quantity]:
    def parse(value: Any) -> Quantity:
        if isinstance(value, pint.Quantity):
            if kind_of(value) is not kind and value.dimensionality != Q_(1, unit_for(kind)).dimensionality:
                raise ValueError(f"{value:~P} is not a {kind.value}")
            return value
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            raise ValueError(f"a {kind.value} needs a unit: write it as text such as '{EXAMPLE[kind]}'")
        if not isinstance(value, str):
            raise ValueError(f"expected a {kind.value} as text such as '{EXAMPLE[kind]}'")
        try:
            return _gauge_only(value, kind)
        except FieldkitError as exc:  # pydantic shows ValueError messages with the field's location
            raise ValueError(str(exc)) from None

    return parse


def unit_for(kind: Kind) -> pint.Unit:

    return unit(CANONICAL_UNIT[kind])


def _typed(kind: Kind) -> Any:
    return Annotated[
        Quantity,
        BeforeValidator(_parser(kind)),
        PlainSerializer(quantity_text, return_type=str),
        WithJsonSchema(
            {"type": "string", "description": f"a {kind.value} with its unit, e.g. '{EXAMPLE[kind]}'"}
        ),
    ]


Pressure = _typed(Kind.PRESSURE)
Flow = _typed(Kind.FLOW)
Temperature = _typed(Kind.TEMPERATURE)
Speed = _typed(Kind.SPEED)
Displacement = _typed(Kind.DISPLACEMENT)
Velocity = _typed(Kind.VELOCITY)
Volume = _typed(Kind.VOLUME)
Length = _typed(Kind.LENGTH)
TimeSpan = _typed(Kind.TIME)
Ratio = _typed(Kind.RATIO)

TYPED_BY_KIND: dict[Kind, Any] = {
    Kind.PRESSURE: Pressure,
    Kind.FLOW: Flow,
    Kind.TEMPERATURE: Temperature,
    Kind.SPEED: Speed,
    Kind.DISPLACEMENT: Displacement,
    Kind.VELOCITY: Velocity,
    Kind.VOLUME: Volume,
    Kind.LENGTH: Length,
    Kind.TIME: TimeSpan,
    Kind.RATIO: Ratio,
}


def parse_for_kind(kind: Kind, value: Any) -> Quantity:
    """Validate one value of a kind outside a model (circuit parameters are a name → value table)."""
    return _parser(kind)(value)


def quantity_or_error(value: Any, what: str = "value") -> Quantity:
    """Any kind of quantity (a gauge's scale, a reading before its test point is known)."""
    if isinstance(value, pint.Quantity):
        kind_of(value)  # refuses quantities of no kind we use
        return value
    if not isinstance(value, str):
        raise ValueError(f"{what} must be text with a unit, such as '22 bar' or '62 L/min'")
    try:
        return _gauge_only(value, None)
    except FieldkitError as exc:
        raise ValueError(str(exc)) from None


AnyQuantity = Annotated[
    Quantity,
    BeforeValidator(quantity_or_error),
    PlainSerializer(quantity_text, return_type=str),
    WithJsonSchema({"type": "string", "description": "a value with its unit, e.g. '22 bar'"}),
]
