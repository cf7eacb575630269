"""Text a technician types ⇄ pint quantities, and the display systems they read values in.

pint's own string parser is never given user text: it deletes commas (``2,5 bar`` would become
25 bar), its case-insensitive mode turns ``mpa`` into millipascal, and ``bar(g)`` parses as
bar·gram. Here the number and the unit are split by our own code, the unit must be one of a
whitelist of spellings, the decimal separator is decided explicitly, and only then is a
quantity built from a float and a known unit (also several times faster than string parsing).

pint has no gauge pressure. Every pressure carries a separate reference (gauge, absolute,
differential); converting between gauge and absolute uses the standard atmosphere unless a
visit records the local barometric pressure.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from decimal import Decimal
from enum import StrEnum
from functools import lru_cache
from typing import TYPE_CHECKING, Any, TypeAlias

import pint

from fieldkit.errors import AmbiguousInputError, DimensionError, UnitInputError

# One registry for the whole program: building it costs ~0.3 s cold, ~0.06 s from its cache,
# and pint's lazy default registry is not thread-safe.
try:
    ureg: pint.UnitRegistry[Any] = pint.UnitRegistry(cache_folder=":auto:")
except Exception:  # an unwritable cache folder must not stop the program; build without it
    ureg = pint.UnitRegistry()
ureg.formatter.default_format = "~P"
Q_ = ureg.Quantity

if TYPE_CHECKING:
    #: A pint quantity as fieldkit passes it around. Its magnitude is a Python number (a float,
    #: an int, or a Decimal straight from typed text); pint types the magnitude with an
    #: invariant type variable, so "any real number" can only be said as Any.
    Quantity: TypeAlias = pint.Quantity[Any]
else:
    Quantity = pint.Quantity

#: Standard atmosphere, 101 325 Pa exactly (SI Brochure, 9th ed., table 8).
STANDARD_ATMOSPHERE = Q_(101_325.0, "pascal")

MAX_INPUT_CHARS = 64


class Kind(StrEnum):
    """What a quantity measures, as the trade names it (finer than pint's dimensions:
    a pump displacement and a tank volume share a dimension but are different things)."""

    PRESSURE = "pressure"
    FLOW = "flow"
    TEMPERATURE = "temperature"
    SPEED = "rotational speed"
    DISPLACEMENT = "displacement"
    VELOCITY = "velocity"
    VOLUME = "volume"
    LENGTH = "length"
    AREA = "area"
    FORCE = "force"
    TORQUE = "torque"
    POWER = "power"
    TIME = "time"
    MASS = "mass"
    DENSITY = "density"
    VISCOSITY = "kinematic viscosity"
    RATIO = "ratio"


class PressureReference(StrEnum):
    """What a pressure is measured against."""

    GAUGE = "gauge"
    ABSOLUTE = "absolute"
    DIFFERENTIAL = "differential"


#: A pint unit expression per kind that every value of that kind converts to; also its
#: pint dimensionality, checked when a quantity arrives from code rather than text.
CANONICAL_UNIT: dict[Kind, str] = {
    Kind.PRESSURE: "bar",
    Kind.FLOW: "liter / minute",
    Kind.TEMPERATURE: "degC",
    Kind.SPEED: "revolution / minute",
    Kind.DISPLACEMENT: "centimeter ** 3 / revolution",
    Kind.VELOCITY: "millimeter / minute",
    Kind.VOLUME: "liter",
    Kind.LENGTH: "millimeter",
    Kind.AREA: "centimeter ** 2",
    Kind.FORCE: "kilonewton",
    Kind.TORQUE: "newton * meter",
    Kind.POWER: "kilowatt",
    Kind.TIME: "second",
    Kind.MASS: "kilogram",
    Kind.DENSITY: "kilogram / meter ** 3",
    Kind.VISCOSITY: "centistokes",
    Kind.RATIO: "percent",
}

#: An example a person would recognise, used in error messages.
EXAMPLE: dict[Kind, str] = {
    Kind.PRESSURE: "22 bar",
    Kind.FLOW: "62 L/min",
    Kind.TEMPERATURE: "55 °C",
    Kind.SPEED: "1800 rpm",
    Kind.DISPLACEMENT: "45 cc/rev",
    Kind.VELOCITY: "12 mm/min",
    Kind.VOLUME: "10 L",
    Kind.LENGTH: "80 mm",
    Kind.AREA: "50 cm2",
    Kind.FORCE: "150 kN",
    Kind.TORQUE: "400 N·m",
    Kind.POWER: "30 kW",
    Kind.TIME: "30 s",
    Kind.MASS: "12 kg",
    Kind.DENSITY: "870 kg/m3",
    Kind.VISCOSITY: "32 cSt",
    Kind.RATIO: "90 %",
}

# Spelling → (pint unit expression, kind). Case matters except where a spelling is listed in
# several cases on purpose: "MPa" typed as "mpa" means megapascal in this trade, never millipascal.
_PRESSURE = {
    "bar": "bar",
    "Bar": "bar",
    "BAR": "bar",
    "mbar": "millibar",
    "psi": "psi",
    "PSI": "psi",
    "Psi": "psi",
    "lbf/in2": "psi",
    "lb/in2": "psi",
    "lbf/in²": "psi",
    "MPa": "megapascal",
    "Mpa": "megapascal",
    "mpa": "megapascal",
    "MPA": "megapascal",
    "kPa": "kilopascal",
    "kpa": "kilopascal",
    "KPa": "kilopascal",
    "KPA": "kilopascal",
    "Pa": "pascal",
    "kgf/cm2": "kilogram_force / centimeter ** 2",
    "kgf/cm²": "kilogram_force / centimeter ** 2",
    "kgf/cm^2": "kilogram_force / centimeter ** 2",
    "kg/cm2": "kilogram_force / centimeter ** 2",
    "kg/cm²": "kilogram_force / centimeter ** 2",
    "ksc": "kilogram_force / centimeter ** 2",
    "inHg": "inch_Hg",
    "in Hg": "inch_Hg",
    "inhg": "inch_Hg",
    "atm": "atmosphere",
}
_FLOW = {
    "L/min": "liter / minute",
    "l/min": "liter / minute",
    "lpm": "liter / minute",
    "LPM": "liter / minute",
    "L/s": "liter / second",
    "l/s": "liter / second",
    "gpm": "gallon / minute",
    "GPM": "gallon / minute",
    "USgpm": "gallon / minute",
    "gal/min": "gallon / minute",
    "cc/min": "centimeter ** 3 / minute",
    "cm3/min": "centimeter ** 3 / minute",
    "mL/min": "milliliter / minute",
    "ml/min": "milliliter / minute",
    "m3/h": "meter ** 3 / hour",
    "m³/h": "meter ** 3 / hour",
}
_TEMPERATURE = {
    "°C": "degC",
    "ºC": "degC",
    "C": "degC",
    "degC": "degC",
    "deg C": "degC",
    "° C": "degC",
    "°F": "degF",
    "ºF": "degF",
    "F": "degF",
    "degF": "degF",
    "deg F": "degF",
    "° F": "degF",
    "K": "kelvin",
}
_SPEED = {
    "rpm": "revolution / minute",
    "RPM": "revolution / minute",
    "r/min": "revolution / minute",
    "rev/min": "revolution / minute",
    "min-1": "revolution / minute",
    "1/min": "revolution / minute",
    "rev/s": "revolution / second",
}
_DISPLACEMENT = {
    "cc/rev": "centimeter ** 3 / revolution",
    "cm3/rev": "centimeter ** 3 / revolution",
    "cm³/rev": "centimeter ** 3 / revolution",
    "ml/rev": "centimeter ** 3 / revolution",
    "mL/rev": "centimeter ** 3 / revolution",
    "cc/r": "centimeter ** 3 / revolution",
    "in3/rev": "inch ** 3 / revolution",
    "in³/rev": "inch ** 3 / revolution",
    "cir": "inch ** 3 / revolution",
}
_VELOCITY = {
    "mm/min": "millimeter / minute",
    "mm/s": "millimeter / second",
    "mm/h": "millimeter / hour",
    "m/s": "meter / second",
    "in/min": "inch / minute",
    "in/s": "inch / second",
}
_VOLUME = {
    "L": "liter",
    "l": "liter",
    "mL": "milliliter",
    "ml": "milliliter",
    "cc": "centimeter ** 3",
    "cm3": "centimeter ** 3",
    "cm³": "centimeter ** 3",
    "gal": "gallon",
    "in3": "inch ** 3",
    "in³": "inch ** 3",
    "m3": "meter ** 3",
    "m³": "meter ** 3",
}
_LENGTH = {
    "mm": "millimeter",
    "cm": "centimeter",
    "m": "meter",
    "in": "inch",
    "µm": "micrometer",
    "um": "micrometer",
}
_AREA = {
    "mm2": "millimeter ** 2",
    "mm²": "millimeter ** 2",
    "cm2": "centimeter ** 2",
    "cm²": "centimeter ** 2",
    "in2": "inch ** 2",
    "in²": "inch ** 2",
    "m2": "meter ** 2",
    "m²": "meter ** 2",
}
_FORCE = {"N": "newton", "kN": "kilonewton", "lbf": "pound_force", "kgf": "kilogram_force"}
_TORQUE = {
    "N·m": "newton * meter",
    "Nm": "newton * meter",
    "N.m": "newton * meter",
    "N m": "newton * meter",
    "lbf·ft": "pound_force * foot",
    "lbf.ft": "pound_force * foot",
    "lb-ft": "pound_force * foot",
    "ft-lb": "pound_force * foot",
}
_POWER = {"kW": "kilowatt", "W": "watt", "hp": "horsepower", "HP": "horsepower"}
_TIME = {"s": "second", "sec": "second", "min": "minute", "h": "hour", "hr": "hour"}
_MASS = {"kg": "kilogram", "g": "gram", "lb": "pound", "t": "metric_ton"}
_DENSITY = {
    "kg/m3": "kilogram / meter ** 3",
    "kg/m³": "kilogram / meter ** 3",
    "g/cm3": "gram / centimeter ** 3",
}
_VISCOSITY = {
    "cSt": "centistokes",
    "cst": "centistokes",
    "mm2/s": "millimeter ** 2 / second",
    "mm²/s": "millimeter ** 2 / second",
}
_RATIO = {"%": "percent"}

_TABLES: tuple[tuple[Kind, dict[str, str]], ...] = (
    (Kind.PRESSURE, _PRESSURE),
    (Kind.FLOW, _FLOW),
    (Kind.TEMPERATURE, _TEMPERATURE),
    (Kind.SPEED, _SPEED),
    (Kind.DISPLACEMENT, _DISPLACEMENT),
    (Kind.VELOCITY, _VELOCITY),
    (Kind.VOLUME, _VOLUME),
    (Kind.LENGTH, _LENGTH),
    (Kind.AREA, _AREA),
    (Kind.FORCE, _FORCE),
    (Kind.TORQUE, _TORQUE),
    (Kind.POWER, _POWER),
    (Kind.TIME, _TIME),
    (Kind.MASS, _MASS),
    (Kind.DENSITY, _DENSITY),
    (Kind.VISCOSITY, _VISCOSITY),
    (Kind.RATIO, _RATIO),
)
SPELLINGS: dict[str, tuple[str, Kind]] = {
    spelling: (unit, kind) for kind, table in _TABLES for spelling, unit in table.items()
}

# Pressure units that take a reference letter glued on: "bara", "psig", "psid".
_GLUED_REFERENCE = {"bar", "Bar", "BAR", "psi", "PSI", "kPa", "MPa"}
_REFERENCE_WORDS = {
    "a": PressureReference.ABSOLUTE,
    "abs": PressureReference.ABSOLUTE,
    "absolute": PressureReference.ABSOLUTE,
    "(a)": PressureReference.ABSOLUTE,
    "(abs)": PressureReference.ABSOLUTE,
    "A": PressureReference.ABSOLUTE,
    "g": PressureReference.GAUGE,
    "(g)": PressureReference.GAUGE,
    "gauge": PressureReference.GAUGE,
    "gage": PressureReference.GAUGE,
    "G": PressureReference.GAUGE,
    "d": PressureReference.DIFFERENTIAL,
    "(d)": PressureReference.DIFFERENTIAL,
    "diff": PressureReference.DIFFERENTIAL,
    "differential": PressureReference.DIFFERENTIAL,
    "D": PressureReference.DIFFERENTIAL,
}

#: Words after a pressure unit meaning "below atmosphere by this much": a vacuum gauge's reading,
#: as technicians write it ("7 inHg vac", "200 mbar vacuum"); it is a negative gauge pressure.
_VACUUM_WORDS = {"vac", "vacuum", "(vac)"}

_NUMBER = re.compile(
    r"^\s*(?P<sign>[+\-−–]?)\s*"
    r"(?P<num>\d+(?:\.\d+)?[eE][+\-]?\d{1,3}(?![\d.,])"
    r"|\d{1,3}(?:[\u00a0\u202f ]\d{3})+(?:[.,]\d+)?(?![\d.,])|\d[\d.,]*\d|\d|[.,]\d+)"
)
_THIN_SPACES = "\u00a0\u202f "


@lru_cache(maxsize=None)
def unit(expr: str) -> pint.Unit:
    """A cached pint unit for one of our own unit expressions (never user text)."""
    return ureg.Unit(expr)


@lru_cache(maxsize=None)
def _dimensionality(kind: Kind) -> Any:
    return unit(CANONICAL_UNIT[kind]).dimensionality


@dataclass(frozen=True, slots=True)
class ParsedValue:
    """A typed value after parsing: the quantity as entered, its kind and, for pressures, its reference."""

    quantity: Quantity
    kind: Kind
    reference: PressureReference | None
    text: str
    #: The text itself says which side of atmosphere a pressure is: a sign, a written reference
    #: ('bar g', 'abs') or 'vac'. A bare '7 inHg' does not (a vacuum gauge's dial has no sign).
    sided: bool = False


def _clean(text: str) -> str:
    if not isinstance(text, str):
        raise UnitInputError(f"expected text, got {type(text).__name__}")
    if len(text) > MAX_INPUT_CHARS:
        raise UnitInputError(f"that is {len(text)} characters; a reading is at most {MAX_INPUT_CHARS}")
    if any(ord(ch) < 32 or ord(ch) == 127 for ch in text):
        raise UnitInputError("the text holds control characters; type the value and unit only")
    return text.strip()


def _number_readings(raw: str, decimal_comma: bool) -> tuple[float, float | None]:
    """Turn the digits a person typed into a float, and a second float when the text also reads
    another way (a single comma or dot before exactly three digits). The first is the default."""
    if "e" in raw or "E" in raw:  # scientific notation, as exact exports write extreme values
        return float(raw), None
    compact = raw
    for ch in _THIN_SPACES:
        if ch in compact:
            groups = compact.split(ch)
            if any(len(g) != 3 or not g.isdigit() for g in groups[1:-1]) or not re.fullmatch(
                r"\d{3}([.,]\d*)?", groups[-1]
            ):
                raise UnitInputError(
                    f"'{raw}' is not a number: spaces may only separate groups of three digits"
                )
            compact = compact.replace(ch, "")
    commas, dots = compact.count(","), compact.count(".")
    if commas and dots:
        dec = "," if compact.rfind(",") > compact.rfind(".") else "."
        thou = "." if dec == "," else ","
        if compact.count(dec) != 1:
            raise UnitInputError(f"'{raw}' has two decimal separators")
        whole, frac = compact.split(dec)
        _check_groups(raw, whole, thou)
        return float(whole.replace(thou, "") + "." + frac), None
    sep = "," if commas else "." if dots else ""
    if not sep:
        return float(compact), None
    count = commas or dots
    parts = compact.split(sep)
    if count > 1:  # "1,234,567" or "1.234.567": only thousands make sense
        _check_groups(raw, compact, sep)
        return float(compact.replace(sep, "")), None
    whole, frac = parts
    if whole == "":
        return float("0." + frac), None
    as_decimal = float(whole + "." + frac)
    if len(frac) != 3 or whole.startswith("0") or len(whole) > 3:
        return as_decimal, None
    as_thousands = float(whole + frac)
    user_decimal = "," if decimal_comma else "."
    if sep == user_decimal:
        return as_decimal, as_thousands
    return as_thousands, as_decimal


def _check_groups(raw: str, whole: str, thou: str) -> None:
    groups = whole.split(thou)
    if not (1 <= len(groups[0]) <= 3) or any(len(g) != 3 for g in groups[1:]):
        raise UnitInputError(f"'{raw}': thousands separators must separate groups of three digits")


def _split_unit(rest: str) -> tuple[str, Kind, PressureReference | None, bool]:
    """The unit, its kind, a pressure reference when one is written, and whether the value is a
    vacuum ("7 inHg vac": so far below atmosphere)."""
    rest = rest.strip()
    head, _, tail = rest.rpartition(" ")
    if tail.strip().lower() in _VACUUM_WORDS and head.strip():
        unit_expr, kind, reference, _vac = _split_unit(head)
        if kind is not Kind.PRESSURE or reference is not None:
            raise UnitInputError(
                f"'{rest}': 'vac' follows a gauge pressure unit only, as in '7 inHg vac' or '200 mbar vac'"
            )
        return unit_expr, kind, PressureReference.GAUGE, True
    if not rest:
        raise UnitInputError("a unit is missing: type it after the number, e.g. '22 bar' or '62 L/min'")
    if rest in SPELLINGS:
        unit_expr, kind = SPELLINGS[rest]
        return unit_expr, kind, None, False
    # "bar abs", "bar (g)", "in Hg abs": a pressure unit, a space, then a reference word (split at
    # the last space: a unit spelling may hold one itself).
    tail = tail.strip()
    if head in SPELLINGS and SPELLINGS[head][1] is Kind.PRESSURE and tail in _REFERENCE_WORDS:
        return SPELLINGS[head][0], Kind.PRESSURE, _REFERENCE_WORDS[tail], False
    # "bara", "psig", "bar(a)": a reference letter glued on.
    for base in sorted(_GLUED_REFERENCE, key=len, reverse=True):
        if rest.startswith(base):
            suffix = rest[len(base) :]
            if suffix in _REFERENCE_WORDS and suffix.lower() in {"a", "g", "d", "(a)", "(g)", "(d)"}:
                return SPELLINGS[base][0], Kind.PRESSURE, _REFERENCE_WORDS[suffix], False
    if rest[0].isdigit():  # "12 34 bar": the number stopped at a space that is not a thousands gap
        raise UnitInputError(
            f"digits '{rest}' follow the number; a space inside a number may only "
            "separate groups of three digits, as in '1 234 bar'"
        )
    raise UnitInputError(f"'{rest}' is not a unit fieldkit knows; try {_suggest(rest)}")


def _suggest(rest: str) -> str:
    low = rest.lower()
    close = [s for s in SPELLINGS if s.lower() == low or s.lower().startswith(low[:2])][:4]
    return ", ".join(f"'{c}'" for c in close) if close else "e.g. 'bar', 'psi', 'L/min', 'gpm', '°C', 'rpm'"


def parse_value(
    text: str,
    expect: Kind | None = None,
    *,
    decimal_comma: bool = False,
    role_name: str | None = None,
    plausible: Callable[[Quantity], bool] | None = None,
    example: str | None = None,
) -> ParsedValue:
    """Parse a value as a technician writes it (``3,500 psi``, ``24,5 bar``, ``0.75 bar abs``).

    Args:
        text: what was typed.
        expect: the kind the test point needs; a different kind is refused with a message that
            names what was typed and what is needed.
        decimal_comma: the user's setting; decides ``2,500`` (2.5) versus the default (2500).
        role_name: the test point's role, for the message (``charge pressure needs …``).
        plausible: the test point's plausibility check. When a single separator makes two
            readings possible and both pass it, :class:`AmbiguousInputError` is raised so the
            caller can ask; when only one passes, that one is taken.
        example: what to suggest in a message (the test point's own example, e.g. '1 bar' at a
            case pressure point); the kind's usual example when not given.
    """
    cleaned = _clean(text)
    example = example or EXAMPLE[expect or Kind.PRESSURE]
    match = _NUMBER.match(cleaned)
    if not match:
        raise UnitInputError(f"'{cleaned}' does not start with a number; type e.g. '{example}'")
    sign = -1.0 if match.group("sign") in {"-", "−", "–"} else 1.0
    raw = match.group("num").strip(_THIN_SPACES)
    if any(ch.isdigit() and not "0" <= ch <= "9" for ch in raw):
        # Python's \d and float() read Arabic-Indic, Devanagari… digits too; a rule file or a
        # profile would not, so neither does a reading: one meaning for a number everywhere.
        raise UnitInputError(
            f"'{cleaned}' has digits from another script; type the digits 0-9, e.g. '{example}'"
        )
    # The number pattern may swallow a trailing space before the unit; give it back.
    rest = cleaned[match.end() :]
    first, second = _number_readings(raw, decimal_comma)
    if first == 0.0 and any(ch in "123456789" for ch in raw.split("e")[0].split("E")[0]):
        raise UnitInputError(
            f"'{cleaned}' is too small to tell from zero; type the value as the gauge shows it"
        )
    if not rest.strip() and expect is not None:
        raise UnitInputError(f"a unit is missing: type it after the number, e.g. '{example}'")
    unit_expr, kind, reference, vacuum = _split_unit(rest)
    sided = bool(match.group("sign")) or reference is not None
    if vacuum:
        if sign < 0:
            raise UnitInputError(
                f"'{cleaned}': a vacuum is written without a minus ('7 inHg vac'), or as a negative "
                "gauge pressure without 'vac' ('-0.24 bar'); not both"
            )
        sign = -1.0
    if expect is not None and kind is not expect:
        need = f"{role_name} needs" if role_name else "this needs"
        raise DimensionError(f"'{cleaned}' is a {kind.value}; {need} a {expect.value} such as '{example}'")
    if kind is Kind.PRESSURE and reference is None:
        reference = PressureReference.GAUGE
    u = unit(unit_expr)
    value = Q_(sign * first, u)
    if second is not None and plausible is not None:
        other = Q_(sign * second, u)
        ok_first, ok_second = plausible(value), plausible(other)
        if ok_first and ok_second:
            raise AmbiguousInputError(
                f"'{cleaned}' could be {_plain(value)} or {_plain(other)}; which did the gauge show?",
                (
                    ParsedValue(value, kind, reference, cleaned, sided),
                    ParsedValue(other, kind, reference, cleaned, sided),
                ),
            )
        if ok_second and not ok_first:
            value = other
    if not math.isfinite(value.magnitude):
        raise UnitInputError(f"'{cleaned}' is not a finite number")
    return ParsedValue(value, kind, reference, cleaned, sided)


def parse_quantity(text: str, expect: Kind | None = None, **kwargs: Any) -> Quantity:
    """Shorthand for :func:`parse_value` when only the quantity matters (profiles, rule files)."""
    return parse_value(text, expect, **kwargs).quantity


def kind_of(q: Quantity) -> Kind:
    """The kind of a quantity that arrived from code. Volume and displacement share a dimension
    once revolutions cancel; displacement wins only when the unit says 'per revolution'."""
    kind = _kind_of_units(q.units)
    if kind is None:
        raise DimensionError(f"{q:~P} is not a quantity fieldkit uses")
    return kind


@lru_cache(maxsize=512)
def _kind_of_units(units: pint.Unit) -> Kind | None:
    q = Q_(1.0, units)
    dim = q.dimensionality
    per_rev = any(
        name in ("revolution", "turn") and isinstance(power, int | float) and power < 0
        for name, power in q.unit_items()
    )
    if per_rev and dim == _dimensionality(Kind.DISPLACEMENT):
        return Kind.DISPLACEMENT
    for kind in Kind:
        if kind is Kind.DISPLACEMENT:
            continue
        if dim == _dimensionality(kind):
            return kind
    return None


def require(q: Any, kind: Kind, what: str = "value") -> Quantity:
    """Check that a quantity handed in from code is of the expected kind; a wrong one raises a
    clear error instead of giving a silently wrong number."""
    if not isinstance(q, pint.Quantity):
        raise DimensionError(
            f"{what} must be a {kind.value} with a unit, such as {EXAMPLE[kind]!r}; got {q!r}"
        )
    if q.dimensionality != _dimensionality(kind):
        raise DimensionError(f"{what} must be a {kind.value} such as {EXAMPLE[kind]!r}; got {q:~P}")
    return q


@lru_cache(maxsize=512)
def _affine(source: pint.Unit, target: pint.Unit) -> tuple[float, float]:
    """y = offset + scale·x between two units, worked out once by pint (temperatures are affine,
    everything else linear). pint's own .to() costs tens of µs a call; the diagnosis converts
    every reading several times per keystroke."""
    offset = float(Q_(0.0, source).to(target).magnitude)
    scale = float(Q_(1.0, source).to(target).magnitude) - offset
    return scale, offset


def magnitude_in(q: Quantity, target: pint.Unit) -> float:
    """The magnitude of ``q`` in ``target`` (raises pint.DimensionalityError on a wrong kind)."""
    scale, offset = _affine(q.units, target)
    return offset + scale * float(q.magnitude)


def to_canonical(q: Quantity, kind: Kind) -> float:
    """Magnitude in the kind's canonical unit (bar, L/min, °C…): what ranges and rules compare."""
    return magnitude_in(q, unit(CANONICAL_UNIT[kind]))


# --- gauge and absolute -------------------------------------------------------------------


def to_gauge(
    q: Quantity, reference: PressureReference | None, barometric: Quantity | None = None
) -> Quantity:
    """Gauge pressure of a reading. Absolute readings subtract the local barometric pressure
    (the standard atmosphere if none was recorded); gauge and differential pass unchanged."""
    require(q, Kind.PRESSURE, "pressure")
    if reference is PressureReference.ABSOLUTE:
        gauge: Quantity = (q - (barometric if barometric is not None else STANDARD_ATMOSPHERE)).to(q.units)
        return gauge
    return q


def to_absolute(
    q: Quantity, reference: PressureReference | None, barometric: Quantity | None = None
) -> Quantity:
    """Absolute pressure of a reading (what suction limits for piston pumps are written in)."""
    require(q, Kind.PRESSURE, "pressure")
    if reference is PressureReference.ABSOLUTE:
        return q
    absolute: Quantity = (q + (barometric if barometric is not None else STANDARD_ATMOSPHERE)).to(q.units)
    return absolute


# --- display ------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class DisplaySystem:
    """The units a user reads values in. Spellings here must parse back with :func:`parse_value`."""

    pressure: str = "bar"
    flow: str = "L/min"
    temperature: str = "°C"

    @classmethod
    def named(cls, name: str) -> DisplaySystem:
        systems = {
            "metric": cls("bar", "L/min", "°C"),
            "si": cls("MPa", "L/min", "°C"),
            "us": cls("psi", "gpm", "°F"),
        }
        if name not in systems:
            raise UnitInputError(f"unknown display system '{name}'; choose one of {', '.join(systems)}")
        return systems[name]

    def spelling_for(self, kind: Kind) -> str:
        if kind is Kind.PRESSURE:
            return self.pressure
        if kind is Kind.FLOW:
            return self.flow
        if kind is Kind.TEMPERATURE:
            return self.temperature
        return _FIXED_SPELLING[kind]


#: Display units that do not change with the user's system.
_FIXED_SPELLING: dict[Kind, str] = {
    Kind.SPEED: "rpm",
    Kind.DISPLACEMENT: "cc/rev",
    Kind.VELOCITY: "mm/min",
    Kind.VOLUME: "L",
    Kind.LENGTH: "mm",
    Kind.AREA: "cm2",
    Kind.FORCE: "kN",
    Kind.TORQUE: "N·m",
    Kind.POWER: "kW",
    Kind.TIME: "s",
    Kind.MASS: "kg",
    Kind.DENSITY: "kg/m3",
    Kind.VISCOSITY: "cSt",
    Kind.RATIO: "%",
}


METRIC = DisplaySystem()


def convert(q: Quantity, spelling: str) -> Quantity:
    """Convert to a unit named by one of our spellings (``bar``, ``gpm``, ``°F``…)."""
    if spelling not in SPELLINGS:
        raise UnitInputError(f"'{spelling}' is not a unit fieldkit knows; try {_suggest(spelling)}")
    unit_expr, kind = SPELLINGS[spelling]
    try:
        target = unit(unit_expr)
        return Q_(magnitude_in(q, target), target)
    except pint.DimensionalityError:
        raise DimensionError(
            f"{_plain(q)} is a {kind_of(q).value}; it cannot be shown in {spelling} ({kind.value})"
        ) from None


def _decimals(magnitude: float, significant: int) -> int:
    if magnitude == 0 or not math.isfinite(magnitude):
        return 1
    digits = significant - 1 - math.floor(math.log10(abs(magnitude)))
    return max(0, min(digits, 6))


def format_value(
    q: Quantity,
    system: DisplaySystem = METRIC,
    *,
    kind: Kind | None = None,
    spelling: str | None = None,
    significant: int = 4,
    exact: bool = False,
) -> str:
    """Text for a value in the user's display system, e.g. ``241.3 bar``. With ``exact`` the
    magnitude is written so that parsing it back gives the same float."""
    kind = kind or kind_of(q)
    spelling = spelling or system.spelling_for(kind)
    try:
        mag = magnitude_in(q, unit(SPELLINGS[spelling][0]))
    except (KeyError, pint.DimensionalityError):
        convert(q, spelling)  # raises the plain-words error (unknown spelling, wrong kind)
        raise
    return _with_unit(mag, spelling, significant, exact)


@lru_cache(maxsize=None)
def _si_unit(kind: Kind) -> pint.Unit:
    return ureg.Unit(Q_(1.0, unit(CANONICAL_UNIT[kind])).to_base_units().units)


def display_scale(source: pint.Unit, kind: Kind, system: DisplaySystem = METRIC) -> tuple[float, float, str]:
    """(scale, offset, spelling) taking a magnitude in ``source`` to the user's display unit."""
    spelling = system.spelling_for(kind)
    scale, offset = _affine(source, unit(SPELLINGS[spelling][0]))
    return scale, offset, spelling


def format_si(value: float, kind: Kind, system: DisplaySystem = METRIC, *, significant: int = 4) -> str:
    """Text for a float in SI base units (what rule expressions compute in), without building a
    quantity: the diagnosis writes a few hundred of these per reading entered."""
    scale, offset, spelling = display_scale(_si_unit(kind), kind, system)
    return format_number(offset + scale * value, spelling, significant)


def format_si_to_resolution(value: float, limit: float, kind: Kind, system: DisplaySystem = METRIC) -> str:
    """Text for a float in SI base units, with no more decimals than ``limit`` (a limit of error in
    the same SI unit) allows: its first significant figure in the display unit (±0.6 bar → one
    decimal, ±3 % → none). common practice."""
    scale, offset, spelling = display_scale(_si_unit(kind), kind, system)
    shown_limit = abs(scale * limit)
    if not (math.isfinite(shown_limit) and shown_limit > 0):
        return format_si(value, kind, system)
    decimals = max(0, -math.floor(math.log10(shown_limit)))
    number = f"{offset + scale * value:.{decimals}f}"
    if number.startswith("-") and float(number) == 0:
        number = number[1:]
    return f"{number}{'' if spelling == '%' else ' '}{spelling}"


#: Figures a limit is shown to. A maker's round 25 bar becomes 362.6 psi when converted; three
#: figures (363 psi) is what a technician writes, and the rounding (at most 0.5 %) stays inside
#: any gauge's limit of error, where a reading is called inconclusive anyway. common practice
LIMIT_FIGURES = 3


def format_magnitude(mag: float, significant: int = 4) -> str:
    """A bare number rounded for reading: ``significant`` figures, but never rounding the
    integer part (5656, not 5660) and no trailing zeros."""
    number = f"{mag:.{_decimals(mag, significant)}f}"
    if "." in number:
        number = number.rstrip("0").rstrip(".")
    return "0" if number in ("-0", "") else number


def format_number(mag: float, spelling: str, significant: int = 4) -> str:
    """A magnitude already in the unit ``spelling`` names, rounded for reading."""
    return _with_unit(mag, spelling, significant, exact=False)


def _with_unit(mag: float, spelling: str, significant: int, exact: bool) -> str:
    if exact:
        # The shortest repr, written out positionally while that stays short enough to read in a
        # hand-edited file; extreme values keep the e-notation (the parser reads both, and a
        # positional 1e-300 would not fit in MAX_INPUT_CHARS).
        number = repr(mag)
        if "e" in number and math.isfinite(mag):
            positional = format(Decimal(number), "f")
            number = positional if len(positional) <= 24 else number
    else:
        number = format_magnitude(mag, significant)
    sep = "" if spelling == "%" else " "
    return f"{number}{sep}{spelling}"


def _plain(q: Quantity) -> str:
    try:
        return format_value(q)
    except Exception:
        return f"{q.magnitude:g} {q.units:~P}"


def percent(p: float, *, gap: str = "") -> str:
    """A probability in whole per cent, for the screen and the job card alike.

    Rounded half up, except that a probability which is neither impossible nor certain never
    reads as "0%" or "100%": it reads "<1%" or ">99%", since a technician would take "100%" as
    proof. Exactly 0 and exactly 1 read "0%" and "100%". Values a hair outside 0…1 (floating
    point noise from normalising) count as 0 or 1. ``gap`` goes between the number and the sign
    (the job card puts a no-break space there).
    """
    if math.isnan(p):
        raise ValueError("a probability cannot be NaN")
    p = min(max(p, 0.0), 1.0)
    whole = math.floor(p * 100 + 0.5)
    if whole == 0 and p > 0:
        return f"<1{gap}%"
    if whole == 100 and p < 1:
        return f">99{gap}%"
    return f"{whole}{gap}%"
