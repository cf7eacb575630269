"""Properties of the value parser that must hold for any input, not just the examples we thought of.

Oracles: ``scipy.constants`` (psi, gallon, kgf, bar; CODATA/NIST) and NIST SP 811 (2008) App. B.8
for the rounded psi factor 6 894.757 Pa (from memory); °F → °C by its definition
(scipy.constants.convert_temperature).
"""

from __future__ import annotations

from decimal import Decimal

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import constants as sc

from fieldkit.errors import FieldkitError
from fieldkit.units import (
    Q_,
    SPELLINGS,
    DisplaySystem,
    Kind,
    ParsedValue,
    PressureReference,
    format_value,
    kind_of,
    parse_value,
    to_canonical,
    unit,
)

PROPERTY_SETTINGS = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])

#: Pressure spellings a reference word can follow ("bar abs", "psi g").
PRESSURE_SPELLINGS = sorted(s for s, (_expr, kind) in SPELLINGS.items() if kind is Kind.PRESSURE)
REFERENCE_WORDS = {
    " abs": PressureReference.ABSOLUTE,
    " a": PressureReference.ABSOLUTE,
    "(a)": PressureReference.ABSOLUTE,
    " gauge": PressureReference.GAUGE,
    " (g)": PressureReference.GAUGE,
    " d": PressureReference.DIFFERENTIAL,
    " diff": PressureReference.DIFFERENTIAL,
}
GLUED = ("bar", "psi", "kPa", "MPa")


def typed_number(value: float) -> str:
    """How a person writes a float: positional digits, no exponent."""
    return format(Decimal(repr(value)), "f")


magnitudes = st.one_of(
    st.just(0.0),
    st.floats(min_value=1e-6, max_value=1e6, allow_nan=False, allow_infinity=False),
).flatmap(lambda m: st.sampled_from([m, -m]))


@st.composite
def typed_values(draw: st.DrawFn) -> tuple[str, float, str, PressureReference | None]:
    """Text for a reading in any whitelisted spelling: (text, magnitude, spelling, reference)."""
    value = draw(magnitudes)
    spelling = draw(st.sampled_from(sorted(SPELLINGS)))
    reference: PressureReference | None = (
        PressureReference.GAUGE if SPELLINGS[spelling][1] is Kind.PRESSURE else None
    )
    suffix = ""
    if reference is not None and draw(st.booleans()):
        suffix = draw(st.sampled_from(sorted(REFERENCE_WORDS)))
        if suffix == "(a)" and spelling not in GLUED:
            suffix = " abs"
        reference = REFERENCE_WORDS[suffix]
    gap = draw(st.sampled_from(["", " "])) if spelling[0].isalpha() or spelling[0] in "°º%" else " "
    return f"{typed_number(value)}{gap}{spelling}{suffix}", value, spelling, reference


@PROPERTY_SETTINGS
@given(typed_values())
def test_exact_text_reads_back_as_the_same_quantity_in_every_spelling(
    case: tuple[str, float, str, PressureReference | None],
) -> None:
    text, value, spelling, reference = case
    parsed = parse_value(text)
    assert parsed.quantity.magnitude == value
    assert parsed.reference is reference
    written = format_value(parsed.quantity, kind=parsed.kind, spelling=spelling, exact=True)
    again = parse_value(written)
    assert again.quantity.magnitude == parsed.quantity.magnitude
    assert again.quantity.units == parsed.quantity.units
    assert again.kind is parsed.kind


@PROPERTY_SETTINGS
@given(st.floats(allow_nan=False, allow_infinity=False), st.sampled_from(sorted(SPELLINGS)))
def test_exact_text_of_any_finite_float_reads_back_bit_for_bit(magnitude: float, spelling: str) -> None:
    quantity = Q_(magnitude, unit(SPELLINGS[spelling][0]))
    written = format_value(quantity, kind=SPELLINGS[spelling][1], spelling=spelling, exact=True)
    again = parse_value(written).quantity
    assert again.magnitude == magnitude and again.units == quantity.units, written


@PROPERTY_SETTINGS
@given(typed_values(), st.sampled_from(["metric", "si", "us"]))
def test_exact_text_in_a_display_system_reads_back_within_float_noise(
    case: tuple[str, float, str, PressureReference | None], system: str
) -> None:
    parsed = parse_value(case[0])
    written = format_value(parsed.quantity, DisplaySystem.named(system), exact=True)
    again = parse_value(written)
    assert again.kind is parsed.kind
    assert to_canonical(again.quantity, parsed.kind) == pytest.approx(
        to_canonical(parsed.quantity, parsed.kind), rel=1e-12, abs=1e-12
    )


# --- nothing typed can crash the parser ----------------------------------------------------

FRAGMENTS = [
    *"0123456789",
    "12",
    "500",
    "2,500",
    "3.5",
    ",",
    ".",
    ",,",
    "..",
    " ",
    "\u00a0",
    "\u202f",
    "\t",
    "\n",
    "\x00",
    "-",
    "+",
    "−",
    "–",
    "e",
    "E",
    "e5",
    "1e308",
    "nan",
    "inf",
    "Infinity",
    "٣",
    "²",
    "³",
    "½",
    "𝟏",
    "bar",
    "Bar",
    "psi",
    "PSI",
    "mpa",
    "MPa",
    "a",
    "g",
    "d",
    "A",
    "abs",
    "(g)",
    "(a)",
    "(",
    ")",
    "/",
    "^",
    "*",
    "kgf/cm2",
    "L/min",
    "gpm",
    "°",
    "º",
    "C",
    "F",
    "K",
    "rpm",
    "cc/rev",
    "mm/min",
    "%",
    "inHg",
    "in",
    "Hg",
    "[",
    "]",
    "'",
    '"',
    "\\",
    "💥",
    "\ufeff",
    "\u200b",
    "ſ",
    "K",
]
jumbles = st.lists(st.sampled_from(FRAGMENTS), max_size=12).map("".join)
plausibility = st.sampled_from([None, lambda q: True, lambda q: False, lambda q: abs(q.magnitude) < 100])


def assert_parses_or_explains(text: str, expect: Kind | None, decimal_comma: bool, plausible: object) -> None:
    try:
        parsed = parse_value(text, expect, decimal_comma=decimal_comma, plausible=plausible)  # type: ignore[arg-type]
    except FieldkitError:
        return
    assert isinstance(parsed, ParsedValue)
    assert kind_of(parsed.quantity) is parsed.kind
    assert expect is None or parsed.kind is expect
    assert parsed.quantity.magnitude == parsed.quantity.magnitude  # not NaN


@PROPERTY_SETTINGS
@given(st.text(max_size=80), st.sampled_from([None, *Kind]), st.booleans(), plausibility)
def test_any_text_gives_a_value_or_a_fieldkit_error(
    text: str, expect: Kind | None, decimal_comma: bool, plausible: object
) -> None:
    assert_parses_or_explains(text, expect, decimal_comma, plausible)


@PROPERTY_SETTINGS
@given(
    jumbles, st.sampled_from([None, Kind.PRESSURE, Kind.FLOW, Kind.TEMPERATURE]), st.booleans(), plausibility
)
def test_jumbled_digits_separators_and_units_give_a_value_or_a_fieldkit_error(
    text: str, expect: Kind | None, decimal_comma: bool, plausible: object
) -> None:
    assert_parses_or_explains(text, expect, decimal_comma, plausible)


# --- a value does not depend on the unit it was typed in ----------------------------------

reading_sizes = st.floats(min_value=0.001, max_value=10_000, allow_nan=False, allow_infinity=False)
signs = st.sampled_from([1.0, -1.0])


@PROPERTY_SETTINGS
@given(reading_sizes, signs)
def test_psi_and_bar_readings_of_the_same_pressure_agree(size: float, sign: float) -> None:
    x = sign * size
    in_psi = to_canonical(parse_value(f"{typed_number(x)} psi").quantity, Kind.PRESSURE)
    # NIST SP 811 B.8: 1 psi = 6 894.757 Pa (from memory), 7 significant figures.
    as_bar_sp811 = to_canonical(
        parse_value(f"{typed_number(x * 6894.757 / 1e5)} bar").quantity, Kind.PRESSURE
    )
    assert in_psi == pytest.approx(as_bar_sp811, rel=1e-7)
    # scipy.constants.psi (exact from the pound and the inch): agreement to float noise.
    as_bar_scipy = to_canonical(
        parse_value(f"{typed_number(x * sc.psi / sc.bar)} bar").quantity, Kind.PRESSURE
    )
    assert in_psi == pytest.approx(as_bar_scipy, rel=1e-12)


@PROPERTY_SETTINGS
@given(reading_sizes, signs)
def test_kgf_per_cm2_mpa_and_bar_readings_of_the_same_pressure_agree(size: float, sign: float) -> None:
    x = sign * size
    bar = to_canonical(parse_value(f"{typed_number(x)} kgf/cm2").quantity, Kind.PRESSURE)
    # NIST SP 811 B.8: 1 kgf/cm² = 98 066.5 Pa (from memory); oracle scipy.constants.kgf / cm².
    assert bar == pytest.approx(x * sc.kgf / sc.centi**2 / sc.bar, rel=1e-12)
    mpa = to_canonical(parse_value(f"{typed_number(x)} mpa").quantity, Kind.PRESSURE)
    assert mpa == pytest.approx(x * sc.mega / sc.bar, rel=1e-12)


@PROPERTY_SETTINGS
@given(st.floats(min_value=0.001, max_value=2_000, allow_nan=False, allow_infinity=False))
def test_gpm_and_litres_per_minute_readings_of_the_same_flow_agree(size: float) -> None:
    in_gpm = to_canonical(parse_value(f"{typed_number(size)} gpm").quantity, Kind.FLOW)
    # NIST SP 811 B.8: US gallon = 3.785 411 784 L exactly (from memory); oracle scipy.constants.gallon.
    in_lpm = to_canonical(parse_value(f"{typed_number(size * 3.785411784)} L/min").quantity, Kind.FLOW)
    assert in_gpm == pytest.approx(in_lpm, rel=1e-12)
    assert in_gpm == pytest.approx(size * sc.gallon / sc.liter, rel=1e-12)


@PROPERTY_SETTINGS
@given(st.integers(min_value=-40_000, max_value=250_000).map(lambda milli: milli / 1000))
def test_fahrenheit_and_celsius_readings_of_the_same_oil_agree(celsius: float) -> None:
    fahrenheit = float(sc.convert_temperature(celsius, "Celsius", "Fahrenheit"))  # oracle: scipy
    from_f = to_canonical(parse_value(f"{typed_number(fahrenheit)} °F").quantity, Kind.TEMPERATURE)
    from_c = to_canonical(parse_value(f"{typed_number(celsius)} °C").quantity, Kind.TEMPERATURE)
    assert from_f == pytest.approx(from_c, rel=1e-9, abs=1e-9)
