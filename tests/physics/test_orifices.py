"""Orifice flow and its inverses; restrictions known by one measured point."""

import math

import pytest
from fluids.flow_meter import flow_meter_discharge
from scipy.optimize import brentq

from fieldkit.physics.common import OutOfRangeError
from fieldkit.physics.orifices import (
    SHARP_EDGED_CD,
    orifice_diameter,
    orifice_flow,
    orifice_pressure_drop,
    restriction_pressure_drop,
)
from fieldkit.units import Q_
from fieldkit.units import parse_quantity as q


def test_sharp_edged_discharge_coefficient_is_pi_over_pi_plus_two():
    # Rabie, Fluid Power Engineering (McGraw-Hill 2009), p. 27: Cd = π / (π + 2) ≈ 0.61
    assert SHARP_EDGED_CD == pytest.approx(math.pi / (math.pi + 2), abs=0.002)


def test_one_millimetre_hole_at_100_bar_passes_about_4_4_litres_per_minute():
    # [calc] Rabie p. 27 orifice equation, worked by hand: A = π/4 · (1e-3 m)² = 7.854e-7 m²;
    # √(2 · 1.0e7 Pa / 870 kg/m³) = √22 989 = 151.62 m/s; Q = 0.61 · 7.854e-7 · 151.62 = 7.264e-5 m³/s
    # = 4.358 L/min
    assert orifice_flow(q("1 mm"), q("100 bar")).m_as("L/min") == pytest.approx(4.358, abs=0.002)


@pytest.mark.parametrize(
    ("d_mm", "bar", "rho", "cd"), [(1.0, 100, 870, 0.61), (1.2, 70, 850, 0.7), (3.0, 5, 880, 0.61)]
)
def test_orifice_flow_agrees_with_the_fluids_library_flow_meter_equation(d_mm, bar, rho, cd):
    # fluids (ChEDL, PyPI) flow_meter_discharge: ISO 5167 / ASME MFC-3M mass flow through an orifice plate.
    # In a 1 m pipe the approach factor 1/√(1 − β⁴) is 1 to within 1e-12, so it is the bare hole.
    mass = flow_meter_discharge(D=1.0, Do=d_mm / 1000, P1=bar * 1e5 + 1e5, P2=1e5, rho=rho, C=cd)
    expected_lpm = mass / rho * 60_000
    got = orifice_flow(Q_(d_mm, "mm"), Q_(bar, "bar"), cd, Q_(rho, "kg/m**3")).m_as("L/min")
    assert got == pytest.approx(expected_lpm, rel=1e-9)


def test_pressure_drop_for_a_flow_matches_a_root_finder():
    # scipy.optimize.brentq as an independent oracle: the Δp at which orifice_flow gives 3 L/min
    def excess(dp_bar: float) -> float:
        return orifice_flow(q("1.2 mm"), Q_(dp_bar, "bar")).m_as("L/min") - 3.0

    oracle = brentq(excess, 1e-6, 1000.0, xtol=1e-12)
    assert orifice_pressure_drop(q("3 L/min"), q("1.2 mm")).m_as("bar") == pytest.approx(oracle, rel=1e-9)


def test_diameter_for_a_flow_matches_a_root_finder():
    # scipy.optimize.brentq as an independent oracle: the hole that passes 10 L/min at 70 bar
    def excess(d_mm: float) -> float:
        return orifice_flow(Q_(d_mm, "mm"), q("70 bar")).m_as("L/min") - 10.0

    oracle = brentq(excess, 0.01, 20.0, xtol=1e-12)
    assert orifice_diameter(q("10 L/min"), q("70 bar")).m_as("mm") == pytest.approx(oracle, rel=1e-9)


def test_turbulent_restriction_drop_grows_with_the_square_of_flow():
    # Δp = Δp_known · (Q / Q_known)^2 [calc]: 2 bar at 50 L/min → 8 bar at 100 L/min
    assert restriction_pressure_drop(q("100 L/min"), q("50 L/min"), q("2 bar")).m_as("bar") == pytest.approx(
        8.0
    )


def test_laminar_restriction_drop_grows_in_step_with_flow():
    # n = 1 [calc]: 2 bar at 50 L/min → 4 bar at 100 L/min
    assert restriction_pressure_drop(q("100 L/min"), q("50 L/min"), q("2 bar"), exponent=1).m_as(
        "bar"
    ) == pytest.approx(4.0)


def test_absurd_flow_exponent_is_refused():
    with pytest.raises(OutOfRangeError, match="flow exponent"):
        restriction_pressure_drop(q("100 L/min"), q("50 L/min"), q("2 bar"), exponent=7)


def test_discharge_coefficient_above_one_is_refused():
    with pytest.raises(OutOfRangeError, match="discharge coefficient"):
        orifice_flow(q("1 mm"), q("100 bar"), discharge_coefficient=1.2)
