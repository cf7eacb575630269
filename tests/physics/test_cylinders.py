"""Cylinder areas, forces, speeds, flows, regeneration, drift and intensification."""

import pytest

from fieldkit.physics import cylinders
from fieldkit.physics.common import OutOfRangeError
from fieldkit.physics.cylinders import (
    annulus_area,
    bore_area,
    cylinder_force,
    cylinder_speed,
    flow_for_speed,
    intensified_rod_pressure,
    leakage_from_drift,
    regenerative_extension,
    return_flow,
)
from fieldkit.units import parse_quantity as q

BORE, ROD = q("100 mm"), q("70 mm")


def test_bore_and_annulus_areas():
    # [calc] bore 10 cm: 10² = 100 cm², · 0.785398 (π/4) = 78.540 cm²;
    # rod 7 cm: 7² = 49 cm², · 0.785398 = 38.485 cm²; annulus 78.540 − 38.485 = 40.055 cm²
    assert bore_area(BORE).m_as("cm**2") == pytest.approx(78.540, abs=0.001)
    assert annulus_area(BORE, ROD).m_as("cm**2") == pytest.approx(40.055, abs=0.001)


def test_field_notes_cylinder_example():
    # Field notes [calc]: 200 bar, bore 100 mm, rod 70 mm, 40 L/min → 157.1 kN, 0.0849 m/s, return flow 20.4
    # L/min
    assert cylinder_force(q("200 bar"), BORE, ROD).m_as("kN") == pytest.approx(157.1, abs=0.05)
    assert cylinder_speed(q("40 L/min"), BORE, ROD).m_as("m/s") == pytest.approx(0.0849, abs=0.00005)
    assert return_flow(q("40 L/min"), BORE, ROD).m_as("L/min") == pytest.approx(20.4, abs=0.05)


def test_force_in_newtons_is_bar_times_square_millimetres_over_ten():
    # F[N] = p[bar] · A[mm²] / 10 (field notes) [calc]: bore 100 mm → 7853.98 mm²; 150 · 7853.98 / 10
    # = 117 809.7 N; the same in SI: 1.5e7 Pa · 7.85398e-3 m² = 117 809.7 N
    assert cylinder_force(q("150 bar"), BORE, ROD).m_as("N") == pytest.approx(117_809.7, abs=0.1)


def test_retracting_pushes_on_the_annulus_and_runs_faster():
    # v[m/s] = Q[L/min] / (6 · A[cm²]) (field notes) [calc]; retract on the annulus A = 40.055 cm²:
    # force 2.0e7 Pa · 4.0055e-3 m² = 80 110.6 N = 80.11 kN;
    # speed 40 / (6 · 40.055) = 40 / 240.33 = 0.16644 m/s
    assert cylinder_force(q("200 bar"), BORE, ROD, "retract").m_as("kN") == pytest.approx(80.11, abs=0.005)
    assert cylinder_speed(q("40 L/min"), BORE, ROD, "retract").m_as("m/s") == pytest.approx(
        0.16644, abs=0.00001
    )


def test_retracting_returns_more_oil_than_the_pump_gives():
    # Q_out = Q_in · A_cap / A_annulus = 40 · 78.540 / 40.055 = 3141.6 / 40.055 = 78.43 L/min [calc]
    assert return_flow(q("40 L/min"), BORE, ROD, "retract").m_as("L/min") == pytest.approx(78.43, abs=0.005)


def test_back_pressure_on_the_rod_side_takes_force_off_the_extend_stroke():
    # F = p·A_cap − p_back·A_annulus [calc]: 157.08 kN − 10 bar · 40.06 cm² = 157.08 − 4.006 kN
    force = cylinder_force(q("200 bar"), BORE, ROD, back_pressure=q("10 bar")).m_as("kN")
    assert force == pytest.approx(157.080 - 4.006, abs=0.001)


def test_flow_for_a_speed_is_the_inverse_of_speed_for_a_flow():
    # Q = v · A [calc]: 0.0849 m/s on 78.54 cm² needs 40 L/min
    assert flow_for_speed(q("84.88 mm/s"), BORE, ROD).m_as("L/min") == pytest.approx(40.0, abs=0.01)


def test_regenerative_extension_works_on_the_rod_area_only():
    # v = Q / A_rod, F = p · A_rod with A_rod = π · 70² / 4 mm² = 38.48 cm² [calc]:
    # 40 L/min → 40 / (6 · 38.48) = 0.1732 m/s; 200 bar → 76.97 kN
    motion = regenerative_extension(q("200 bar"), q("40 L/min"), ROD)
    assert motion.speed.m_as("m/s") == pytest.approx(0.1732, abs=0.0001)
    assert motion.force.m_as("kN") == pytest.approx(76.97, abs=0.01)


def test_regenerative_force_is_extend_force_less_retract_force():
    # p·A_cap − p·A_annulus = p·A_rod [calc]
    extend = cylinder_force(q("200 bar"), BORE, ROD, "extend").m_as("kN")
    retract = cylinder_force(q("200 bar"), BORE, ROD, "retract").m_as("kN")
    assert regenerative_extension(q("200 bar"), q("40 L/min"), ROD).force.m_as("kN") == pytest.approx(
        extend - retract
    )


def test_drift_of_a_held_boom_gives_the_leak_from_the_cap_side():
    # Q_leak = v · A [calc]: 12 mm/min · 78.54 cm² = 94.2 cm³/min
    assert leakage_from_drift(q("12 mm/min"), BORE, ROD).m_as("cm**3/min") == pytest.approx(
        1.2 * 78.54, abs=0.01
    )
    # A load hanging from the rod loses oil from the annulus: 12 mm/min · 40.06 cm²
    assert leakage_from_drift(q("12 mm/min"), BORE, ROD, "rod").m_as("cm**3/min") == pytest.approx(
        1.2 * 40.06, abs=0.01
    )


def test_blocked_rod_side_is_intensified_above_system_pressure():
    # p_rod = p_cap · A_cap / A_annulus = 200 · 78.540 / 40.055 = 392.16 bar [calc]
    assert intensified_rod_pressure(q("200 bar"), BORE, ROD).m_as("bar") == pytest.approx(392.16, abs=0.005)


def test_intensification_is_documented_as_a_hazard():
    assert "HAZARD" in (cylinders.intensified_rod_pressure.__doc__ or "")


def test_rod_as_wide_as_the_bore_is_refused():
    with pytest.raises(OutOfRangeError, match="rod diameter 100 mm must be smaller than the bore 100 mm"):
        annulus_area(BORE, q("100 mm"))


def test_unknown_stroke_is_refused():
    with pytest.raises(OutOfRangeError, match="stroke must be 'extend' or 'retract'"):
        cylinder_speed(q("40 L/min"), BORE, ROD, "out")
