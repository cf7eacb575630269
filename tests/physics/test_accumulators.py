"""Accumulator precharge and delivered volume (Boyle's law, absolute pressures)."""

import pytest

from fieldkit.physics.accumulators import (
    ADIABATIC_NITROGEN,
    check_precharge,
    delivered_volume,
    expected_precharge,
    precharge_at_temperature,
    precharge_ratio,
)
from fieldkit.physics.common import Level, OutOfRangeError
from fieldkit.units import parse_quantity as q


def test_precharge_is_ninety_percent_of_minimum_working_pressure():
    # Field notes (from memory): gas precharge ≈ 90 % of minimum working pressure for energy storage
    assert expected_precharge(q("100 bar")).m_as("bar") == pytest.approx(90.0)
    assert precharge_ratio(q("90 bar"), q("100 bar")).m_as("percent") == pytest.approx(90.0)


def test_isothermal_delivery_uses_absolute_pressures():
    # Boyle p·V = const with absolute pressures [calc]: 10 L at 90 bar(g), between 100 and 200 bar(g):
    # absolute 91.01325, 101.01325, 201.01325 bar; gas at 100 bar(g): 10 · 91.01325/101.01325 = 9.0100 L;
    # at 200 bar(g): 10 · 91.01325/201.01325 = 4.5277 L; delivered 9.0100 − 4.5277 = 4.4823 L
    got = delivered_volume(q("10 L"), q("90 bar"), q("100 bar"), q("200 bar")).m_as("L")
    assert got == pytest.approx(4.4823, abs=0.0001)
    # Gauge pressures put straight into Boyle's law would give 10·0.9 − 10·0.45 = 4.5 L: a different answer.
    assert got != pytest.approx(4.5, abs=0.001)


def test_adiabatic_delivery_is_smaller_than_isothermal():
    # Polytropic p·Vⁿ = const, n = 1.4 for nitrogen [calc, by logarithms]:
    # p0/p1 = 91.01325/101.01325 = 0.90100, ln = −0.10425, /1.4 = −0.074462, e^ = 0.92824 → 9.2824 L;
    # p0/p2 = 91.01325/201.01325 = 0.45277, ln = −0.79237, /1.4 = −0.56598, e^ = 0.56781 → 5.6781 L;
    # delivered 9.2824 − 5.6781 = 3.6044 L
    got = delivered_volume(
        q("10 L"), q("90 bar"), q("100 bar"), q("200 bar"), exponent=ADIABATIC_NITROGEN
    ).m_as("L")
    assert got == pytest.approx(3.6044, abs=0.0002)
    assert got < delivered_volume(q("10 L"), q("90 bar"), q("100 bar"), q("200 bar")).m_as("L")


def test_local_barometric_pressure_is_used_when_given():
    # At 0.9 bar barometric (a high site) [calc]: absolute 90.9, 100.9, 200.9 bar;
    # 10 · 90.9/100.9 = 9.00892 L, 10 · 90.9/200.9 = 4.52464 L, delivered 4.48428 L
    # (4.48231 L at the standard atmosphere, so the local figure is seen)
    got = delivered_volume(q("10 L"), q("90 bar"), q("100 bar"), q("200 bar"), barometric=q("0.9 bar")).m_as(
        "L"
    )
    assert got == pytest.approx(4.48428, abs=0.00002)


def test_precharge_above_minimum_pressure_cuts_the_delivery_short():
    # Oil is only held above the precharge: delivery from 200 bar down to 120 bar, not to 100 bar [calc]:
    # gas fills all 10 L at 120 bar(g); at 200 bar(g) 10 · 121.01325/201.01325 = 6.0202 L;
    # delivered 10 − 6.0202 = 3.9798 L
    got = delivered_volume(q("10 L"), q("120 bar"), q("100 bar"), q("200 bar")).m_as("L")
    assert got == pytest.approx(3.9798, abs=0.0001)


def test_precharge_at_or_above_minimum_working_pressure_is_flagged():
    assert check_precharge(q("90 bar"), q("100 bar")).level is Level.OK
    high = check_precharge(q("105 bar"), q("100 bar"))
    assert high.level is Level.WARNING and "empties before" in high.message
    assert "ruptured bladder" in check_precharge(q("0 bar"), q("100 bar")).message


def test_maximum_below_minimum_pressure_is_refused():
    with pytest.raises(OutOfRangeError, match="maximum pressure 90 bar is below minimum pressure 100 bar"):
        delivered_volume(q("10 L"), q("80 bar"), q("100 bar"), q("90 bar"))


def test_polytropic_exponent_outside_gas_range_is_refused():
    with pytest.raises(OutOfRangeError, match="polytropic exponent"):
        delivered_volume(q("10 L"), q("80 bar"), q("100 bar"), q("200 bar"), exponent=0.5)


# --- precharge brought to the temperature its figure is stated at ---------------------------------
# Ideal gas at constant volume (Gay-Lussac's law, p1/T1 = p2/T2 in absolute pressure and kelvin;
# any physics textbook, e.g. the ideal gas law chapter; field notes [calc]). Standard atmosphere
# 1.01325 bar (SI Brochure, 101 325 Pa); 0 °C = 273.15 K.


def test_a_precharge_of_100_bar_at_20_c_reads_93_1_bar_at_0_c():
    # (100 + 1.01325) · 273.15 / 293.15 − 1.01325
    # = 101.01325 · 0.931776 − 1.01325 = 94.1217 − 1.01325 = 93.108 bar(g) [hand]
    got = precharge_at_temperature(q("100 bar"), q("20 °C"), q("0 °C")).m_as("bar")
    assert got == pytest.approx(93.108, abs=0.002)
    # The gauge figure scaled by kelvin alone (100 · 273.15/293.15 = 93.18) is a different answer.
    assert got != pytest.approx(93.178, abs=0.01)


def test_a_cold_reading_is_brought_up_to_the_figures_20_c():
    # Read 70 bar(g) at 5 °C; the figure is stated at 20 °C:
    # (70 + 1.01325) · 293.15 / 278.15 − 1.01325 = 71.01325 · 1.053928 − 1.01325
    # = 74.8429 − 1.01325 = 73.830 bar(g) [hand]
    got = precharge_at_temperature(q("70 bar"), q("5 °C"), q("20 °C")).m_as("bar")
    assert got == pytest.approx(73.830, abs=0.002)


def test_warming_from_20_to_50_c_adds_about_ten_percent():
    # Field notes: ≈ +10 % from 20 °C to 50 °C. (90 + 1.01325) · 323.15/293.15 − 1.01325
    # = 91.01325 · 1.102337 − 1.01325 = 100.327 − 1.01325 = 99.314 bar(g) [hand]
    got = precharge_at_temperature(q("90 bar"), q("20 °C"), q("50 °C")).m_as("bar")
    assert got == pytest.approx(99.314, abs=0.002)


def test_fahrenheit_temperatures_are_taken_in_kelvin_too():
    # 68 °F = 20 °C and 32 °F = 0 °C exactly: the same 93.108 bar(g) as above [hand].
    got = precharge_at_temperature(q("100 bar"), q("68 °F"), q("32 °F")).m_as("bar")
    assert got == pytest.approx(93.108, abs=0.002)


def test_a_temperature_below_absolute_zero_is_refused():
    with pytest.raises(OutOfRangeError, match="absolute zero"):
        precharge_at_temperature(q("100 bar"), q("-300 °C"), q("20 °C"))
