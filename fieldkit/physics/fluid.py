"""Hydraulic oil: viscosity against temperature, grade data, and whether a test is valid.

Most readings a technician takes (case drain, pump flow under load, drift) depend on how thin
the oil is, so a reading is only comparable with a baseline at the same viscosity. This module
gives the viscosity at any temperature from two known points (ASTM D341, Walther's equation),
normalises a leakage reading to a reference temperature, and says when the oil is outside a
pump's viscosity window or too cold for a valid test.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fieldkit.physics.common import Check, Level, OutOfRangeError, celsius, kelvin, out, shown, si
from fieldkit.units import Q_, Kind, Quantity

#: Mineral hydraulic oil density, kg/m³: 850–890 is the usual range; 870 is mid-range (from memory).
OIL_DENSITY = Q_(870.0, "kilogram / meter ** 3")
#: Mineral oil specific heat at 50 °C (Rabie, Fluid Power Engineering, McGraw-Hill 2009, p. 45).
OIL_SPECIFIC_HEAT = Q_(2060.0, "joule / kilogram / kelvin")

#: Pump viscosity window (from memory / common practice; sources disagree and a machine
#: profile should carry its maker's figures, which override these).
OPTIMUM_VISCOSITY = (Q_(16.0, "centistokes"), Q_(36.0, "centistokes"))
MIN_VISCOSITY = Q_(10.0, "centistokes")
COLD_START_MAX_VISCOSITY = Q_(1000.0, "centistokes")
#: Lower edge of the usual 38–60 °C operating band (common practice): colder, and leakage
#: readings say more about the oil than about the machine.
MIN_TEST_TEMPERATURE = Q_(38.0, "degC")

_WALTHER_SHIFT = 0.7  # cSt added to ν in ASTM D341 (the extra term below ~2 cSt is left out)
_CST = 1e-6  # m²/s per cSt


@dataclass(frozen=True, slots=True)
class ViscosityCurve:
    """An oil's viscosity–temperature line in ASTM D341 form:
    log10 log10 (ν + 0.7) = a − b · log10 T, with ν in cSt and T in kelvin.

    Two measured points fix the line; within the liquid range, away from the cloud point and
    above about 2 cSt, the standard treats it as straight. Viscosity-index improved oils
    (multigrades) shear thin and follow it less well.
    """

    a: float
    b: float

    def cst_at_kelvin(self, t_kelvin: float) -> float:
        """Viscosity in cSt at a temperature in kelvin: the float form for hot loops."""
        return float(10.0 ** (10.0 ** (self.a - self.b * math.log10(t_kelvin)))) - _WALTHER_SHIFT

    def at(self, temperature: Quantity) -> Quantity:
        """Kinematic viscosity at a temperature."""
        return out(self.cst_at_kelvin(kelvin(temperature, "oil temperature")) * _CST, Kind.VISCOSITY)

    def temperature_for(self, viscosity: Quantity) -> Quantity:
        """The temperature at which the oil reaches a viscosity, e.g. how warm it must be to
        fall below a pump's cold-start limit."""
        nu = si(viscosity, Kind.VISCOSITY, "viscosity", positive=True) / _CST
        if nu + _WALTHER_SHIFT <= 1.0:
            raise OutOfRangeError(f"viscosity {shown(viscosity)} is below what ASTM D341 describes")
        t_kelvin = 10.0 ** ((self.a - math.log10(math.log10(nu + _WALTHER_SHIFT))) / self.b)
        return celsius(t_kelvin)


def _loglog(nu_cst: float) -> float:
    return math.log10(math.log10(nu_cst + _WALTHER_SHIFT))


def viscosity_curve(
    viscosity_1: Quantity,
    temperature_1: Quantity,
    viscosity_2: Quantity,
    temperature_2: Quantity,
) -> ViscosityCurve:
    """Fit the ASTM D341 line through two points, usually the data sheet's 40 °C and 100 °C values."""
    t1, t2 = kelvin(temperature_1, "first temperature"), kelvin(temperature_2, "second temperature")
    if math.isclose(t1, t2, rel_tol=1e-9):
        raise OutOfRangeError("the two viscosity points need different temperatures")
    nu1 = si(viscosity_1, Kind.VISCOSITY, "first viscosity", positive=True) / _CST
    nu2 = si(viscosity_2, Kind.VISCOSITY, "second viscosity", positive=True) / _CST
    if (nu1 - nu2) * (t1 - t2) >= 0:
        raise OutOfRangeError(
            f"oil thins as it warms: {shown(viscosity_1)} at {shown(temperature_1)} and "
            f"{shown(viscosity_2)} at {shown(temperature_2)} do not describe an oil"
        )
    b = (_loglog(nu1) - _loglog(nu2)) / (math.log10(t2) - math.log10(t1))
    return ViscosityCurve(a=_loglog(nu1) + b * math.log10(t1), b=b)


@dataclass(frozen=True, slots=True)
class Grade:
    """An ISO 3448 viscosity grade: its 40 °C midpoint and a typical 100 °C value at VI ≈ 100."""

    name: str
    at_40c: Quantity
    at_100c: Quantity
    note: str
    curve: ViscosityCurve


def _grade(vg: int, at_100c: float, note: str) -> Grade:
    at_40c, at_100 = Q_(float(vg), "centistokes"), Q_(at_100c, "centistokes")
    curve = viscosity_curve(at_40c, Q_(40.0, "degC"), at_100, Q_(100.0, "degC"))
    return Grade(f"VG{vg}", at_40c, at_100, note, curve)


_FIELD_NOTES = "100 °C value from memory (field notes, VI ≈ 100); ASTM D2270 gives VI 99-102"
_D2270 = "100 °C value for VI ≈ 100 by ASTM D2270 (field notes' check values, computed)"

#: ISO 3448 grades; the 40 °C midpoint is the grade number (±10 %). 100 °C values are for VI ≈ 100,
#: each within ±3 of it by ASTM D2270 (tests/physics/test_oil_grades_d2270.py).
VG_GRADES: dict[str, Grade] = {
    g.name: g
    for g in (
        _grade(10, 2.66, _D2270),
        _grade(15, 3.41, _D2270),
        _grade(22, 4.3, "100 °C value from memory; ASTM D2270 gives VI 100.5"),
        _grade(32, 5.4, _FIELD_NOTES),
        _grade(46, 6.8, _FIELD_NOTES),
        _grade(68, 8.7, _FIELD_NOTES),
        _grade(100, 11.4, _D2270),
        _grade(150, 15.0, _D2270),
    )
}


def grade(name: str) -> Grade:
    """A grade by name, tolerant of how it is written: ``VG46``, ``ISO VG 46``, ``46``."""
    key = "VG" + "".join(ch for ch in name if ch.isdigit())
    if key not in VG_GRADES:
        raise OutOfRangeError(f"'{name}' is not a grade fieldkit knows; choose one of {', '.join(VG_GRADES)}")
    return VG_GRADES[key]


def normalised_leakage(
    measured: Quantity,
    oil_temperature: Quantity,
    reference_temperature: Quantity,
    curve: ViscosityCurve,
) -> Quantity:
    """The leakage the same clearances would pass at the reference temperature.

    Leakage through the tight clearances of a pump or valve is laminar (Hagen–Poiseuille,
    slot flow), so at the same pressure difference it scales with 1/viscosity:
    Q_ref = Q · ν(T) / ν(T_ref). Oil warmer than the reference is thinner and leaks more, so
    its reading is scaled down. Assumes the same pressure difference at both temperatures and
    that clearances do not change with temperature.
    """
    q = si(measured, Kind.FLOW, "measured leakage", non_negative=True)
    nu_test = curve.cst_at_kelvin(kelvin(oil_temperature, "oil temperature"))
    nu_ref = curve.cst_at_kelvin(kelvin(reference_temperature, "reference temperature"))
    return out(q * nu_test / nu_ref, Kind.FLOW)


@dataclass(frozen=True, slots=True)
class ViscosityWindow:
    """A pump's viscosity limits. The defaults are typical figures (from memory / common
    practice); a machine profile should pass its maker's own."""

    optimum_low: Quantity = OPTIMUM_VISCOSITY[0]
    optimum_high: Quantity = OPTIMUM_VISCOSITY[1]
    minimum: Quantity = MIN_VISCOSITY
    cold_start_max: Quantity = COLD_START_MAX_VISCOSITY

    def __post_init__(self) -> None:
        bounds = [
            si(q, Kind.VISCOSITY, name, positive=True)
            for name, q in (
                ("minimum viscosity", self.minimum),
                ("optimum low", self.optimum_low),
                ("optimum high", self.optimum_high),
                ("cold-start maximum", self.cold_start_max),
            )
        ]
        if bounds != sorted(bounds):
            raise OutOfRangeError(
                "viscosity window must run minimum ≤ optimum low ≤ optimum high ≤ cold-start maximum"
            )


DEFAULT_WINDOW = ViscosityWindow()


def check_viscosity(viscosity: Quantity, window: ViscosityWindow = DEFAULT_WINDOW) -> Check:
    """Whether the oil is thin or thick enough for the pump.

    Below the minimum the lubricating film under the pistons and plates is too thin (wear,
    high leakage); above the cold-start maximum the pump may cavitate on its inlet. Between
    the limits but outside the optimum the pump runs, but efficiency readings shift, so the
    result is a note rather than a warning.
    """
    nu = si(viscosity, Kind.VISCOSITY, "oil viscosity", positive=True)
    oil = f"oil at {nu / _CST:.3g} cSt"
    if nu < si(window.minimum, Kind.VISCOSITY, "minimum viscosity"):
        return Check(
            Level.WARNING,
            f"{oil} is thinner than the pump's minimum "
            f"{shown(window.minimum)}: film too thin, leakage readings run high",
        )
    if nu > si(window.cold_start_max, Kind.VISCOSITY, "cold-start maximum"):
        return Check(
            Level.WARNING,
            f"{oil} is thicker than the pump's cold-start limit "
            f"{shown(window.cold_start_max)}: risk of inlet cavitation; "
            f"warm the oil first",
        )
    low = si(window.optimum_low, Kind.VISCOSITY, "optimum low")
    high = si(window.optimum_high, Kind.VISCOSITY, "optimum high")
    if not low <= nu <= high:
        return Check(
            Level.NOTE,
            f"{oil} is outside the optimum {shown(window.optimum_low)}–"
            f"{shown(window.optimum_high)}: compare readings with a baseline "
            f"at the same temperature",
        )
    return Check(Level.OK, f"{oil} is within the optimum viscosity")


def check_test_temperature(temperature: Quantity, minimum: Quantity = MIN_TEST_TEMPERATURE) -> Check:
    """Whether the oil is warm enough for a leakage or efficiency test to mean anything.

    Cold oil is thick and leaks little, so a worn pump can pass a cold test; readings are
    only comparable with the machine's baseline near its working temperature.
    """
    t = kelvin(temperature, "oil temperature")
    if t < kelvin(minimum, "minimum test temperature"):
        return Check(
            Level.WARNING,
            f"oil at {shown(temperature)} is too cold for a valid test: "
            f"run the machine until it reaches at least {shown(minimum)}",
        )
    return Check(Level.OK, f"oil at {shown(temperature)} is warm enough to test")


def viscosity_at(oil: Grade | ViscosityCurve, temperature: Quantity) -> Quantity:
    """Viscosity of a grade or a fitted curve at a temperature."""
    curve = oil.curve if isinstance(oil, Grade) else oil
    return curve.at(temperature)
