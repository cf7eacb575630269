"""Input handling shared by every physics function: kinds, per-revolution units, ratios, checks."""

import math

import pytest

from fieldkit.errors import DimensionError
from fieldkit.physics.common import Check, Level, OutOfRangeError, fraction, kelvin, si
from fieldkit.physics.pumps_motors import motor_torque, theoretical_flow
from fieldkit.units import Q_, Kind
from fieldkit.units import parse_quantity as q


def test_displacement_written_without_per_rev_is_still_per_revolution():
    # pint alone turns 100 cm³ into 628 cm³/rev (a revolution is 2π rad); the trade means 100 cm³/rev.
    # 100 cm³/rev at 1000 rpm → 100 L/min (Hydraulics & Pneumatics, pump efficiency article, 2023).
    assert theoretical_flow(q("100 cc"), q("1000 rpm")).m_as("L/min") == pytest.approx(100.0)
    assert motor_torque(q("250 bar"), q("100 cc")).m_as("N*m") == pytest.approx(
        motor_torque(q("250 bar"), q("100 cc/rev")).m_as("N*m")
    )


def test_speed_per_minute_without_revolutions_is_rpm():
    # "1500 min⁻¹" on a motor plate means 1500 rpm; pint alone would divide by 2π. [calc]
    assert theoretical_flow(q("10 cc/rev"), Q_(1500, "1 / minute")).m_as("L/min") == pytest.approx(15.0)


def test_speed_in_radians_per_second_converts_through_two_pi():
    # 1000 rpm = 1000 · 2π / 60 rad/s = 104.72 rad/s [calc]
    omega = Q_(1000 * 2 * math.pi / 60, "radian / second")
    assert theoretical_flow(q("100 cc/rev"), omega).m_as("L/min") == pytest.approx(100.0)


def test_wrong_kind_names_the_input_and_an_example():
    with pytest.raises(DimensionError, match=r"bore must be a length such as '80 mm'; got 60(\.0)? l/min"):
        si(q("60 L/min"), Kind.LENGTH, "bore")


def test_bare_number_is_refused_for_a_quantity():
    with pytest.raises(DimensionError, match="pressure must be a pressure with a unit"):
        si(200, Kind.PRESSURE, "pressure")


def test_not_a_number_is_refused():
    with pytest.raises(OutOfRangeError, match="finite"):
        si(Q_(float("nan"), "bar"), Kind.PRESSURE, "pressure")


def test_negative_bore_is_refused():
    with pytest.raises(OutOfRangeError, match="bore must be above zero"):
        si(q("-80 mm"), Kind.LENGTH, "bore", positive=True)


def test_temperature_scales_reach_the_same_kelvin():
    # 0 °C = 273.15 K and 32 °F = 273.15 K (definitions of the scales) [calc]
    assert kelvin(q("0 °C"), "t") == pytest.approx(273.15)
    assert kelvin(q("32 °F"), "t") == pytest.approx(273.15)
    with pytest.raises(OutOfRangeError, match="absolute zero"):
        kelvin(q("-300 °C"), "oil temperature")


def test_efficiency_may_be_a_fraction_or_a_percentage():
    assert fraction(0.9, "efficiency") == pytest.approx(0.9)
    assert fraction(Q_(90, "percent"), "efficiency") == pytest.approx(0.9)


def test_efficiency_of_ninety_is_refused_not_read_as_percent():
    with pytest.raises(OutOfRangeError, match="efficiency must be above 0 and at most 1"):
        fraction(90, "efficiency")
    with pytest.raises(DimensionError, match="ratio"):
        fraction(q("90 bar"), "efficiency")


def test_combined_check_takes_the_worst_level_and_keeps_every_message():
    result = Check.combine(
        [Check(Level.NOTE, "a"), Check(Level.ERROR, "b"), Check(Level.OK, "fine")], "all fine"
    )
    assert result.level is Level.ERROR
    assert result.message == "b; a"
    assert Check.combine([Check(Level.OK, "x")], "all fine") == Check(Level.OK, "all fine")
