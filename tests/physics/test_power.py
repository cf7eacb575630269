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


@pytest.mark.parametrize(
    ("bar", "lpm", "kw"),
    [
        # Hand calculation in SI: 200 bar = 2.0e7 Pa, 60 L/min = 1.0e-3 m³/s, P = 2.0e7 · 1.0e-3 = 20 000 W
        (200, 60, 20.0),
        # 350 bar = 3.5e7 Pa, 120 L/min = 2.0e-3 m³/s, P = 7.0e4 W = 70 kW
        (350, 120, 70.0),
        # 25 bar = 2.5e6 Pa, 18 L/min = 3.0e-4 m³/s, P = 750 W
        (25, 18, 0.75),
    ],
)
def test_hydraulic_power_worked_in_pascals_and_cubic_metres(bar, lpm, kw):
    # [calc] each row worked by hand in SI units (1 bar = 1e5 Pa, 1 L/min = 1/60 000 m³/s), written out above
    assert hydraulic_power(q(f"{bar} bar"), q(f"{lpm} L/min")).m_as("kW") == pytest.approx(kw)


def test_twenty_gpm_at_1500_psi_is_about_17_5_hp():
    # Engineering ToolBox, "Hydraulic pumps horsepower": 20 gpm at 1500 psi ≈ 17.5 hp
    assert hydraulic_power(q("1500 psi"), q("20 gpm")).m_as("hp") == pytest.approx(17.5, abs=0.05)


def test_us_units_follow_the_scipy_psi_and_gallon():
    # scipy.constants (reference library) for 1 psi in Pa and 1 US gallon in m³
    watts = hydraulic_power(q("1 psi"), q("1 gpm")).m_as("W")
    assert watts == pytest.approx(sc.psi * sc.gallon / 60, rel=1e-9)


def test_pump_needs_more_shaft_power_than_it_delivers():
    # [calc] 200 bar · 60 L/min = 2.0e7 Pa · 1.0e-3 m³/s = 20 000 W carried by the oil;
    # overall efficiency 85 % means the shaft gives 20 000 / 0.85 = 23 529 W (definition of ηt)
    assert pump_input_power(q("200 bar"), q("60 L/min"), 0.85).m_as("kW") == pytest.approx(23.529, abs=0.001)
    by_percent = pump_input_power(q("200 bar"), q("60 L/min"), Q_(85, "percent")).m_as("kW")
    assert by_percent == pytest.approx(23.529, abs=0.001)


def test_motor_delivers_less_shaft_power_than_it_takes():
    # [calc] 2.0e7 Pa · 1.0e-3 m³/s = 20 000 W fed to the motor; at 90 % overall 20 000 · 0.9 = 18 000 W
    assert motor_output_power(q("200 bar"), q("60 L/min"), 0.9).m_as("kW") == pytest.approx(18.0)


def test_all_flow_over_the_relief_becomes_heat():
    # Field notes (throttling heat, calc): all Δp · Q over a relief becomes heat; 210 bar · 60 L/min / 600 =
    # 21 kW
    assert throttling_heat(q("210 bar"), q("60 L/min")).m_as("kW") == pytest.approx(21.0)


def test_oil_heating_rate_from_heat_volume_density_and_specific_heat():
    # [calc] 10 kW into 100 L at 870 kg/m³ and cp 2060 J/(kg·K) (Rabie, Fluid Power Engineering, p. 45):
    # mass 0.1 m³ · 870 = 87 kg; heat capacity 87 · 2060 = 179 220 J/K;
    # 10 000 W / 179 220 J/K = 0.055797 K/s; · 60 = 3.348 K/min
    rate = oil_heating_rate(q("10 kW"), q("100 L"), q("870 kg/m3"), Q_(2060, "J / kg / K"))
    assert rate.m_as("K/min") == pytest.approx(3.348, abs=0.001)


def test_throttling_warms_oil_about_0_6_kelvin_per_10_bar():
    # ΔT = Δp / (ρ · cp) ≈ 0.6 K per 10 bar with ρ = 870, cp = 1900 (field notes) [calc]
    rise = throttling_temperature_rise(q("10 bar"), q("870 kg/m3"), Q_(1900, "J / kg / K"))
    assert rise.m_as("K") == pytest.approx(0.6, abs=0.01)


def test_throttling_rise_with_rabie_specific_heat_is_the_default():
    # Rabie, Fluid Power Engineering, p. 45: cp = 2060 J/(kg·K) at 50 °C. [calc] 10 bar = 1.0e6 Pa;
    # ρ · cp = 870 · 2060 = 1 792 200 J/(m³·K); 1.0e6 / 1 792 200 = 0.558 K
    assert throttling_temperature_rise(q("10 bar")).m_as("K") == pytest.approx(0.558, abs=0.0005)


def test_150_bar_across_a_relief_warms_40_litres_per_minute_by_about_8_4_kelvin():
    # [calc] heat: 1.5e7 Pa · 6.667e-4 m³/s = 10 000 W. Mass flow 6.667e-4 · 870 = 0.58 kg/s;
    # it carries 0.58 · 2060 = 1194.8 W per kelvin, so 10 000 / 1194.8 = 8.370 K (Rabie p. 45 for cp)
    assert throttling_heat(q("150 bar"), q("40 L/min")).m_as("W") == pytest.approx(10_000.0)
    assert throttling_temperature_rise(q("150 bar")).m_as("K") == pytest.approx(8.370, abs=0.001)
