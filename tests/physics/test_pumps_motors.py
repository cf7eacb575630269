"""Pump and motor flow, ISO 4391 efficiencies, leakage, motor torque and speed."""

import pytest

from fieldkit.physics.common import OutOfRangeError
from fieldkit.physics.pumps_motors import (
    case_drain_leakage,
    motor_hydromechanical_efficiency,
    motor_output,
    motor_overall_efficiency,
    motor_speed,
    motor_torque,
    motor_volumetric_efficiency,
    pump_hydromechanical_efficiency,
    pump_overall_efficiency,
    pump_volumetric_efficiency,
    theoretical_flow,
    two_speed_motor_output,
    volumetric_efficiency_from_flow_test,
)
from fieldkit.units import Q_
from fieldkit.units import parse_quantity as q

V = q("100 cc/rev")


def test_theoretical_flow_is_displacement_times_speed():
    # Hydraulics & Pneumatics, "How to calculate hydraulic pump and motor efficiency" (2023):
    # 100 cm³/rev at 1000 rpm → 100 L/min theoretical
    assert theoretical_flow(V, q("1000 rpm")).m_as("L/min") == pytest.approx(100.0)


def test_pump_delivering_90_of_100_litres_is_90_percent_volumetric():
    # Same H&P example: 90 L/min measured at 207 bar → ηv = 90 %
    assert pump_volumetric_efficiency(q("90 L/min"), V, q("1000 rpm")).m_as("percent") == pytest.approx(90.0)


def test_flow_test_corrects_for_the_engine_slowing_under_load():
    # Per-revolution comparison [calc]: 100 L/min at 1000 rpm no load, 88.2 L/min at 980 rpm loaded
    # → 0.090 / 0.100 L/rev = 90 %; the raw flows alone would wrongly say 88.2 %.
    eta = volumetric_efficiency_from_flow_test(q("100 L/min"), q("1000 rpm"), q("88.2 L/min"), q("980 rpm"))
    assert eta.m_as("percent") == pytest.approx(90.0)


def test_pump_overall_efficiency_is_volumetric_times_hydromechanical():
    # ISO 4391 definitions (from memory): ηt = ηv · ηhm. Torque that makes ηhm 95 % at 207 bar:
    # T = Δp · V / (2π · 0.95) [calc]
    dp, n, flow = q("207 bar"), q("1000 rpm"), q("90 L/min")
    torque = Q_(207e5 * 100e-6 / (2 * 3.141592653589793 * 0.95), "N * m")
    eta_hm = pump_hydromechanical_efficiency(dp, V, torque).m_as("percent")
    eta_v = pump_volumetric_efficiency(flow, V, n).m_as("percent")
    eta_t = pump_overall_efficiency(dp, flow, torque, n).m_as("percent")
    # [calc] ηv = 90 L/min / (0.1 L/rev · 1000 rpm) = 90 %; ηt = 0.90 · 0.95 = 85.5 %
    assert eta_hm == pytest.approx(95.0)
    assert eta_v == pytest.approx(90.0)
    assert eta_t == pytest.approx(85.5)


def test_motor_efficiencies_are_the_pump_ratios_turned_over():
    # ISO 4391 (from memory): motor ηv = V·n / Q_in, ηhm = 2π·T / (Δp·V), ηt = ηv · ηhm [calc]
    dp, flow, n = q("250 bar"), q("100 L/min"), q("900 rpm")
    torque = q("358.1 N·m")  # 0.9 × 397.9 N·m
    eta_v = motor_volumetric_efficiency(flow, V, n).m_as("percent")
    eta_hm = motor_hydromechanical_efficiency(dp, V, torque).m_as("percent")
    eta_t = motor_overall_efficiency(dp, flow, torque, n).m_as("percent")
    assert eta_v == pytest.approx(90.0)
    assert eta_hm == pytest.approx(90.0, abs=0.01)
    # [calc] ηhm = 358.1 / 397.887 = 0.90000; ηt = 0.90 · 0.90000 = 81.0 %
    assert eta_t == pytest.approx(81.0, abs=0.01)


def test_100cc_motor_at_250_bar_gives_397_9_newton_metres():
    # T = Δp · V / (2π) = 250e5 · 100e-6 / 2π = 397.9 N·m (field notes) [calc]
    assert motor_torque(q("250 bar"), V).m_as("N*m") == pytest.approx(397.9, abs=0.05)


def test_motor_torque_falls_with_hydromechanical_losses():
    # T = Δp · V / (2π) · ηhm [calc]: 2.5e7 Pa · 1e-4 m³ / 6.28319 = 397.887 N·m; · 0.9 = 358.10 N·m
    assert motor_torque(q("250 bar"), V, 0.9).m_as("N*m") == pytest.approx(358.10, abs=0.01)


def test_motor_speed_is_flow_over_displacement_less_leakage():
    # n = Q · ηv / V [calc]: 100 L/min · 0.95 / 0.1 L/rev = 950 rpm
    assert motor_speed(q("100 L/min"), V, Q_(95, "percent")).m_as("rpm") == pytest.approx(950.0)


def test_two_speed_motor_at_half_displacement_runs_twice_as_fast_with_half_the_torque():
    # V · r with r = 0.5: n doubles, T halves [calc from T = Δp·V/2π and n = Q/V]
    full = motor_output(q("250 bar"), q("100 L/min"), V)
    high = two_speed_motor_output(q("250 bar"), q("100 L/min"), V, 0.5)
    # [calc] full: 100 L/min / 0.1 L/rev = 1000 rpm, 397.887 N·m; half: 100 / 0.05 = 2000 rpm,
    # 2.5e7 · 5e-5 / 6.28319 = 198.94 N·m
    assert full.speed.m_as("rpm") == pytest.approx(1000.0)
    assert high.speed.m_as("rpm") == pytest.approx(2000.0)
    assert high.torque.m_as("N*m") == pytest.approx(198.94, abs=0.01)


def test_case_drain_as_share_of_theoretical_flow():
    # 3 L/min case drain on a 100 L/min theoretical pump = 3 % [calc]
    leak = case_drain_leakage(q("3 L/min"), V, q("1000 rpm"))
    assert leak.flow.m_as("L/min") == pytest.approx(3.0)
    assert leak.fraction_of_theoretical.m_as("percent") == pytest.approx(3.0)


def test_flushing_oil_through_the_case_is_not_counted_as_leakage():
    # 5 L/min drain of which 4 L/min is flushing oil → 1 L/min leakage, 1 % [calc]
    leak = case_drain_leakage(q("5 L/min"), V, q("1000 rpm"), other_case_flow=q("4 L/min"))
    assert leak.flow.m_as("L/min") == pytest.approx(1.0)
    assert leak.fraction_of_theoretical.m_as("percent") == pytest.approx(1.0)


def test_stopped_pump_has_no_efficiency_to_report():
    with pytest.raises(OutOfRangeError, match="shaft speed must be above zero"):
        pump_volumetric_efficiency(q("10 L/min"), V, q("0 rpm"))
