"""Shared pieces of the physics package: unwrapping inputs, the range error, check results.

Every physics function checks each input's kind with :func:`fieldkit.units.require`, then
works on plain floats in SI units. The conversion factor from a unit to SI is looked up once
per unit and cached: a pint ``.to()`` costs about 25 µs, the cached factor a few, and the rule
engine and the simulator call these functions many thousands of times.

Two pint behaviours would give silently wrong numbers here and are handled on purpose:

* pint's ``revolution`` is 2π radian and the radian is dimensionless, so a displacement given
  as plain ``cm³`` converts to ``cm³/rev`` multiplied by 2π, and ``1/min`` converts to
  ``rev/min`` divided by 2π. A displacement or a speed whose unit carries no angle is read
  the way the trade writes it: per revolution, revolutions per minute.
* Temperatures have an offset (°C, °F), so they cannot be scaled by a factor; they go
  through a cached linear map to kelvin.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from enum import StrEnum
from functools import lru_cache
from typing import Any

import pint

from fieldkit.errors import DimensionError, FieldkitError
from fieldkit.units import CANONICAL_UNIT, Q_, Kind, Quantity, require, unit, ureg


class OutOfRangeError(FieldkitError, ValueError):
    """A quantity has the right kind but a value the physics cannot take (a negative bore,
    a rod as wide as the bore, an efficiency above 100 %)."""


#: SI unit per kind: what the formulas work in. Speed and displacement are per revolution.
SI_UNIT: dict[Kind, str] = {
    Kind.PRESSURE: "pascal",
    Kind.FLOW: "meter ** 3 / second",
    Kind.SPEED: "revolution / second",
    Kind.DISPLACEMENT: "meter ** 3 / revolution",
    Kind.VELOCITY: "meter / second",
    Kind.VOLUME: "meter ** 3",
    Kind.LENGTH: "meter",
    Kind.AREA: "meter ** 2",
    Kind.FORCE: "newton",
    Kind.TORQUE: "newton * meter",
    Kind.POWER: "watt",
    Kind.TIME: "second",
    Kind.MASS: "kilogram",
    Kind.DENSITY: "kilogram / meter ** 3",
    Kind.VISCOSITY: "meter ** 2 / second",
    Kind.RATIO: "dimensionless",
}

# What a speed or a displacement means when its unit carries no angle: one cycle is one revolution.
_ANGLE_FREE = {Kind.SPEED: "1 / second", Kind.DISPLACEMENT: "meter ** 3"}

KELVIN_OFFSET = 273.15


@lru_cache(maxsize=1024)
def _has_angle(units: pint.Unit) -> bool:
    root = ureg.get_root_units(units)[1]
    return dict(Q_(1.0, root).unit_items()).get("radian", 0) != 0


@lru_cache(maxsize=1024)
def _factor_to(units: pint.Unit, target: str) -> float:
    return float(Q_(1.0, units).to(unit(target)).magnitude)


def _factor(units: pint.Unit, kind: Kind) -> float:
    if kind in _ANGLE_FREE and not _has_angle(units):
        return _factor_to(units, _ANGLE_FREE[kind])
    return _factor_to(units, SI_UNIT[kind])


@lru_cache(maxsize=None)
def _from_si(kind: Kind) -> tuple[float, pint.Unit]:
    canonical = unit(CANONICAL_UNIT[kind])
    return 1.0 / _factor(canonical, kind), canonical


def shown(q: Any) -> str:
    """A quantity for a message, in the unit it came in (``3000 psi``, ``25 bar``)."""
    if isinstance(q, pint.Quantity):
        return f"{float(q.magnitude):.4g} {q.units:~P}"
    return repr(q)


def _finite(value: float, q: Any, what: str) -> float:
    if not math.isfinite(value):
        raise OutOfRangeError(f"{what} must be a finite number; got {q}")
    return value


def si(q: Any, kind: Kind, what: str, *, positive: bool = False, non_negative: bool = False) -> float:
    """Magnitude of ``q`` in SI (speed in rev/s, displacement in m³/rev) after checking its kind.

    Args:
        q: the quantity handed in.
        kind: what it must measure.
        what: its name in the caller's words, for the message (``"bore"``).
        positive: refuse zero and negative values.
        non_negative: refuse negative values.
    """
    require(q, kind, what)
    value = _finite(float(q.magnitude), q, what) * _factor(q.units, kind)
    if positive and not value > 0:
        raise OutOfRangeError(f"{what} must be above zero; got {shown(q)}")
    if non_negative and value < 0:
        raise OutOfRangeError(f"{what} must not be negative; got {shown(q)}")
    return value


def out(value_si: float, kind: Kind) -> Quantity:
    """A result in the kind's canonical unit (bar, L/min, kW…), the unit ranges and rules compare in."""
    scale, canonical = _from_si(kind)
    return Q_(value_si * scale, canonical)


def in_unit(q: Any, target: str, what: str, example: str, *, positive: bool = False) -> float:
    """Magnitude of ``q`` in ``target`` for a quantity with no :class:`Kind` of its own
    (specific heat, a heating rate), after checking its dimension."""
    if not isinstance(q, pint.Quantity) or q.dimensionality != unit(target).dimensionality:
        raise DimensionError(f"{what} must be given with a unit such as {example!r}; got {shown(q)}")
    value = _finite(float(q.magnitude), q, what) * _factor_to(q.units, target)
    if positive and not value > 0:
        raise OutOfRangeError(f"{what} must be above zero; got {shown(q)}")
    return value


@lru_cache(maxsize=64)
def _kelvin_map(units: pint.Unit) -> tuple[float, float]:
    zero = float(Q_(0.0, units).to(unit("kelvin")).magnitude)
    one = float(Q_(1.0, units).to(unit("kelvin")).magnitude)
    return one - zero, zero


def kelvin(q: Any, what: str) -> float:
    """Thermodynamic temperature in kelvin of a temperature in any scale; below absolute zero is refused."""
    require(q, Kind.TEMPERATURE, what)
    scale, offset = _kelvin_map(q.units)
    value = _finite(float(q.magnitude), q, what) * scale + offset
    if value <= 0:
        raise OutOfRangeError(f"{what} must be above absolute zero; got {shown(q)}")
    return value


def celsius(value_kelvin: float) -> Quantity:
    """A temperature result in °C, the canonical temperature unit."""
    return Q_(value_kelvin - KELVIN_OFFSET, unit("degC"))


#: A ratio as callers give it: a plain number from 0 to 1, or a dimensionless quantity (``Q_(90, "%")``).
Ratio = float | Quantity


def fraction(x: Any, what: str) -> float:
    """A ratio as a float above 0 and at most 1, from a dimensionless quantity (``Q_(90, "%")``)
    or a plain number.

    A plain number above 1 is refused rather than read as a percentage: ``90`` for an
    efficiency is far more likely a slip than a 9000 % machine.
    """
    if isinstance(x, pint.Quantity):
        if not x.dimensionless:
            raise DimensionError(f"{what} must be a ratio such as 0.9 or '90 %'; got {shown(x)}")
        value = float(x.to(unit("dimensionless")).magnitude)
    elif isinstance(x, (int, float)) and not isinstance(x, bool):
        value = float(x)
    else:
        raise DimensionError(f"{what} must be a ratio such as 0.9 or '90 %'; got {x!r}")
    if not 0.0 < _finite(value, x, what) <= 1.0:
        raise OutOfRangeError(f"{what} must be above 0 and at most 1 (100 %); got {shown(x)}")
    return value


def percent(value: float) -> Quantity:
    """A ratio result in percent, the canonical ratio unit."""
    return out(value, Kind.RATIO)


class Level(StrEnum):
    """How much a check result matters, least first."""

    OK = "ok"
    NOTE = "note"
    WARNING = "warning"
    ERROR = "error"


_RANK = {Level.OK: 0, Level.NOTE: 1, Level.WARNING: 2, Level.ERROR: 3}


@dataclass(frozen=True, slots=True)
class Check:
    """The outcome of a suitability or validity check, in words a technician can act on."""

    level: Level
    message: str

    @property
    def ok(self) -> bool:
        return self.level is Level.OK

    @staticmethod
    def combine(checks: Iterable[Check], ok_message: str) -> Check:
        """One result from several: the worst level, the messages of every finding above OK."""
        found = [c for c in checks if c.level is not Level.OK]
        if not found:
            return Check(Level.OK, ok_message)
        worst = max(found, key=lambda c: _RANK[c.level]).level
        ordered = sorted(found, key=lambda c: -_RANK[c.level])
        return Check(worst, "; ".join(c.message for c in ordered))
