"""The rule expression language: units, arithmetic, conditions, functions, uncertainty.

Readings in these tests are invented; conversions are checked against scipy.constants
(CODATA / NIST SP 811 values) as an independent oracle.
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc

from fieldkit.expr import (
    BOOLEAN,
    BUILTIN_FUNCTIONS,
    SAME,
    ExprError,
    FunctionSpec,
    check_name,
    compile_expression,
    function_table,
    si_value,
)
from fieldkit.units import Q_, Kind, ureg

SYMBOLS = {
    "charge_pressure": Kind.PRESSURE,
    "case_pressure": Kind.PRESSURE,
    "stall_pressure": Kind.PRESSURE,
    "return_pressure": Kind.PRESSURE,
    "pump_case_drain_flow": Kind.FLOW,
    "pump_theoretical_flow": Kind.FLOW,
    "oil_temperature": Kind.TEMPERATURE,
    "tank_temperature": Kind.TEMPERATURE,
    "oil_viscosity": Kind.VISCOSITY,
    "pump_speed": Kind.SPEED,
    "pump_displacement": Kind.DISPLACEMENT,
    "gain": Kind.RATIO,
    "loop_closed": BOOLEAN,
}


def si(value: float, unit: str) -> float:
    return si_value(Q_(value, unit))


def run(source: str, **env: float | bool) -> float | bool:
    return compile_expression(source, SYMBOLS).evaluate(env)


# --- literals and units ----------------------------------------------------------------


def test_3500_psi_is_241_3_bar() -> None:
    # NIST SP 811 App. B.8: 1 psi = 6.894 757 kPa; oracle scipy.constants.psi (6894.757293168 Pa).
    value = run("3500 psi")
    assert value == pytest.approx(3500 * sc.psi, rel=1e-12)
    assert value / sc.bar == pytest.approx(241.3, abs=0.05)
    assert run("abs(3500 psi - 241.3 bar) < 0.05 bar") is True


@pytest.mark.parametrize(
    ("text", "expected_si"),
    [
        ("17 bar", 17 * sc.bar),  # SI Brochure table 8: 1 bar = 100 kPa
        ("17bar", 17 * sc.bar),
        ("2 L/min", 2 * sc.liter / sc.minute),
        ("10 gpm", 10 * sc.gallon / sc.minute),  # US gallon, scipy.constants.gallon
        ("12 mm/min", 12e-3 / sc.minute),
        ("1800 rpm", 1800 * 2 * math.pi / sc.minute),  # rad/s: 1 rev = 2π rad
        ("4 kgf/cm2", 4 * sc.kgf / sc.centi**2),  # NIST SP 811 B.8: 98 066.5 Pa
        ("1 atm", sc.atm),
        ("30 hp", 30 * sc.hp),
        ("90 %", 0.9),
        (".5 bar", 0.5 * sc.bar),
        ("45 cc/rev", 45e-6 / (2 * math.pi)),  # m³ per radian
        ("2", 2.0),
    ],
)
def test_unit_literals_become_si_floats(text: str, expected_si: float) -> None:
    assert run(text) == pytest.approx(expected_si, rel=1e-12)


def test_temperature_literals_are_absolute_kelvin() -> None:
    # Oracle: scipy.constants.convert_temperature.
    assert run("40 °C") == pytest.approx(sc.convert_temperature(40, "Celsius", "Kelvin"), rel=1e-12)
    assert run("104 °F") == pytest.approx(sc.convert_temperature(104, "Fahrenheit", "Kelvin"), rel=1e-12)
    # -40 is the same temperature on both scales (same oracle); the sign belongs to the literal.
    assert run("-40 °C") == pytest.approx(sc.convert_temperature(-40, "Celsius", "Kelvin"), rel=1e-12)
    assert run("-40 °C = -40 °F") is True


def test_temperature_difference_is_in_kelvin() -> None:
    rise = compile_expression("oil_temperature - tank_temperature", SYMBOLS)
    assert rise.temperature_difference
    value = rise.evaluate({"oil_temperature": si(65, "degC"), "tank_temperature": si(45, "degC")})
    assert value == pytest.approx(20.0, rel=1e-9)
    assert rise.to_quantity(value).to("delta_degC").magnitude == pytest.approx(20.0)
    assert (
        run(
            "oil_temperature - tank_temperature > 15 K",
            oil_temperature=si(65, "degC"),
            tank_temperature=si(45, "degC"),
        )
        is True
    )


def test_averaging_two_temperatures_stays_allowed() -> None:
    mean = run(
        "(oil_temperature + tank_temperature) / 2",
        oil_temperature=si(60, "degC"),
        tank_temperature=si(40, "degC"),
    )
    assert mean == pytest.approx(sc.convert_temperature(50, "Celsius", "Kelvin"))


@pytest.mark.parametrize(
    "source",
    [
        "oil_temperature - tank_temperature > 20 °C",
        "oil_temperature + 10 °C",
        "max(oil_temperature - tank_temperature, 5 °C)",
    ],
)
def test_celsius_literal_used_as_a_difference_is_refused(source: str) -> None:
    with pytest.raises(ExprError, match="in K"):
        compile_expression(source, SYMBOLS)


# --- arithmetic, comparisons, conditions -----------------------------------------------


@pytest.mark.parametrize(("charge_bar", "case_bar", "fires"), [(18.0, 2.0, True), (22.0, 2.0, False)])
def test_charge_margin_over_case_below_17_bar(charge_bar: float, case_bar: float, fires: bool) -> None:
    rule = compile_expression("charge_pressure - case_pressure < 17 bar", SYMBOLS)
    assert rule.result is BOOLEAN
    assert rule.names == frozenset({"charge_pressure", "case_pressure"})
    assert (
        rule.evaluate({"charge_pressure": si(charge_bar, "bar"), "case_pressure": si(case_bar, "bar")})
        is fires
    )


def test_drain_ratio_against_percent() -> None:
    rule = "pump_case_drain_flow / pump_theoretical_flow > 5 %"
    flows = {"pump_theoretical_flow": si(100, "L/min")}
    assert run(rule, pump_case_drain_flow=si(6, "L/min"), **flows) is True
    assert run(rule, pump_case_drain_flow=si(4, "L/min"), **flows) is False


def test_theoretical_flow_from_displacement_and_speed() -> None:
    # Q = V·n: 100 cm³/rev at 1000 rpm → 100 L/min (field notes: H&P pump efficiency article).
    flow = compile_expression("pump_displacement * pump_speed", SYMBOLS)
    assert flow.result == ureg.get_dimensionality("[volume] / [time]")
    value = flow.evaluate({"pump_displacement": si(100, "cm**3/revolution"), "pump_speed": si(1000, "rpm")})
    assert flow.to_quantity(value).to("L/min").magnitude == pytest.approx(100.0, rel=1e-12)


@pytest.mark.parametrize(
    ("source", "expected"),
    [
        ("2 + 3 * 4", 14.0),
        ("(2 + 3) * 4", 20.0),
        ("10 - 4 - 3", 3.0),
        ("8 / 4 / 2", 1.0),
        ("-2 ^ 2", -4.0),
        ("(-2) ^ 2", 4.0),
        ("2 ^ -1", 0.5),
        ("2 * 3 ^ 2", 18.0),
        ("-3 * -2", 6.0),
    ],
)
def test_precedence_of_arithmetic(source: str, expected: float) -> None:
    assert run(source) == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize(
    ("source", "expected"),
    [
        ("true or false and false", True),  # and binds tighter than or
        ("(true or false) and false", False),
        ("not 1 < 2 or true", True),  # not covers the comparison only
        ("not (1 < 2 or true)", False),
        ("1 + 1 = 2 and not 3 < 2", True),
    ],
)
def test_precedence_of_logic(source: str, expected: bool) -> None:
    assert run(source) is expected


@pytest.mark.parametrize(
    ("source", "expected"),
    [
        ("1 < 2", True),
        ("2 < 2", False),
        ("2 <= 2", True),
        ("3 > 2", True),
        ("2 > 2", False),
        ("2 >= 2", True),
        ("2 >= 3", False),
        ("0.1 + 0.2 = 0.3", True),  # equality allows relative float noise (1e-9)
        ("1 = 1.000001", False),
        ("1 != 1.000001", True),
        ("0 = 0", True),
    ],
)
def test_comparisons(source: str, expected: bool) -> None:
    assert run(source) is expected


def test_reading_equals_its_literal_despite_conversion_noise() -> None:
    # pint's round trip 205 bar → Pa carries float noise (style notes); '=' tolerates it.
    assert run("charge_pressure = 205 bar", charge_pressure=si_value(Q_(205.0, "bar").to("psi"))) is True


def test_when_then_else_picks_a_factor_by_temperature() -> None:
    rule = compile_expression("when oil_temperature < 40 °C then 0.5 else 1", SYMBOLS)
    assert rule.evaluate({"oil_temperature": si(35, "degC")}) == 0.5
    assert rule.evaluate({"oil_temperature": si(55, "degC")}) == 1.0


def test_when_chain_of_cases() -> None:
    rule = compile_expression(
        "when oil_temperature < 20 °C then 0 else when oil_temperature < 40 °C then 0.5 else 1", SYMBOLS
    )
    assert [rule.evaluate({"oil_temperature": si(t, "degC")}) for t in (10, 30, 50)] == [0.0, 0.5, 1.0]


def test_guards_keep_a_division_by_zero_from_running() -> None:
    # 'when' evaluates only the branch it picks and 'and' stops at the first false.
    stopped = {"pump_theoretical_flow": 0.0, "pump_case_drain_flow": si(1, "L/min")}
    ratio = "pump_case_drain_flow / pump_theoretical_flow"
    assert run(f"when pump_theoretical_flow > 0 L/min then {ratio} else 0", **stopped) == 0.0
    assert run(f"pump_theoretical_flow > 0 L/min and {ratio} > 5 %", **stopped) is False
    with pytest.raises(ExprError, match="division by zero"):
        run(ratio, **stopped)


def test_when_inside_a_sum_needs_parentheses() -> None:
    with pytest.raises(ExprError, match="parentheses"):
        compile_expression("1 + when true then 1 else 2", SYMBOLS)
    assert run("1 + (when true then 1 else 2)") == 2.0


def test_boolean_names_and_keywords() -> None:
    assert (
        run("loop_closed and charge_pressure < 10 bar", loop_closed=True, charge_pressure=si(8, "bar"))
        is True
    )
    assert run("not loop_closed", loop_closed=True) is False


# --- functions ---------------------------------------------------------------------------


def test_max_keeps_a_pressure_difference_non_negative() -> None:
    expr = compile_expression("max(stall_pressure - return_pressure, 0 bar)", SYMBOLS)
    assert expr.result == ureg.get_dimensionality("[pressure]")
    assert expr.evaluate(
        {"stall_pressure": si(210, "bar"), "return_pressure": si(5, "bar")}
    ) == pytest.approx(si(205, "bar"))
    assert expr.evaluate({"stall_pressure": si(3, "bar"), "return_pressure": si(5, "bar")}) == 0.0


@pytest.mark.parametrize(
    ("source", "expected_bar"),
    [
        ("min(10 bar, 3 bar, 7 bar)", 3.0),
        ("max(10 bar, 3 bar, 7 bar)", 10.0),
        ("abs(3 bar - 10 bar)", 7.0),
        ("clamp(30 bar, 0 bar, 25 bar)", 25.0),
        ("clamp(-5 bar, 0 bar, 25 bar)", 0.0),
        ("clamp(12 bar, 0 bar, 25 bar)", 12.0),
    ],
)
def test_builtin_functions(source: str, expected_bar: float) -> None:
    assert run(source) == pytest.approx(expected_bar * sc.bar)


def test_sqrt_halves_the_dimension() -> None:
    # Orifice flow scales with √Δp (Rabie, Fluid Power Engineering, p. 27): quadrupling Δp doubles Q.
    expr = compile_expression("sqrt(charge_pressure / case_pressure)", SYMBOLS)
    assert expr.evaluate({"charge_pressure": si(40, "bar"), "case_pressure": si(10, "bar")}) == pytest.approx(
        2.0
    )
    with pytest.raises(ExprError, match="square root"):
        compile_expression("sqrt(charge_pressure)", SYMBOLS)


def test_function_argument_kinds_are_checked() -> None:
    with pytest.raises(ExprError, match="same kind") as caught:
        compile_expression("max(charge_pressure, pump_case_drain_flow)", SYMBOLS)
    assert "pressure" in caught.value.message and "flow" in caught.value.message
    with pytest.raises(ExprError, match="at least 2 arguments"):
        compile_expression("max(charge_pressure)", SYMBOLS)
    with pytest.raises(ExprError, match="3 arguments"):
        compile_expression("clamp(charge_pressure, 1 bar)", SYMBOLS)


def _leak_at_reference(flow: float, viscosity: float, reference: float) -> float:
    return flow * viscosity / reference


LEAK = FunctionSpec(
    "leak_at_reference",
    (Kind.FLOW, Kind.VISCOSITY, Kind.VISCOSITY),
    Kind.FLOW,
    _leak_at_reference,
    "Laminar leakage at a reference viscosity (slot flow: Q ∝ 1/ν).",
)


def test_registered_physics_function_is_type_checked_and_called() -> None:
    # Laminar (Hagen–Poiseuille / slot) leakage scales with 1/ν at the same Δp (field notes, [calc]):
    # 4 L/min measured at 16 cSt is 2 L/min at 32 cSt.
    table = function_table(LEAK)
    rule = compile_expression(
        "leak_at_reference(pump_case_drain_flow, oil_viscosity, 32 cSt) > 3 L/min", SYMBOLS, table
    )
    assert rule.calls == frozenset({"leak_at_reference"})
    env = {"pump_case_drain_flow": si(4, "L/min"), "oil_viscosity": si(16, "cSt")}
    assert rule.evaluate(env) is False
    value = compile_expression(
        "leak_at_reference(pump_case_drain_flow, oil_viscosity, 32 cSt)", SYMBOLS, table
    ).evaluate(env)
    assert value == pytest.approx(si(2, "L/min"), rel=1e-12)
    with pytest.raises(ExprError, match="kinematic viscosity") as caught:
        compile_expression("leak_at_reference(pump_case_drain_flow, oil_temperature, 32 cSt)", SYMBOLS, table)
    assert caught.value.column == len("leak_at_reference(pump_case_drain_flow, ") + 1


def test_a_function_table_is_the_whole_table() -> None:
    only_leak = function_table(LEAK, builtins=False)
    with pytest.raises(ExprError, match="unknown function 'max'"):
        compile_expression("max(1, 2)", SYMBOLS, only_leak)
    with pytest.raises(ValueError, match="defined twice"):
        function_table(BUILTIN_FUNCTIONS["max"])


def test_function_spec_refuses_bad_definitions() -> None:
    with pytest.raises(ValueError):
        FunctionSpec("Bad", (SAME,), SAME, abs, "x")
    with pytest.raises(ValueError):
        FunctionSpec("twice", (Kind.FLOW,), SAME, abs, "x")
    with pytest.raises(ValueError):
        FunctionSpec("twice", (Kind.FLOW,), Kind.FLOW, abs, "  ")


# --- results, names and errors ---------------------------------------------------------------


def test_result_dimension_and_quantity_for_messages() -> None:
    expr = compile_expression("charge_pressure - case_pressure", SYMBOLS)
    assert expr.result == ureg.get_dimensionality("[pressure]")
    assert expr.result_kind is Kind.PRESSURE
    value = expr.evaluate({"charge_pressure": si(24, "bar"), "case_pressure": si(1.5, "bar")})
    assert expr.to_quantity(value).to("bar").magnitude == pytest.approx(22.5)
    assert (
        compile_expression("pump_case_drain_flow / pump_theoretical_flow", SYMBOLS).result_kind is Kind.RATIO
    )


def test_expect_boolean_refuses_a_value() -> None:
    with pytest.raises(ExprError, match="must give a true/false value, but it gives a pressure"):
        compile_expression("charge_pressure - case_pressure", SYMBOLS, expect=BOOLEAN)
    assert compile_expression("charge_pressure > 1 bar", SYMBOLS, expect=BOOLEAN).is_boolean


def test_unknown_name_lists_close_names() -> None:
    with pytest.raises(ExprError, match="did you mean charge_pressure") as caught:
        compile_expression("charge_presure < 17 bar", SYMBOLS)
    assert caught.value.column == 1


def test_error_message_shows_source_and_caret() -> None:
    with pytest.raises(ExprError) as caught:
        compile_expression("charge_pressure + pump_case_drain_flow", SYMBOLS)
    error = caught.value
    assert error.column == 17
    lines = str(error).splitlines()
    assert lines[1].strip() == "charge_pressure + pump_case_drain_flow"
    assert lines[2].index("^") == lines[1].index("+")


def test_missing_value_at_evaluation_is_reported() -> None:
    with pytest.raises(ExprError, match="no value for 'case_pressure'"):
        compile_expression("charge_pressure - case_pressure", SYMBOLS).evaluate({"charge_pressure": 1.0})


def test_check_name_refuses_keywords_units_and_odd_spellings() -> None:
    assert check_name("charge_pressure") == "charge_pressure"
    for bad in ("bar", "min", "when", "Charge", "a__b", "2x", "import"):
        with pytest.raises(ExprError):
            check_name(bad)


# --- uncertainty (JCGM 100:2008, GUM) -----------------------------------------------------------


def test_uncertainty_of_a_difference_is_root_sum_square() -> None:
    # GUM 5.1.2, eq. (10) with c = ±1: u_c = √(u₁² + u₂²).
    expr = compile_expression("charge_pressure - case_pressure", SYMBOLS)
    value, u = expr.evaluate_with_uncertainty(
        {"charge_pressure": si(24, "bar"), "case_pressure": si(1.5, "bar")},
        {"charge_pressure": si(0.16, "bar"), "case_pressure": si(0.04, "bar")},
    )
    assert value == pytest.approx(si(22.5, "bar"))
    assert u == pytest.approx(math.hypot(si(0.16, "bar"), si(0.04, "bar")), rel=1e-8)


def test_uncertainty_of_a_product_follows_relative_form() -> None:
    # GUM 5.1.6, eq. (12), exponents 1: (u_c/y)² = (u₁/x₁)² + (u₂/x₂)².
    expr = compile_expression("pump_displacement * pump_speed", SYMBOLS)
    x1, x2 = si(45, "cm**3/revolution"), si(1800, "rpm")
    u1, u2 = 0.01 * x1, 0.005 * x2
    value, u = expr.evaluate_with_uncertainty(
        {"pump_displacement": x1, "pump_speed": x2}, {"pump_displacement": u1, "pump_speed": u2}
    )
    assert u / value == pytest.approx(math.hypot(u1 / x1, u2 / x2), rel=1e-8)


def test_uncertainty_of_a_quotient_and_a_square() -> None:
    # GUM 5.1.6 eq. (12): exponent -1 contributes like +1; for y = x², u_c = 2·|x|·u (5.1.3, c = ∂f/∂x).
    ratio = compile_expression("pump_case_drain_flow / pump_theoretical_flow", SYMBOLS)
    value, u = ratio.evaluate_with_uncertainty(
        {"pump_case_drain_flow": 4.0, "pump_theoretical_flow": 80.0},
        {"pump_case_drain_flow": 0.2, "pump_theoretical_flow": 1.6},
    )
    assert u / value == pytest.approx(math.hypot(0.2 / 4.0, 1.6 / 80.0), rel=1e-8)
    square = compile_expression("gain ^ 2", SYMBOLS)
    value, u = square.evaluate_with_uncertainty({"gain": 3.0}, {"gain": 0.1})
    assert (value, u) == (pytest.approx(9.0), pytest.approx(2 * 3.0 * 0.1, rel=1e-8))


def test_names_without_uncertainty_are_exact_and_booleans_have_none() -> None:
    expr = compile_expression("charge_pressure - case_pressure", SYMBOLS)
    _, u = expr.evaluate_with_uncertainty(
        {"charge_pressure": 3.0, "case_pressure": 1.0}, {"case_pressure": 0.5}
    )
    assert u == pytest.approx(0.5, rel=1e-8)
    with pytest.raises(ExprError, match="true/false"):
        compile_expression("charge_pressure > 1 bar", SYMBOLS).evaluate_with_uncertainty(
            {"charge_pressure": 2.0}, {}
        )
    with pytest.raises(ExprError, match="standard uncertainty"):
        expr.evaluate_with_uncertainty(
            {"charge_pressure": 3.0, "case_pressure": 1.0}, {"case_pressure": -1.0}
        )
