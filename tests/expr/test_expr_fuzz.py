"""Fuzzing the rule expression language: whatever a rule pack holds, compiling either succeeds
or raises ExprError, and so does evaluating — never another exception, never a hang.

The arithmetic oracle is Python's own IEEE 754 float arithmetic: a fully parenthesised
expression evaluates in the same order, so results must be identical.
"""

from __future__ import annotations

import math
import string
from typing import Any

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldkit.expr import (
    BOOLEAN,
    BUILTIN_FUNCTIONS,
    MAX_DEPTH,
    Compiled,
    ExprError,
    compile_expression,
)
from fieldkit.units import SPELLINGS, Kind

SYMBOLS: dict[str, Any] = {
    "charge_pressure": Kind.PRESSURE,
    "case_pressure": Kind.PRESSURE,
    "pump_flow": Kind.FLOW,
    "oil_temperature": Kind.TEMPERATURE,
    "pump_speed": Kind.SPEED,
    "ratio": Kind.RATIO,
    "a": Kind.RATIO,
    "b": Kind.RATIO,
    "c": Kind.RATIO,
    "loop_closed": BOOLEAN,
}
NAMES = sorted(SYMBOLS)
FUZZ = settings(max_examples=200, deadline=2000, database=None, suppress_health_check=[HealthCheck.too_slow])

finite = st.floats(allow_nan=False, allow_infinity=False)
env_values = st.one_of(finite, st.sampled_from([0.0, 1.0, -1.0, 1e300, -1e300, 5e-324]))


def compile_or_refuse(source: str) -> Compiled | None:
    """Compile; an ExprError is a fine answer, anything else fails the test."""
    try:
        return compile_expression(source, SYMBOLS)
    except ExprError as error:
        assert error.message  # every refusal explains itself
        return None


def evaluate_or_refuse(expr: Compiled, env: dict[str, Any]) -> None:
    try:
        value = expr.evaluate(env)
    except ExprError as error:
        assert error.message
        return
    if expr.result is BOOLEAN:
        assert isinstance(value, bool)
    else:
        assert isinstance(value, float) and math.isfinite(value)


@st.composite
def environments(draw: st.DrawFn) -> dict[str, Any]:
    env: dict[str, Any] = {name: draw(env_values) for name in NAMES if SYMBOLS[name] is not BOOLEAN}
    env["loop_closed"] = draw(st.booleans())
    return env


# --- raw text ---------------------------------------------------------------------------------


@FUZZ
@given(st.text(max_size=300))
def test_any_text_compiles_or_is_refused(source: str) -> None:
    compile_or_refuse(source)


LANGUAGE_CHARS = string.ascii_lowercase + string.digits + "_ .+-*/^()<>=!,%°" + "CFKLPa"


@FUZZ
@given(st.text(alphabet=LANGUAGE_CHARS, max_size=120), environments())
def test_text_from_the_language_alphabet_compiles_or_is_refused(source: str, env: dict[str, Any]) -> None:
    expr = compile_or_refuse(source)
    if expr is not None:
        evaluate_or_refuse(expr, env)


# --- token soup --------------------------------------------------------------------------------

TOKENS = (
    NAMES
    + sorted(BUILTIN_FUNCTIONS)
    + ["and", "or", "not", "when", "then", "else", "true", "false"]
    + ["+", "-", "*", "/", "^", "<", "<=", ">", ">=", "=", "!=", "(", ")", "(", ")", ","]
    + ["0", "1", "2", "0.5", ".5", "17", "4", "-4", "1000"]
    + [f"3 {spelling}" for spelling in ("bar", "psi", "L/min", "°C", "K", "rpm", "%", "cSt", "min", "s")]
)


@FUZZ
@given(st.lists(st.sampled_from(TOKENS), min_size=1, max_size=60), environments())
def test_token_soup_compiles_or_is_refused(tokens: list[str], env: dict[str, Any]) -> None:
    expr = compile_or_refuse(" ".join(tokens))
    if expr is not None:
        evaluate_or_refuse(expr, env)


# --- grammar-shaped expressions (possibly ill-typed) ------------------------------------------

unit_literal = st.builds(
    lambda number, spelling: f"{number} {spelling}",
    st.sampled_from(["0", "1", "2.5", "17", ".5", "3500"]),
    st.sampled_from(sorted(SPELLINGS)),
)
atoms = st.one_of(
    st.sampled_from(NAMES),
    st.sampled_from(["0", "1", "2", "0.5", "true", "false"]),
    unit_literal,
)


def _extend(inner: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    binary = st.builds(
        lambda a, op, b: f"{a} {op} {b}",
        inner,
        st.sampled_from(["+", "-", "*", "/", "<", "<=", ">", ">=", "=", "!=", "and", "or"]),
        inner,
    )
    return st.one_of(
        binary,
        inner.map(lambda a: f"({a})"),
        inner.map(lambda a: f"-{a}"),
        inner.map(lambda a: f"not {a}"),
        st.builds(lambda a, n: f"{a} ^ {n}", inner, st.integers(-6, 6)),
        st.builds(lambda c, a, b: f"(when {c} then {a} else {b})", inner, inner, inner),
        st.builds(
            lambda f, args: f"{f}({', '.join(args)})",
            st.sampled_from(sorted(BUILTIN_FUNCTIONS)),
            st.lists(inner, max_size=4),
        ),
    )


grammar = st.recursive(atoms, _extend, max_leaves=25)


@FUZZ
@given(grammar, environments())
def test_grammar_shaped_expressions_compile_or_are_refused(source: str, env: dict[str, Any]) -> None:
    expr = compile_or_refuse(source)
    if expr is not None:
        assert expr.names <= set(NAMES)
        evaluate_or_refuse(expr, env)


@FUZZ
@given(grammar, st.data())
def test_mutated_expressions_compile_or_are_refused(source: str, data: st.DataObject) -> None:
    position = data.draw(st.integers(0, len(source)))
    edit = data.draw(st.sampled_from(["insert", "delete", "replace"]))
    char = data.draw(st.characters(codec="utf-8"))
    if edit == "insert":
        source = source[:position] + char + source[position:]
    elif edit == "delete":
        source = source[:position] + source[position + 1 :]
    else:
        source = source[:position] + char + source[position + 1 :]
    compile_or_refuse(source)


# --- arithmetic oracle -------------------------------------------------------------------------

Built = tuple[str, float | None, int]  # text, expected value (None: must be refused), nesting depth


@st.composite
def arithmetic(draw: st.DrawFn, levels: int = 5, env: dict[str, float] | None = None) -> Built:
    """A fully parenthesised plain-number expression and its value computed with Python floats.

    Constants only (``env`` None): every constant part is computed at compile time and must stay
    finite, so any non-finite step means a refusal. With names, values follow IEEE 754 through
    infinities; division by zero, a power that overflows and a non-finite result are refusals.
    """
    strict = env is None
    if levels == 0 or draw(st.integers(0, 3)) == 0:
        if env and draw(st.booleans()):
            name = draw(st.sampled_from(sorted(env)))
            return name, env[name], 0
        whole = draw(st.integers(0, 5000))
        text = str(whole) if draw(st.booleans()) else f"{whole}.{draw(st.integers(0, 99)):02d}"
        return text, float(text), 0
    shape = draw(st.sampled_from(["binary", "binary", "negate", "power"]))
    left_text, left, left_depth = draw(arithmetic(levels - 1, env))
    if shape == "negate":
        return f"-({left_text})", None if left is None else -left, left_depth + 2
    if shape == "power":
        n = draw(st.integers(-3, 3))
        return f"({left_text}) ^ {n}", _power(left, n, strict), left_depth + 1
    op = draw(st.sampled_from("+-*/"))
    right_text, right, right_depth = draw(arithmetic(levels - 1, env))
    return (
        f"({left_text}) {op} ({right_text})",
        _apply(op, left, right, strict),
        max(left_depth, right_depth) + 1,
    )


def _power(x: float | None, n: int, strict: bool) -> float | None:
    if x is None:
        return None
    if n == 0:
        return 1.0
    try:
        return _checked(x**n, strict)
    except (ZeroDivisionError, OverflowError):
        return None


def _apply(op: str, x: float | None, y: float | None, strict: bool) -> float | None:
    if x is None or y is None:
        return None
    if op == "/":
        return None if y == 0.0 else _checked(x / y, strict)
    return _checked(x + y if op == "+" else x - y if op == "-" else x * y, strict)


def _checked(value: float, strict: bool) -> float | None:
    return value if not strict or math.isfinite(value) else None


@settings(max_examples=200, deadline=2000, database=None)
@given(arithmetic())
def test_constant_arithmetic_matches_python_floats(built: Built) -> None:
    text, expected, depth = built
    assert depth <= MAX_DEPTH  # the strategy stays inside the nesting limit
    try:
        value = compile_expression(text, {}).evaluate({})
    except ExprError as error:
        assert expected is None, f"{text!r} refused: {error}"
        return
    assert expected is not None, f"{text!r} gave {value} where an error was due"
    assert value == expected


@st.composite
def arithmetic_with_names(draw: st.DrawFn) -> tuple[Built, dict[str, float]]:
    env = {
        name: draw(st.one_of(st.floats(-1e6, 1e6), st.sampled_from([0.0, 1e300, -1e-300])))
        for name in ("a", "b", "c")
    }
    return draw(arithmetic(4, env)), env


@settings(max_examples=200, deadline=2000, database=None)
@given(arithmetic_with_names())
def test_arithmetic_on_readings_matches_python_floats(case: tuple[Built, dict[str, float]]) -> None:
    (text, expected, _depth), env = case
    if expected is not None and not math.isfinite(expected):
        expected = None  # a non-finite result is refused, never returned
    try:
        value = compile_expression(text, SYMBOLS).evaluate(env)
    except ExprError as error:
        assert expected is None, f"{text!r} with {env} refused: {error}"
        return
    assert expected is not None, f"{text!r} with {env} gave {value} where an error was due"
    assert value == expected
