"""Closed-loop charge pressure and the charge flow budget."""

import pytest
import scipy.constants as sc

from fieldkit.physics.closed_loop import charge_flow_budget, expected_charge_pressure, net_charge_pressure
from fieldkit.units import parse_quantity as q


def test_net_charge_pressure_is_charge_less_case():
    # [calc] 25 bar charge gauge, 2 bar case gauge → 23 bar net
    assert net_charge_pressure(q("25 bar"), q("2 bar")).m_as("bar") == pytest.approx(23.0)


def test_flushing_relief_governs_charge_pressure_in_stroke():
    # Model (common practice, from memory): neutral → charge relief; in stroke → the lower flushing relief
    expected = expected_charge_pressure(q("25 bar"), q("18 bar"))
    assert expected.neutral.m_as("bar") == pytest.approx(25.0)
    assert expected.in_stroke.m_as("bar") == pytest.approx(18.0)
    assert expected.in_stroke_governed_by == "flushing relief"


def test_flushing_relief_set_above_charge_relief_leaves_charge_relief_in_control():
    expected = expected_charge_pressure(q("25 bar"), q("28 bar"))
    assert expected.in_stroke.m_as("bar") == pytest.approx(25.0)
    assert expected.in_stroke_governed_by == "charge relief"


def test_case_pressure_adds_to_the_charge_gauge_reading():
    # Reliefs venting to a case: back pressure adds one for one (field notes, from memory / common practice);
    # psi in Pa from scipy.constants (reference library)
    expected = expected_charge_pressure(q("350 psi"), q("16 bar"), case_pressure=q("1.5 bar"))
    assert expected.neutral.m_as("psi") == pytest.approx(350 + 1.5e5 / sc.psi)
    assert expected.in_stroke.m_as("bar") == pytest.approx(17.5)


def test_charge_pump_keeps_the_loop_full_with_flow_to_spare():
    # Supply V · n · ηv = 14 cm³/rev · 2000 rpm · 0.9 = 25.2 L/min; demand 3 + 2 + 10 = 15 L/min [calc]
    budget = charge_flow_budget(q("14 cc/rev"), q("2000 rpm"), 0.9, q("3 L/min"), q("2 L/min"), q("10 L/min"))
    assert budget.supply.m_as("L/min") == pytest.approx(25.2)
    assert budget.demand.m_as("L/min") == pytest.approx(15.0)
    assert budget.surplus.m_as("L/min") == pytest.approx(10.2)
    assert budget.keeps_loop_full


def test_worn_loop_outruns_the_charge_pump():
    # Demand 12 + 9 + 10 = 31 L/min > 25.2 L/min supply: a 5.8 L/min deficit [calc]
    budget = charge_flow_budget(
        q("14 cc/rev"), q("2000 rpm"), 0.9, q("12 L/min"), q("9 L/min"), q("10 L/min")
    )
    assert budget.surplus.m_as("L/min") == pytest.approx(-5.8)
    assert not budget.keeps_loop_full
    assert "charge pressure will fall" in budget.message


def test_flushing_through_the_motor_case_is_not_counted_twice():
    # The motor case drain reading (12 L/min) already includes the 10 L/min flushing flow [calc]
    budget = charge_flow_budget(
        q("14 cc/rev"),
        q("2000 rpm"),
        0.9,
        q("3 L/min"),
        q("12 L/min"),
        q("10 L/min"),
        flushing_through_motor_case=True,
    )
    assert budget.demand.m_as("L/min") == pytest.approx(15.0)
