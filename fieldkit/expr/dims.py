"""Types of expression values: a pint dimensionality, or true/false.

pint is used here at compile time only; evaluation runs on plain floats in SI base units.
Checking is by dimension, so kinds that share one (a tank volume and a pump displacement,
a ratio and any plain number) are interchangeable inside an expression.
"""

from __future__ import annotations

import math
from enum import Enum
from functools import lru_cache
from typing import TypeAlias

import pint
from pint.util import UnitsContainer

from fieldkit.expr.errors import ExprError
from fieldkit.units import CANONICAL_UNIT, Q_, SPELLINGS, Kind, Quantity, unit

Dim: TypeAlias = UnitsContainer
DIMENSIONLESS: Dim = UnitsContainer()


class _Boolean:
    """The type of comparisons and logic: a singleton, compared with ``is``."""

    _instance: _Boolean | None = None

    def __new__(cls) -> _Boolean:
        if cls._instance is None:
            cls._instance = super().__new__(cls)
        return cls._instance

    def __repr__(self) -> str:
        return "BOOLEAN"

    def __str__(self) -> str:
        return "boolean"

    def __reduce__(self) -> str:
        return "BOOLEAN"


BOOLEAN = _Boolean()

ValueType: TypeAlias = Dim | _Boolean
#: What a caller may give as the type of a name or function parameter.
TypeSpec: TypeAlias = Kind | Dim | _Boolean


class TempTag(Enum):
    """What a value of dimension temperature means, to catch °C literals used as differences.

    Values are absolute (kelvin), so ``oil_temperature - 40 °C`` is a difference in K, and
    ``t_out - t_in > 20 °C`` would compare a difference with 293.15 K: refused at compile time.
    """

    POINT = "a temperature"
    POINT_LITERAL = "a temperature literal"  # written in °C or °F
    DELTA = "a temperature difference"
    EITHER = "a temperature in K"  # kelvin literals and mixed results: no check


def normalise(dim: Dim) -> Dim:
    """Drop zero exponents pint leaves behind (``d ** 0`` is not equal to dimensionless)."""
    if all(power != 0 for _, power in dim.items()):
        return dim
    return UnitsContainer({name: power for name, power in dim.items() if power != 0})


@lru_cache(maxsize=None)
def kind_dimension(kind: Kind) -> Dim:
    return normalise(unit(CANONICAL_UNIT[kind]).dimensionality)


def to_type(spec: object, what: str) -> ValueType:
    """A caller's type (Kind, pint dimensionality or BOOLEAN) as a ValueType."""
    if spec is BOOLEAN:
        return BOOLEAN
    if isinstance(spec, Kind):
        return kind_dimension(spec)
    if isinstance(spec, UnitsContainer):
        return normalise(spec)
    raise TypeError(f"{what}: expected a fieldkit.units.Kind, a pint dimensionality or BOOLEAN, got {spec!r}")


_KIND_NAMES: dict[Dim, str] = {}
for _kind in Kind:
    if _kind is not Kind.DISPLACEMENT:  # shares the dimension of volume
        _KIND_NAMES.setdefault(kind_dimension(_kind), _kind.value)
_KIND_NAMES[DIMENSIONLESS] = "plain number"


def kind_for(dim: ValueType) -> Kind | None:
    """The trade kind a result dimension reads as (volume, not displacement), if any."""
    for kind in Kind:
        if kind is not Kind.DISPLACEMENT and dim is not BOOLEAN and kind_dimension(kind) == dim:
            return kind
    return None


def describe(dim: ValueType) -> str:
    """'a pressure', 'an area', 'a true/false value', or the pint dimension for the rest."""
    if not isinstance(dim, Dim):
        return "a true/false value"
    name = _KIND_NAMES.get(dim)
    if name is None:
        return f"a quantity of dimension {dim}"
    return ("an " if name[0] in "aeiou" else "a ") + name


@lru_cache(maxsize=None)
def spelling_si(spelling: str) -> tuple[float, float, Dim, TempTag | None]:
    """For a unit spelling: SI value = offset + factor·magnitude, its dimension and temperature tag."""
    expr, _kind = SPELLINGS[spelling]
    u = unit(expr)
    zero = float(Q_(0.0, u).to_base_units().magnitude)
    one = float(Q_(1.0, u).to_base_units().magnitude)
    dim = normalise(u.dimensionality)
    tag = None
    if dim == kind_dimension(Kind.TEMPERATURE):
        tag = TempTag.POINT_LITERAL if zero != 0.0 else TempTag.EITHER
    return zero, one - zero, dim, tag


def literal_si(magnitude: float, spelling: str | None) -> float:
    """A literal's value in SI base units (``40 °C`` → 313.15, ``90 %`` → 0.9)."""
    if spelling is None:
        return magnitude
    offset, factor, _dim, _tag = spelling_si(spelling)
    return offset + factor * magnitude


_BASE_UNITS = {
    "[length]": "meter",
    "[mass]": "kilogram",
    "[time]": "second",
    "[temperature]": "kelvin",
    "[current]": "ampere",
    "[substance]": "mole",
    "[luminosity]": "candela",
}


@lru_cache(maxsize=256)
def base_unit(dim: Dim) -> pint.Unit:
    """The SI base unit of a dimension, the unit every evaluated float is in."""
    parts = [f"{_BASE_UNITS[name]} ** {power}" for name, power in dim.items()]
    return unit(" * ".join(parts) if parts else "dimensionless")


def to_quantity(value: float, dim: Dim, temperature_difference: bool = False) -> Quantity:
    """A result float back as a pint quantity, for messages and display: in the canonical unit
    of its kind (bar, L/min, °C, %) when it has one, else in SI base units.

    A temperature difference comes back in ``delta_degC`` so pint never reads it as a
    temperature near absolute zero.
    """
    if temperature_difference and dim == kind_dimension(Kind.TEMPERATURE):
        return Q_(value, unit("delta_degC"))
    quantity = Q_(value, base_unit(dim))
    kind = kind_for(dim)
    return quantity if kind is None else quantity.to(unit(CANONICAL_UNIT[kind]))


def si_value(q: Quantity) -> float:
    """The float an expression expects for a quantity: its magnitude in SI base units
    (temperatures absolute, in kelvin; ratios as fractions; speeds in rad/s)."""
    value = float(q.to_base_units().magnitude)
    if not math.isfinite(value):
        raise ExprError(f"{q!r} is not a finite number")
    return value
