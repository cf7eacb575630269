"""Functions a rule may call: only those in the table the caller passes, described by FunctionSpec.

The diagnosis engine adds physics-backed functions the same way the builtins are made::

    LEAK = FunctionSpec(
        "leak_at_reference", (Kind.FLOW, Kind.VISCOSITY, Kind.VISCOSITY), Kind.FLOW,
        lambda q, nu, nu_ref: q * nu / nu_ref,
        "Laminar leakage scaled to a reference viscosity (slot flow: Q ∝ 1/ν).")
    table = function_table(LEAK)          # the builtins plus LEAK

Implementations receive and return plain floats in SI base units (booleans for BOOLEAN
parameters and results). They may raise ValueError or ArithmeticError for inputs outside
their domain; the evaluator reports that as an ExprError naming the call.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Final, Literal, TypeAlias

from fieldkit.expr.dims import BOOLEAN, DIMENSIONLESS, Dim, ValueType, _Boolean, to_type
from fieldkit.expr.lexer import FORBIDDEN_WORDS, KEYWORDS
from fieldkit.expr.parser import MAX_ARGS
from fieldkit.units import Kind

#: Parameter marker: every SAME parameter of one call has one dimension; a SAME result has it too.
SAME: Final = "same"
#: Parameter marker: any numeric dimension.
ANY: Final = "any"

Param: TypeAlias = Kind | Dim | _Boolean | Literal["same", "any"]
#: A result rule gets the argument types and returns the result type (Kind, dimensionality or
#: BOOLEAN); it raises ValueError with a plain message when the arguments make no sense.
ResultRule: TypeAlias = Callable[[tuple[ValueType, ...]], "Kind | Dim | _Boolean"]
Result: TypeAlias = Kind | Dim | _Boolean | Literal["same"] | ResultRule

_NAME = re.compile(r"[a-z][a-z0-9_]*")


def is_marker(value: object, marker: str) -> bool:
    """True for the SAME/ANY markers; never lets a pint container parse a string while comparing."""
    return type(value) is str and value == marker


@dataclass(frozen=True, slots=True)
class FunctionSpec:
    """A function a rule may call.

    Args:
        name: how rules call it (lower-case, digits, single underscores).
        params: one entry per parameter: a Kind, a pint dimensionality, BOOLEAN, SAME or ANY.
        result: a Kind, a dimensionality, BOOLEAN, SAME, or a ResultRule.
        impl: the computation, on SI floats.
        doc: one line for rule authors (shown by the rule linter).
        repeat_last: the last parameter may be given again any number of times (min, max).
    """

    name: str
    params: tuple[Param, ...]
    result: Result
    impl: Callable[..., float | bool]
    doc: str
    repeat_last: bool = False

    def __post_init__(self) -> None:
        where = f"function {self.name!r}"
        if not isinstance(self.name, str) or not _NAME.fullmatch(self.name) or "__" in self.name:
            raise ValueError(f"{where}: a function name is lower-case letters, digits and single '_'")
        if self.name in KEYWORDS or self.name in FORBIDDEN_WORDS:
            raise ValueError(f"{where}: the name is reserved")
        if not isinstance(self.params, tuple):
            raise TypeError(f"{where}: params must be a tuple")
        for param in self.params:
            if not (is_marker(param, SAME) or is_marker(param, ANY)):
                to_type(param, where)
        if is_marker(self.result, SAME):
            if not any(is_marker(param, SAME) for param in self.params):
                raise ValueError(f"{where}: a SAME result needs at least one SAME parameter")
        elif isinstance(self.result, Kind) or not callable(self.result):
            to_type(self.result, where)
        if not callable(self.impl):
            raise TypeError(f"{where}: impl must be callable")
        if not isinstance(self.doc, str) or not self.doc.strip():
            raise ValueError(f"{where}: write a one-line doc for rule authors")
        if self.repeat_last and not self.params:
            raise ValueError(f"{where}: repeat_last needs at least one parameter")
        if len(self.params) > MAX_ARGS:
            raise ValueError(f"{where}: at most {MAX_ARGS} parameters")

    def accepts(self, count: int) -> bool:
        if self.repeat_last:
            return len(self.params) <= count <= MAX_ARGS
        return count == len(self.params)

    def arity_text(self) -> str:
        n = len(self.params)
        if self.repeat_last:
            return f"at least {n} argument{'s' if n != 1 else ''}"
        return f"{n} argument{'s' if n != 1 else ''}"

    def param_for(self, index: int) -> Param:
        return self.params[min(index, len(self.params) - 1)]


def _clamp(x: float, lo: float, hi: float) -> float:
    if lo > hi:
        raise ValueError("the lower limit is above the upper limit")
    return lo if x < lo else hi if x > hi else x


def _sqrt(x: float) -> float:
    if x < 0.0:
        raise ValueError("square root of a negative value")
    return math.sqrt(x)


def _sqrt_result(types: tuple[ValueType, ...]) -> Dim:
    (dim,) = types
    assert isinstance(dim, Dim)
    powers = {name: _whole(power) for name, power in dim.items()}
    if any(power % 2 for power in powers.values()):
        raise ValueError(f"the square root of a quantity of dimension {dim} has no unit fieldkit uses")
    return Dim({name: power // 2 for name, power in powers.items()})


def _whole(power: object) -> int:
    """A dimension's exponent as a whole number (the units fieldkit uses have no others)."""
    if isinstance(power, int) or (isinstance(power, float) and power.is_integer()):
        return int(power)
    raise ValueError(f"a dimension with the exponent {power} has no unit fieldkit uses")


BUILTIN_FUNCTIONS: Mapping[str, FunctionSpec] = MappingProxyType(
    {
        spec.name: spec
        for spec in (
            FunctionSpec(
                "min",
                (SAME, SAME),
                SAME,
                min,
                "The smallest of two or more values of one kind.",
                repeat_last=True,
            ),
            FunctionSpec(
                "max",
                (SAME, SAME),
                SAME,
                max,
                "The largest of two or more values of one kind.",
                repeat_last=True,
            ),
            FunctionSpec("abs", (SAME,), SAME, abs, "The size of a value without its sign."),
            FunctionSpec(
                "clamp",
                (SAME, SAME, SAME),
                SAME,
                _clamp,
                "clamp(x, low, high): x held between the two limits.",
            ),
            FunctionSpec(
                "sqrt",
                (ANY,),
                _sqrt_result,
                _sqrt,
                "Square root; the dimension must have even powers (e.g. sqrt of an area).",
            ),
        )
    }
)


def function_table(*specs: FunctionSpec, builtins: bool = True) -> Mapping[str, FunctionSpec]:
    """A function table for :func:`compile_expression`: the builtins (unless ``builtins`` is
    False) plus ``specs``. Two functions of one name are refused rather than one shadowing the other."""
    table: dict[str, FunctionSpec] = dict(BUILTIN_FUNCTIONS) if builtins else {}
    for spec in specs:
        if not isinstance(spec, FunctionSpec):
            raise TypeError(f"expected a FunctionSpec, got {spec!r}")
        if spec.name in table:
            raise ValueError(f"function {spec.name!r} is defined twice")
        table[spec.name] = spec
    return MappingProxyType(table)


__all__ = ["ANY", "BOOLEAN", "BUILTIN_FUNCTIONS", "DIMENSIONLESS", "SAME", "FunctionSpec", "function_table"]
