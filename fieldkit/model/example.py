"""The example value a test point offers ("e.g. 1 bar"): taken from the point's own expected range,
in the unit that range is written in.

A fixed example per kind ("e.g. 22 bar" everywhere) misleads: at a case pressure point that
should read at most 2 bar it suggests ten times too much, at a suction point it suggests a
pressure where a vacuum is expected, and a technician copying it would be asked about an
over-pressure. The example is a value a healthy machine would show there, so typing it is never
refused or questioned.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import pint

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import ExpectedRange, TestPoint
from fieldkit.model.quantity import spelling_of
from fieldkit.units import (
    CANONICAL_UNIT,
    EXAMPLE,
    Q_,
    SPELLINGS,
    Kind,
    Quantity,
    format_value,
    magnitude_in,
    parse_value,
    to_canonical,
    unit,
)


def range_for(point: TestPoint, function: FunctionState | None) -> ExpectedRange | None:
    """The expected range that applies in this function state (the first one that does), or the
    point's first range when none names the state."""
    for rng in point.expected:
        if function is None or not rng.when.function or function in rng.when.function:
            return rng
    return point.expected[0] if point.expected else None


def example_value(point: TestPoint, function: FunctionState | None = None) -> Quantity:
    """A value a healthy machine shows at this point, inside its expected range (the middle of a
    closed range; half-way to zero, or a fifth past a floor, for a one-sided one) and below its
    rated pressure, rounded to two significant digits when that stays inside."""
    rng = range_for(point, function)
    kind = point.kind
    if rng is None:
        return _without_range(point)
    bound = rng.low if rng.low is not None else rng.high
    assert bound is not None  # a range has low, high or both (ExpectedRange._check)
    units = _unit_of(bound, kind)
    low = magnitude_in(rng.low, units) if rng.low is not None else None
    high = magnitude_in(rng.high, units) if rng.high is not None else None
    if low is not None and high is not None:
        value = (low + high) / 2
    elif high is not None:
        value = high / 2 if high > 0 else high * 1.5  # at most 2 bar → 1 bar
    else:
        assert low is not None
        value = low / 2 if low < 0 else (low * 1.2 if low > 0 else 1.0)  # at least −0.17 bar → −0.085
        ceiling = _rating_in(point, units)
        if ceiling is not None and low < ceiling < value:
            value = (low + ceiling) / 2
    inside = _inside(low, high, _rating_in(point, units) if kind is Kind.PRESSURE else None)
    return Q_(_round_inside(value, inside), units)


def example_text(point: TestPoint, function: FunctionState | None = None) -> str:
    """The example as a technician would type it ('1 bar', '−0.085 bar', '2.8 L/min'); it parses
    back to the same value with :func:`fieldkit.units.parse_value`. A vacuum is shown with the
    minus sign (U+2212) the parser also reads, as printed text writes it: a leading '-' reads as
    an option to a command line or a terminal tool the example is pasted into."""
    q = example_value(point, function)
    text = format_value(q, kind=point.kind, spelling=spelling_of(q), significant=6)
    return "\u2212" + text[1:] if text.startswith("-") else text


def _without_range(point: TestPoint) -> Quantity:
    """No expected range: the kind's usual example, kept below the point's rating when it has one."""
    usual = parse_value(EXAMPLE[point.kind], point.kind).quantity
    if point.kind is Kind.PRESSURE and point.max_pressure is not None:
        top = to_canonical(point.max_pressure, Kind.PRESSURE)
        if to_canonical(usual, Kind.PRESSURE) >= top:
            units = _unit_of(point.max_pressure, Kind.PRESSURE)
            half = magnitude_in(point.max_pressure, units) / 2
            return Q_(_round_inside(half, lambda v: 0 < v < 2 * half), units)
    return usual


def _unit_of(q: Quantity, kind: Kind) -> pint.Unit:
    """The unit a value is written in, as one of our spellings (the kind's canonical unit else)."""
    spelling = spelling_of(q)
    return unit(SPELLINGS[spelling][0] if spelling else CANONICAL_UNIT[kind])


def _rating_in(point: TestPoint, units: pint.Unit) -> float | None:
    if point.kind is not Kind.PRESSURE or point.max_pressure is None:
        return None
    return magnitude_in(point.max_pressure, units)


def _inside(low: float | None, high: float | None, rating: float | None) -> Callable[[float], bool]:
    def ok(v: float) -> bool:
        return (
            (low is None or v >= low)
            and (high is None or v <= high)
            and (rating is None or v < rating)
            and (v != 0 or low is not None and low <= 0 <= (high if high is not None else 0))
        )

    return ok


def _round_inside(value: float, ok: Callable[[float], bool]) -> float:
    """``value`` to two significant digits (three, four… while rounding leaves the range)."""
    if value == 0:
        return 0.0
    for digits in (2, 3, 4, 6):
        rounded = round(value, digits - 1 - math.floor(math.log10(abs(value))))
        if ok(rounded):
            return rounded
    return value
