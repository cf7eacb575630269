"""Hydraulic power, shaft power and throttling heat."""

import pytest
import scipy.constants as sc

from fieldkit.physics.power import (
    hydraulic_power,
    motor_output_power,
    oil_heating_rate,
    pump_input_power,
    throttling_heat,
    throttling_temperature_rise,
)
from fieldkit.units import Q_
from fieldkit.units import parse_quantity as q


@pytest.mark.parametrize(("bar", "lpm"), [(200, 60), (350, 120), (25, 18), (1, 1)])
def test_kilowatts_are_bar_times_litres_per_minute_over_600(bar, lpm):
    # P[kW] = p[bar] · Q[L/min] / 600, exact from the units [calc]
    assert hydraulic_power(q(f"{bar} bar"), q(f"{lpm} L/min")).m_as("kW") == pytest.approx(bar * lpm / 600)


def test_twenty_gpm_at_1500_psi_is_about_17_5_hp():
    # Engineering ToolBox, "Hydraulic pumps horsepower": 20 gpm at 1500 psi ≈ 17.5 hp
    assert hydraulic_power(q("1500 psi"), q("20 gpm")).m_as("hp") == pytest.approx(17.5, abs=0.05)


def test_us_units_follow_the_scipy_psi_and_gallon():
    # scipy.constants (reference library) for 1 psi in Pa and 1 US gallon in m³
    watts = hydraulic_power(q("1 psi"), q("1 gpm")).m_as("W")
    assert watts == pytest.approx(sc.psi * sc.gallon / 60, rel=1e-9)


def test_pump_needs_more_shaft_power_than_it_delivers():
    # P_in = p · Q / ηt [calc, definition of overall efficiency]: 20 kW hydraulic at 85 % → 23.53 kW
    assert pump_input_power(q("200 bar"), q("60 L/min"), 0.85).m_as("kW") == pytest.approx(20 / 0.85)
    assert pump_input_power(q("200 bar"), q("60 L/min"), Q_(85, "percent")).m_as("kW") == pytest.approx(
        20 / 0.85
    )


def test_motor_delivers_less_shaft_power_than_it_takes():
    # P_out = Δp · Q · ηt [calc]: 20 kW hydraulic at 90 % → 18 kW
    assert motor_output_power(q("200 bar"), q("60 L/min"), 0.9).m_as("kW") == pytest.approx(18.0)


def test_all_flow_over_the_relief_becomes_heat():
    # Field notes (throttling heat, calc): all Δp · Q over a relief becomes heat; 210 bar · 60 L/min / 600 =
    # 21 kW
    assert throttling_heat(q("210 bar"), q("60 L/min")).m_as("kW") == pytest.approx(21.0)


def test_oil_heating_rate_from_heat_volume_density_and_specific_heat():
    # dT/dt = P / (ρ · V · cp) [calc]: 10 kW into 100 L at 870 kg/m³, 2060 J/(kg·K) (Rabie p. 45)
    # = 10 000 / (870 · 0.1 · 2060) = 0.0558 K/s = 3.348 K/min
    rate = oil_heating_rate(q("10 kW"), q("100 L"), q("870 kg/m3"), Q_(2060, "J / kg / K"))
    assert rate.m_as("K/min") == pytest.approx(10_000 / (870 * 0.1 * 2060) * 60)
    assert rate.m_as("K/min") == pytest.approx(3.348, abs=0.001)


def test_throttling_warms_oil_about_0_6_kelvin_per_10_bar():
    # ΔT = Δp / (ρ · cp) ≈ 0.6 K per 10 bar with ρ = 870, cp = 1900 (field notes) [calc]
    rise = throttling_temperature_rise(q("10 bar"), q("870 kg/m3"), Q_(1900, "J / kg / K"))
    assert rise.m_as("K") == pytest.approx(0.6, abs=0.01)


def test_throttling_rise_with_rabie_specific_heat_is_the_default():
    # Rabie, Fluid Power Engineering, p. 45: cp = 2060 J/(kg·K) at 50 °C; 1e6 / (870 · 2060) = 0.558 K per 10
    # bar [calc]
    assert throttling_temperature_rise(q("10 bar")).m_as("K") == pytest.approx(1e6 / (870 * 2060))


def test_temperature_rise_agrees_with_the_heat_the_same_flow_makes():
    # Heat balance Δp · Q = ρ · Q · cp · ΔT, so ΔT = heat / (ρ · Q · cp) [calc]
    heat = throttling_heat(q("150 bar"), q("40 L/min")).m_as("W")
    rise = throttling_temperature_rise(q("150 bar")).m_as("K")
    assert rise == pytest.approx(heat / (870 * (40e-3 / 60) * 2060))
