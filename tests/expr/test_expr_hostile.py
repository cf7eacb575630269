"""Rule packs are text from people: code-execution attempts, bombs and wrong units are refused
with a clear ExprError, never a traceback from inside the evaluator."""

from __future__ import annotations

import builtins
import math

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.expr import (
    MAX_CHARS,
    MAX_DEPTH,
    MAX_TOKENS,
    ExprError,
    FunctionSpec,
    compile_expression,
    function_table,
)
from fieldkit.units import Kind

SYMBOLS = {
    "charge_pressure": Kind.PRESSURE,
    "case_pressure": Kind.PRESSURE,
    "pump_flow": Kind.FLOW,
    "gain": Kind.RATIO,
    "x": Kind.RATIO,
}


def refused(source: object, functions: object = None) -> ExprError:
    with pytest.raises(ExprError) as caught:
        compile_expression(source, SYMBOLS, functions)  # type: ignore[arg-type]
    return caught.value


def test_expr_error_is_a_fieldkit_error() -> None:
    assert issubclass(ExprError, FieldkitError)


@pytest.mark.parametrize(
    ("source", "says"),
    [
        ("__import__('os')", "'__'"),
        ("().__class__", "'__'"),
        ("charge_pressure.__dict__", "'__'"),
        ("charge_pressure.real", "attribute access"),
        ("(charge_pressure).real", "decimal point"),
        ('open("x")', "not part of the rule language"),
        ("open(x)", "not part of the rule language"),
        ("exec", "not part of the rule language"),
        ("eval(x)", "not part of the rule language"),
        ("getattr(x, x)", "not part of the rule language"),
        ("lambda: 1", "not part of the rule language"),
        ("import os", "not part of the rule language"),
        ("'bar'", "quotes"),
        ('"17 bar"', "quotes"),
        ("`x`", "quotes"),
        ("x[0]", "square brackets"),
        ("{x}", "braces"),
        ("x; x", "one expression"),
        ("x if true else 1", "when"),
        ("system(x)", "unknown function"),
        ("x == 1", "write '='"),
        ("x ** 2", "'^'"),
        ("x && true", "and"),
        ("!x", "not"),
        ("x # comment", "comments"),
        ("x\\\n+1", "backslash"),
        ("x\u200b< 1", "invisible"),
        ("X < 1", "lower-case"),
    ],
)
def test_code_execution_attempts_are_refused(source: str, says: str) -> None:
    error = refused(source)
    assert says in error.message
    assert error.column is not None and str(error).count("^") >= 1


def test_the_language_never_reaches_python_eval(monkeypatch: pytest.MonkeyPatch) -> None:
    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("eval/exec/compile must never be used")

    for name in ("eval", "exec", "compile"):
        monkeypatch.setattr(builtins, name, forbidden)
    rule = compile_expression(
        "when gain > 0.5 then max(charge_pressure - case_pressure, 0 bar) else 1 bar ^ 1", SYMBOLS
    )
    assert rule.evaluate({"gain": 0.9, "charge_pressure": 2e6, "case_pressure": 1e5}) == 1.9e6


@pytest.mark.parametrize(
    "source",
    ["2 ^ 100000", "9^9^9", "x ^ x", "2 ^ 5", "2 ^ -5", "2 ^ 2.5", "2 ^ (2)", "2 ^ 1 bar", "x ^ 2 ^ 2"],
)
def test_exponent_bombs_are_refused_at_compile_time(source: str) -> None:
    error = refused(source)
    assert "power" in error.message or "exponent" in error.message


def test_stacked_powers_overflow_into_a_clear_error() -> None:
    # 2^(4^5) = 2^1024 exceeds the largest double (IEEE 754 binary64 max ≈ 1.8e308).
    assert "too large" in refused("((((2 ^ 4) ^ 4) ^ 4) ^ 4) ^ 4").message
    bomb = compile_expression("((((x ^ 4) ^ 4) ^ 4) ^ 4) ^ 4", SYMBOLS)
    assert bomb.evaluate({"x": 1.0}) == 1.0
    with pytest.raises(ExprError, match="too large"):
        bomb.evaluate({"x": 2.0})


@pytest.mark.parametrize(
    "source",
    [
        "(" * 10_000 + "x" + ")" * 10_000,
        "-" * 10_000 + "x",
        "not " * 5_000 + "true",
        "x+" * 10_000 + "x",
    ],
)
def test_huge_hostile_input_is_refused_by_size(source: str) -> None:
    assert str(MAX_CHARS) in refused(source).message


@pytest.mark.parametrize(
    "source",
    [
        "(" * (MAX_DEPTH + 1) + "x" + ")" * (MAX_DEPTH + 1),
        "-" * (MAX_DEPTH + 1) + "x",
        "not " * (MAX_DEPTH + 1) + "true",
        "abs(" * (MAX_DEPTH + 1) + "x" + ")" * (MAX_DEPTH + 1),
        "when true then x else " * (MAX_DEPTH + 1) + "x",
    ],
)
def test_nesting_deeper_than_the_limit_is_refused(source: str) -> None:
    assert "nested" in refused(source).message


def test_nesting_up_to_the_limit_compiles_and_evaluates() -> None:
    parens = "(" * MAX_DEPTH + "x" + ")" * MAX_DEPTH
    assert compile_expression(parens, SYMBOLS).evaluate({"x": 0.25}) == 0.25
    minus = "-" * MAX_DEPTH + "x"
    assert compile_expression(minus, SYMBOLS).evaluate({"x": 0.25}) == 0.25


def test_long_flat_sum_is_fine_but_token_count_is_capped() -> None:
    terms = MAX_TOKENS // 2  # "x+" pairs plus the last x stay at MAX_TOKENS - 1 tokens
    flat = compile_expression("x+" * (terms - 1) + "x", SYMBOLS)
    assert flat.evaluate({"x": 0.5}) == pytest.approx(0.5 * terms)
    error = refused("x+" * terms + "x")
    assert str(MAX_TOKENS) in error.message


def test_more_than_16_arguments_is_refused() -> None:
    assert "at most 16" in refused("max(" + ", ".join(["x"] * 17) + ")").message
    assert compile_expression("max(" + ", ".join(["x"] * 16) + ")", SYMBOLS).evaluate({"x": 0.5}) == 0.5


@pytest.mark.parametrize("source", [None, b"x < 1", 17])
def test_non_text_is_refused(source: object) -> None:
    assert "text" in refused(source).message


@pytest.mark.parametrize("source", ["", "   ", "\n"])
def test_empty_expression_is_refused(source: str) -> None:
    assert "empty" in refused(source).message


# --- wrong units and kinds --------------------------------------------------------------------


def test_pressure_compared_with_flow_names_both_kinds() -> None:
    error = refused("charge_pressure < 5 L/min")
    assert "a pressure" in error.message and "a flow" in error.message
    assert error.column == len("charge_pressure ") + 1
    source_line, caret_line = str(error).splitlines()[1:3]
    assert source_line[caret_line.index("^")] == "<"


@pytest.mark.parametrize(
    ("source", "says"),
    [
        ("charge_pressure + pump_flow", "adds"),
        ("charge_pressure - 2 L/min", "subtracts"),
        ("when charge_pressure then 1 else 2", "true or false"),
        ("when x > 1 then 1 bar else 2 L/min", "'then' gives"),
        ("charge_pressure and true", "true/false"),
        ("not charge_pressure", "true/false"),
        ("(x < 1) + 1", "true/false"),
        ("(x < 1) < (x < 2)", "true/false"),
        ("charge_pressure < 5 bars", "not a unit"),
        ("charge_pressure < 5 barx", "not a unit"),
        ("charge_pressure < 5e3 Pa", "exponent notation"),
        ("bar < 5 bar", "unit word"),
        ("x < 1 < 2", "do not chain"),
        ("charge_pressure(1)", "not a function"),
        ("max < 1", "is a function"),
        ("x <", "ends too early"),
        ("17.", "decimal point"),
        ("1.2.3", "two decimal points"),
        ("x +* 2", "expected a number"),
        ("(x + 1", "expected ')'"),
        ("max(x, 1", "expected ')'"),
        ("when x > 1 then 2", "else"),
        ("1 / 0", "division by zero"),
        ("°C", "unexpected character"),
        ("x < .²", "decimal point"),  # '²' and '٣' pass str.isdigit() but are not digits here
        ("x < 2²", "unexpected character"),
        ("x < \u0663", "unexpected character"),
        ("x <\u00a05", "invisible"),
    ],
)
def test_mistakes_get_a_clear_message(source: str, says: str) -> None:
    error = refused(source)
    assert says in error.message
    assert error.column is not None


# --- evaluation-time failures ------------------------------------------------------------------


def test_division_by_zero_at_evaluation_points_at_the_slash() -> None:
    ratio = compile_expression("pump_flow / pump_flow * 2", SYMBOLS)
    with pytest.raises(ExprError, match="division by zero") as caught:
        ratio.evaluate({"pump_flow": 0.0})
    assert caught.value.column == len("pump_flow ") + 1


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, "2", None, True])
def test_bad_input_values_are_refused(value: object) -> None:
    expr = compile_expression("x * 2", SYMBOLS)
    with pytest.raises(ExprError, match="'x'"):
        expr.evaluate({"x": value})  # type: ignore[dict-item]


def test_overflow_at_evaluation_is_reported_not_returned() -> None:
    with pytest.raises(ExprError, match="finite"):
        compile_expression("x * x * x", SYMBOLS).evaluate({"x": 1e200})
    with pytest.raises(ExprError, match="finite"):
        compile_expression("x * x > 1", SYMBOLS).evaluate({"x": 1e200})
    with pytest.raises(ExprError, match="finite"):
        compile_expression("x * x - x * x", SYMBOLS).evaluate({"x": 1e200})
    with pytest.raises(ExprError, match="negative power"):
        compile_expression("x ^ -2", SYMBOLS).evaluate({"x": 0.0})
    with pytest.raises(ExprError, match="division by zero"):  # '^ 0' still evaluates its base
        compile_expression("(x / x) ^ 0", SYMBOLS).evaluate({"x": 0.0})


def test_a_failing_registered_function_becomes_an_expr_error() -> None:
    def divide(a: float, b: float) -> float:
        return a / b

    def not_a_number(a: float) -> object:
        return "oops"

    table = function_table(
        FunctionSpec("share", (Kind.FLOW, Kind.FLOW), Kind.RATIO, divide, "a / b, raising on zero."),
        FunctionSpec("bad", (Kind.RATIO,), Kind.RATIO, not_a_number, "returns text, a bug."),
        FunctionSpec("nan", (Kind.RATIO,), Kind.RATIO, lambda a: math.nan, "returns NaN."),
    )
    with pytest.raises(ExprError, match=r"share\(\) cannot be evaluated"):
        compile_expression("share(pump_flow, pump_flow)", SYMBOLS, table).evaluate({"pump_flow": 0.0})
    with pytest.raises(ExprError, match="returned str"):
        compile_expression("bad(x)", SYMBOLS, table).evaluate({"x": 1.0})
    with pytest.raises(ExprError, match="not a finite number"):
        compile_expression("nan(x)", SYMBOLS, table).evaluate({"x": 1.0})
    with pytest.raises(ExprError, match="lower limit is above"):
        compile_expression("clamp(x, 1, 0)", SYMBOLS).evaluate({"x": 0.5})
