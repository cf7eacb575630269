"""One pass over the syntax tree: check dimensions and truth values, and build closures.

Each node becomes a :class:`Typed`: its type (a pint dimensionality or BOOLEAN), a closure
``env -> value`` on SI floats, and, when it needs no inputs, its value (so constant parts such
as ``-40 °C`` or ``2 * 3 bar`` are computed once, and a constant division by zero is caught
before any reading exists). Runtime failures raise ExprError pointing at the operator.
"""

from __future__ import annotations

import difflib
import math
import operator
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

from fieldkit.errors import FieldkitError
from fieldkit.expr.dims import (
    BOOLEAN,
    DIMENSIONLESS,
    Dim,
    TempTag,
    ValueType,
    describe,
    kind_dimension,
    literal_si,
    normalise,
    spelling_si,
    to_type,
)
from fieldkit.expr.errors import ExprError
from fieldkit.expr.functions import ANY, SAME, FunctionSpec, is_marker
from fieldkit.expr.syntax import (
    Call,
    Chain,
    Compare,
    Logic,
    Name,
    Negate,
    Node,
    Not,
    Number,
    Power,
    Truth,
    When,
)
from fieldkit.expr.temperature import after_add, check_alike, merge
from fieldkit.units import Kind

Env = Mapping[str, Any]
Fn = Callable[[Env], Any]

#: Relative tolerance of '=' and '!=' (SI floats carry conversion noise: 205 bar is not
#: exactly 20 500 000 Pa after a round trip). '<', '<=', '>', '>=' compare exactly.
REL_TOLERANCE = 1e-9
TEMPERATURE = kind_dimension(Kind.TEMPERATURE)
_QUOTE_MAX = 40


@dataclass(slots=True)
class Typed:
    type: ValueType
    fn: Fn
    tag: TempTag | None = None  # set for every value of dimension temperature
    const: float | bool | None = None  # the value, when no input is needed


def same_type(a: ValueType, b: ValueType) -> bool:
    """Type equality that never compares a pint container with the BOOLEAN marker."""
    if a is BOOLEAN or b is BOOLEAN:
        return a is b
    return a == b


def is_temperature(t: ValueType) -> bool:
    return t is not BOOLEAN and t == TEMPERATURE


def _constant(value: float | bool) -> Fn:
    def constant(env: Env) -> float | bool:
        return value

    return constant


def _is_equal(x: float, y: float) -> bool:
    return math.isclose(x, y, rel_tol=REL_TOLERANCE, abs_tol=0.0)


def _is_unequal(x: float, y: float) -> bool:
    return not math.isclose(x, y, rel_tol=REL_TOLERANCE, abs_tol=0.0)


_COMPARE: dict[str, Callable[[float, float], bool]] = {
    "<": operator.lt,
    "<=": operator.le,
    ">": operator.gt,
    ">=": operator.ge,
    "=": _is_equal,
    "!=": _is_unequal,
}


class Compiler:
    """Compiles one expression; remembers which names and functions it used."""

    def __init__(
        self, source: str, symbols: Mapping[str, object], functions: Mapping[str, FunctionSpec]
    ) -> None:
        if not isinstance(symbols, Mapping):
            raise TypeError(f"symbols must be a mapping of name to Kind or dimensionality, got {symbols!r}")
        if not isinstance(functions, Mapping):
            raise TypeError(f"functions must be a mapping of name to FunctionSpec, got {functions!r}")
        self.source = source
        self.symbols = symbols
        self.functions = functions
        self.name_types: dict[str, ValueType] = {}
        self.first_use: dict[str, int] = {}
        self.calls: set[str] = set()

    # --- messages ---------------------------------------------------------------------
    def error(self, message: str, position: int) -> ExprError:
        return ExprError(message, self.source, position)

    def quote(self, node: Node) -> str:
        return self.quote_span(node.start, node.end)

    def quote_span(self, start: int, end: int) -> str:
        text = " ".join(self.source[start:end].split())
        return text if len(text) <= _QUOTE_MAX else text[: _QUOTE_MAX - 1] + "…"

    def what(self, node: Node, typed: Typed) -> str:
        return f"{self.quote(node)} ({describe(typed.type)})"

    def need_number(self, node: Node, typed: Typed, role: str) -> Dim:
        """The dimension of a number; a true/false value here is an error."""
        if not isinstance(typed.type, Dim):
            raise self.error(
                f"{role} needs numbers, but {self.quote(node)} is a true/false value", node.start
            )
        return typed.type

    def need_truth(self, node: Node, typed: Typed, role: str) -> None:
        if typed.type is not BOOLEAN:
            raise self.error(
                f"{role} needs true/false values, but {self.what(node, typed)} is not one", node.start
            )

    def fold(self, parts: list[Typed], result: Typed, at: int) -> Typed:
        """Compute ``result`` now when all ``parts`` are constants."""
        if not all(part.const is not None for part in parts):
            return result
        value = result.fn({})
        if result.type is not BOOLEAN and not math.isfinite(value):
            raise self.error("this constant part is too large to compute", at)
        return Typed(result.type, _constant(value), result.tag, value)

    # --- nodes ------------------------------------------------------------------------
    def compile(self, node: Node) -> Typed:
        match node:
            case Number():
                return self.number(node, node.magnitude)
            case Truth():
                return Typed(BOOLEAN, _constant(node.value), None, node.value)
            case Name():
                return self.name(node)
            case Negate():
                return self.negate(node)
            case Not():
                return self.logical_not(node)
            case Power():
                return self.power(node)
            case Chain():
                return self.additive(node) if node.steps[0].op in "+-" else self.product(node)
            case Compare():
                return self.compare(node)
            case Logic():
                return self.logic(node)
            case When():
                return self.when(node)
            case Call():
                return self.call(node)
        raise AssertionError(f"unknown node {node!r}")  # pragma: no cover

    def number(self, node: Node, magnitude: float, spelling: str | None = None) -> Typed:
        spelling = node.unit if isinstance(node, Number) else spelling
        value = literal_si(magnitude, spelling)
        if not math.isfinite(value):
            raise self.error("the number is too large", node.start)
        if spelling is None:
            return Typed(DIMENSIONLESS, _constant(value), None, value)
        _offset, _factor, dim, tag = spelling_si(spelling)
        return Typed(dim, _constant(value), tag, value)

    def name(self, node: Name) -> Typed:
        name = node.name
        if name not in self.symbols:
            if name in self.functions:
                raise self.error(
                    f"'{name}' is a function; call it with arguments, e.g. {name}(…)", node.start
                )
            close = difflib.get_close_matches(name, list(self.symbols), n=4, cutoff=0.6)
            if close:
                hint = "; did you mean " + ", ".join(close) + "?"
            elif self.symbols:
                known = sorted(self.symbols)
                hint = "; known names: " + ", ".join(known[:8]) + (", …" if len(known) > 8 else "")
            else:
                hint = "; no names are defined here"
            raise self.error(f"unknown name '{name}'{hint}", node.start)
        if name not in self.name_types:
            self.name_types[name] = to_type(self.symbols[name], f"symbol {name!r}")
            self.first_use[name] = node.start
        t = self.name_types[name]
        return Typed(t, operator.itemgetter(name), TempTag.POINT if is_temperature(t) else None)

    def negate(self, node: Negate) -> Typed:
        if isinstance(node.operand, Number):  # -40 °C is 233.15 K, not -(313.15 K)
            return self.number(node, -node.operand.magnitude, node.operand.unit)
        inner = self.compile(node.operand)
        self.need_number(node.operand, inner, "'-'")
        f = inner.fn
        tag = None if inner.tag is None else TempTag.DELTA if inner.tag is TempTag.DELTA else TempTag.EITHER
        return self.fold([inner], Typed(inner.type, lambda env: -f(env), tag), node.start)

    def logical_not(self, node: Not) -> Typed:
        inner = self.compile(node.operand)
        self.need_truth(node.operand, inner, "'not'")
        f = inner.fn
        return self.fold([inner], Typed(BOOLEAN, lambda env: not f(env)), node.start)

    def power(self, node: Power) -> Typed:
        base = self.compile(node.base)
        base_dim = self.need_number(node.base, base, "'^'")
        n = node.exponent
        if n == 0:  # still evaluate the base, so its own errors (a / 0) are not hidden
            return self.fold([base], Typed(DIMENSIONLESS, _one_after(base.fn)), node.op_at)
        if n < 0 and base.const == 0.0:
            raise self.error("zero raised to a negative power", node.op_at)
        f, source, at = base.fn, self.source, node.op_at

        def power(env: Env) -> float:
            try:
                return f(env) ** n
            except ZeroDivisionError:
                raise ExprError("zero raised to a negative power", source, at) from None
            except OverflowError:
                raise ExprError("the power is too large to compute", source, at) from None

        tag = base.tag if n == 1 else None
        return self.fold([base], Typed(normalise(base_dim**n), power, tag), node.op_at)

    def additive(self, node: Chain) -> Typed:
        first = self.compile(node.first)
        self.need_number(node.first, first, f"'{node.steps[0].op}'")
        parts, tag, end = [first], first.tag, node.first.end
        signs: list[bool] = []
        for step in node.steps:
            right = self.compile(step.operand)
            self.need_number(step.operand, right, f"'{step.op}'")
            left_text = self.quote_span(node.start, end)
            if not same_type(first.type, right.type):
                verb = (
                    f"adds {self.what(step.operand, right)} to"
                    if step.op == "+"
                    else f"subtracts {self.what(step.operand, right)} from"
                )
                raise self.error(
                    f"'{step.op}' {verb} {left_text} ({describe(first.type)}); both must be the "
                    "same kind of quantity",
                    step.at,
                )
            if tag is not None and right.tag is not None:
                tag, problem = after_add(step.op, tag, right.tag)
                if problem:
                    raise self.error(f"'{step.op}' {problem}", step.at)
            parts.append(right)
            signs.append(step.op == "+")
            end = step.operand.end
        return self.fold(parts, Typed(first.type, _sum(parts, signs), tag), node.start)

    def product(self, node: Chain) -> Typed:
        first = self.compile(node.first)
        dim = self.need_number(node.first, first, f"'{node.steps[0].op}'")
        parts = [first]
        links: list[tuple[bool, Fn, int, str]] = []
        for step in node.steps:
            right = self.compile(step.operand)
            right_dim = self.need_number(step.operand, right, f"'{step.op}'")
            if step.op == "/" and right.const == 0.0:
                raise self.error("division by zero", step.at)
            dim = normalise(dim * right_dim if step.op == "*" else dim / right_dim)
            parts.append(right)
            links.append((step.op == "*", right.fn, step.at, self.quote(step.operand)))
        tag = None
        if is_temperature(dim):  # a temperature scaled by plain numbers keeps its meaning
            multiplied = [True] + [link[0] for link in links]
            scaled = [
                (p, m) for p, m in zip(parts, multiplied, strict=True) if not same_type(p.type, DIMENSIONLESS)
            ]
            lone = len(scaled) == 1 and scaled[0][1] and scaled[0][0].tag is not None
            tag = merge([scaled[0][0].tag]) if lone else TempTag.EITHER  # type: ignore[list-item]
        return self.fold(parts, Typed(dim, _product(first.fn, links, self.source), tag), node.start)

    def compare(self, node: Compare) -> Typed:
        left, right = self.compile(node.left), self.compile(node.right)
        role = f"'{node.op}'"
        for side, typed in ((node.left, left), (node.right, right)):
            if typed.type is BOOLEAN:
                raise self.error(
                    f"{role} compares numbers, but {self.quote(side)} is a true/false value; "
                    "combine true/false values with and, or, not",
                    side.start,
                )
        if not same_type(left.type, right.type):
            raise self.error(
                f"{role} compares {self.what(node.left, left)} with {self.what(node.right, right)}; "
                "both sides must be the same kind of quantity",
                node.op_at,
            )
        if left.tag is not None and right.tag is not None:
            problem = check_alike([left.tag, right.tag])
            if problem:
                raise self.error(f"{role} {problem}", node.op_at)
        test, a, b, source, at = _COMPARE[node.op], left.fn, right.fn, self.source, node.op_at

        def compare(env: Env) -> bool:
            x, y = a(env), b(env)
            if not (math.isfinite(x) and math.isfinite(y)):
                raise ExprError("a side of this comparison is not a finite number (overflow)", source, at)
            return test(x, y)

        return self.fold([left, right], Typed(BOOLEAN, compare), node.op_at)

    def logic(self, node: Logic) -> Typed:
        parts = [self.compile(operand) for operand in node.operands]
        for operand, typed in zip(node.operands, parts, strict=True):
            self.need_truth(operand, typed, f"'{node.op}'")
        fns = tuple(p.fn for p in parts)
        if len(fns) == 2:
            a, b = fns
            fn: Fn = (lambda env: a(env) and b(env)) if node.op == "and" else (lambda env: a(env) or b(env))
        elif node.op == "and":

            def fn(env: Env) -> bool:
                return all(f(env) for f in fns)
        else:

            def fn(env: Env) -> bool:
                return any(f(env) for f in fns)

        return self.fold(parts, Typed(BOOLEAN, fn), node.start)

    def when(self, node: When) -> Typed:
        condition = self.compile(node.condition)
        if condition.type is not BOOLEAN:
            raise self.error(
                "the condition after 'when' must be true or false (a comparison such as "
                f"x < 5 bar), but {self.what(node.condition, condition)} is not",
                node.condition.start,
            )
        then, otherwise = self.compile(node.then), self.compile(node.otherwise)
        if not same_type(then.type, otherwise.type):
            raise self.error(
                f"'then' gives {self.what(node.then, then)} but 'else' gives "
                f"{self.what(node.otherwise, otherwise)}; both must be the same kind",
                node.else_at,
            )
        tag = None
        if then.tag is not None and otherwise.tag is not None:
            problem = check_alike([then.tag, otherwise.tag])
            if problem:
                raise self.error(f"'else' {problem}", node.else_at)
            tag = merge([then.tag, otherwise.tag])
        if condition.const is not None:
            return otherwise if condition.const is False else then
        c, a, b = condition.fn, then.fn, otherwise.fn
        return Typed(then.type, lambda env: a(env) if c(env) else b(env), tag)

    def call(self, node: Call) -> Typed:
        spec = self.functions.get(node.name)
        if spec is None:
            if node.name in self.symbols:
                raise self.error(
                    f"'{node.name}' is a value, not a function; remove the parentheses", node.start
                )
            known = sorted(self.functions)
            close = difflib.get_close_matches(node.name, known, n=4, cutoff=0.6)
            hint = (
                f"; did you mean {', '.join(close)}?"
                if close
                else f"; available: {', '.join(known)}"
                if known
                else "; no functions are available here"
            )
            raise self.error(f"unknown function '{node.name}'{hint}", node.start)
        if not spec.accepts(len(node.args)):
            raise self.error(f"{node.name}() takes {spec.arity_text()}, got {len(node.args)}", node.start)
        self.calls.add(node.name)
        args = [self.compile(arg) for arg in node.args]
        alike: list[tuple[Node, Typed]] = []
        for index, (arg, typed) in enumerate(zip(node.args, args, strict=True)):
            param = spec.param_for(index)
            label = f"argument {index + 1} of {node.name}()"
            if is_marker(param, SAME) or is_marker(param, ANY):
                self.need_number(arg, typed, label)
                if is_marker(param, SAME):
                    if alike and not same_type(alike[0][1].type, typed.type):
                        first_arg, first_typed = alike[0]
                        raise self.error(
                            f"the arguments of {node.name}() must be the same kind of quantity: "
                            f"{self.quote(first_arg)} is {describe(first_typed.type)} but "
                            f"{self.quote(arg)} is {describe(typed.type)}",
                            arg.start,
                        )
                    alike.append((arg, typed))
                continue
            want = to_type(param, f"function {node.name!r}")
            if not same_type(want, typed.type):
                raise self.error(
                    f"{label} must be {describe(want)}, but {self.what(arg, typed)} is not", arg.start
                )
        same = alike[0][1].type if alike else None
        tags = [t.tag for _, t in alike if t.tag is not None]
        if tags and (problem := check_alike(tags)):
            raise self.error(f"{node.name}() {problem}", node.start)
        result, tag = self.call_result(node, spec, args, same, tags)
        return Typed(result, _call(spec, args, result, node, self.source), tag)

    def call_result(
        self, node: Call, spec: FunctionSpec, args: list[Typed], same: ValueType | None, tags: list[TempTag]
    ) -> tuple[ValueType, TempTag | None]:
        if is_marker(spec.result, SAME):
            assert same is not None
            return same, (merge(tags) if tags and is_temperature(same) else None)
        if isinstance(spec.result, Kind) or not callable(spec.result):
            result = to_type(spec.result, f"function {node.name!r}")
            return result, (TempTag.POINT if is_temperature(result) else None)
        try:
            result = to_type(spec.result(tuple(a.type for a in args)), f"function {node.name!r}")
        except (ValueError, FieldkitError) as exc:
            raise self.error(f"{node.name}(): {exc}", node.start) from None
        return result, (TempTag.EITHER if is_temperature(result) else None)


def _one_after(f: Fn) -> Fn:
    def one(env: Env) -> float:
        f(env)
        return 1.0

    return one


def _sum(parts: list[Typed], signs: list[bool]) -> Fn:
    if len(parts) == 2:
        a, b = parts[0].fn, parts[1].fn
        return (lambda env: a(env) + b(env)) if signs[0] else (lambda env: a(env) - b(env))
    first = parts[0].fn
    rest = tuple(zip(signs, (p.fn for p in parts[1:]), strict=True))

    def total(env: Env) -> float:
        value = first(env)
        for plus, f in rest:
            if plus:
                value += f(env)
            else:
                value -= f(env)
        return value

    return total


def _product(first: Fn, links: list[tuple[bool, Fn, int, str]], source: str) -> Fn:
    if len(links) == 1 and links[0][0]:
        b = links[0][1]
        return lambda env: first(env) * b(env)
    steps = tuple(links)

    def product(env: Env) -> float:
        value = first(env)
        for multiply, f, at, text in steps:
            x = f(env)
            if multiply:
                value *= x
            elif x == 0.0:
                raise ExprError(f"division by zero: {text} is 0", source, at)
            else:
                value /= x
        return value

    return product


def _call(spec: FunctionSpec, args: list[Typed], result: ValueType, node: Call, source: str) -> Fn:
    fns = tuple(a.fn for a in args)
    numeric = tuple(a.type is not BOOLEAN for a in args)
    impl, name, at, boolean = spec.impl, node.name, node.start, result is BOOLEAN

    def call(env: Env) -> float | bool:
        values = [f(env) for f in fns]
        for value, is_number in zip(values, numeric, strict=True):
            if is_number and not math.isfinite(value):
                raise ExprError(f"an argument of {name}() is not a finite number (overflow)", source, at)
        try:
            out = impl(*values)
        except ExprError:
            raise
        except (ArithmeticError, ValueError, FieldkitError) as exc:
            raise ExprError(f"{name}() cannot be evaluated here: {exc}", source, at) from None
        if boolean:
            return bool(out)
        try:
            number = float(out)
        except (TypeError, ValueError):
            raise ExprError(f"{name}() returned {type(out).__name__}, not a number", source, at) from None
        if not math.isfinite(number):
            raise ExprError(f"{name}() gave a value that is not a finite number", source, at)
        return number

    return call
