"""Oil viscosity against temperature (ASTM D341), grades, leakage normalisation, validity checks."""

import math

import pytest
from scipy.optimize import brentq

from fieldkit.physics.common import Level, OutOfRangeError
from fieldkit.physics.fluid import (
    VG_GRADES,
    ViscosityWindow,
    check_test_temperature,
    check_viscosity,
    grade,
    normalised_leakage,
    viscosity_at,
    viscosity_curve,
)
from fieldkit.units import Q_
from fieldkit.units import parse_quantity as q

VG32 = viscosity_curve(q("32 cSt"), q("40 °C"), q("5.4 cSt"), q("100 °C"))


def test_astm_d341_vg32_reads_about_8_5_cst_at_80_c():
    # Field notes [2nd-hand]: 32 cSt at 40 °C and 5.4 cSt at 100 °C → about 8.5 cSt at 80 °C
    assert VG32.at(q("80 °C")).m_as("cSt") == pytest.approx(8.5, abs=0.1)


def test_astm_d341_worked_by_hand_for_32_and_5_4_cst():
    # ASTM D341 (Walther) worked by hand, Z = ν + 0.7, Y = log10 log10 Z, X = log10 T[K]:
    # 40 °C: Z = 32.7, log10 = 1.514548, Y1 = 0.180283; X1 = log10 313.15 = 2.495752
    # 100 °C: Z = 6.1, log10 = 0.785330, Y2 = −0.104948; X2 = log10 373.15 = 2.571883
    # slope B = (0.180283 + 0.104948) / (2.571883 − 2.495752) = 0.285231 / 0.076131 = 3.74658
    # 80 °C: X = log10 353.15 = 2.547959; Y = 0.180283 − 3.74658 · 0.052207 = −0.015314;
    #   log10 Z = 10^−0.015314 = 0.965353; Z = 10^0.965353 = 9.2332; ν = 8.533 cSt
    # 50 °C: X = log10 323.15 = 2.509404; Y = 0.180283 − 3.74658 · 0.013652 = 0.129136;
    #   log10 Z = 1.346281; Z = 22.196; ν = 21.496 cSt
    assert VG32.b == pytest.approx(3.74658, abs=1e-4)
    assert VG32.at(q("80 °C")).m_as("cSt") == pytest.approx(8.533, abs=0.002)
    assert VG32.at(q("50 °C")).m_as("cSt") == pytest.approx(21.496, abs=0.005)


def test_walther_line_passes_through_its_two_points():
    # [calc] the fit is exact at the points that define it
    assert VG32.at(q("40 °C")).m_as("cSt") == pytest.approx(32.0)
    assert VG32.at(q("100 °C")).m_as("cSt") == pytest.approx(5.4)


def test_temperature_for_a_viscosity_matches_a_root_finder():
    # scipy.optimize.brentq as an independent oracle for the inverse of ν(T)
    def excess(t_c: float) -> float:
        return VG32.at(Q_(t_c, "degC")).m_as("cSt") - 1000.0

    oracle = brentq(excess, -60.0, 40.0, xtol=1e-9)
    assert VG32.temperature_for(q("1000 cSt")).m_as("degC") == pytest.approx(oracle, abs=1e-6)


def test_vg_midpoints_at_40_c_are_the_grade_numbers():
    # ISO 3448 (field notes, 2nd-hand): midpoint at 40 °C ± 10 %, e.g. VG32 28.8–35.2 cSt
    assert [g.at_40c.m_as("cSt") for g in VG_GRADES.values()] == [10, 15, 22, 32, 46, 68, 100, 150]


def test_vg_100_c_values_match_the_field_notes():
    # Field notes (from memory, VI ≈ 100): VG32 ≈ 5.4, VG46 ≈ 6.8, VG68 ≈ 8.7 cSt at 100 °C
    assert {n: VG_GRADES[n].at_100c.m_as("cSt") for n in ("VG32", "VG46", "VG68")} == {
        "VG32": 5.4,
        "VG46": 6.8,
        "VG68": 8.7,
    }


def test_filled_grades_keep_the_walther_slope_falling_with_grade():
    # Self-consistency of the from-memory 100 °C values [calc]: at one VI the Walther slope b falls
    # steadily as the grade rises, as it does through the field notes' VG32–VG68.
    slopes = [g.curve.b for g in VG_GRADES.values()]
    assert slopes == sorted(slopes, reverse=True)
    # Each 100 °C value says where it comes from: memory, or D2270 (test_oil_grades_d2270.py).
    assert all("from memory" in g.note or "D2270" in g.note for g in VG_GRADES.values())


def test_grade_names_are_read_the_way_they_are_written():
    assert grade("ISO VG 46") is grade("VG46") is grade("46")
    with pytest.raises(OutOfRangeError, match="'VG47' is not a grade"):
        grade("VG47")


def test_hot_oil_leakage_normalised_to_reference_temperature():
    # Laminar leakage ∝ 1/ν (field notes, Hagen–Poiseuille). [calc] with the hand-worked D341 values above,
    # ν(80 °C) = 8.533 cSt and ν(50 °C) = 21.496 cSt: 6 L/min · 8.533 / 21.496 = 2.382 L/min at 50 °C
    measured = q("6 L/min")
    at_ref = normalised_leakage(measured, q("50 °C"), q("50 °C"), VG32)
    hot = normalised_leakage(measured, q("80 °C"), q("50 °C"), VG32)
    assert at_ref.m_as("L/min") == pytest.approx(6.0)
    assert hot.m_as("L/min") == pytest.approx(2.382, abs=0.002)


def test_viscosity_at_a_grade_uses_its_curve():
    assert viscosity_at(grade("VG46"), q("40 °C")).m_as("cSt") == pytest.approx(46.0)


def test_viscosity_window_levels():
    # Defaults from memory / common practice: optimum 16–36 cSt, minimum 10, cold-start max 1000
    assert check_viscosity(q("25 cSt")).level is Level.OK
    assert check_viscosity(q("12 cSt")).level is Level.NOTE
    thin = check_viscosity(q("8 cSt"))
    assert thin.level is Level.WARNING and "thinner than the pump's minimum 10 cSt" in thin.message
    thick = check_viscosity(q("1500 cSt"))
    assert thick.level is Level.WARNING and "cold-start limit" in thick.message


def test_machine_own_viscosity_window_overrides_the_defaults():
    window = ViscosityWindow(
        optimum_low=q("20 cSt"), optimum_high=q("30 cSt"), minimum=q("12 cSt"), cold_start_max=q("800 cSt")
    )
    assert check_viscosity(q("11 cSt"), window).level is Level.WARNING
    assert check_viscosity(q("900 cSt"), window).level is Level.WARNING
    with pytest.raises(OutOfRangeError, match="minimum ≤ optimum low"):
        ViscosityWindow(minimum=q("40 cSt"))


def test_cold_oil_makes_a_test_invalid():
    # Default minimum 38 °C: lower edge of the usual 38–60 °C band (field notes, common practice)
    cold = check_test_temperature(q("20 °C"))
    assert cold.level is Level.WARNING and "too cold" in cold.message
    assert check_test_temperature(q("50 °C")).ok
    assert check_test_temperature(q("104 °F"), minimum=q("45 °C")).level is Level.WARNING


def test_oil_that_thickens_when_warmed_is_refused():
    with pytest.raises(OutOfRangeError, match="oil thins as it warms"):
        viscosity_curve(q("5 cSt"), q("40 °C"), q("32 cSt"), q("100 °C"))


def test_viscosity_curve_needs_two_temperatures():
    with pytest.raises(OutOfRangeError, match="different temperatures"):
        viscosity_curve(q("32 cSt"), q("40 °C"), q("30 cSt"), q("104 °F"))


def test_walther_constants_are_finite_for_every_grade():
    assert all(math.isfinite(g.curve.a) and math.isfinite(g.curve.b) for g in VG_GRADES.values())
