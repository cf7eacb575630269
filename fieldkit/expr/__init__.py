"""fieldkit's rule expression language: conditions and derived values in rule packs.

Examples::

    charge_pressure - case_pressure < 17 bar
    max(stall_pressure - return_pressure, 0 bar)
    pump_case_drain_flow / pump_theoretical_flow > 5 %
    when oil_temperature < 40 °C then 0.5 else 1

Text is tokenised and parsed by hand and run as a tree of small closures; nothing is ever
handed to Python's eval, exec or compile, and only the functions in the caller's table exist.

Grammar, loosest binding first (``A*`` means zero or more A, ``[A]`` means optional)::

    expression  = "when" disjunction "then" disjunction "else" expression
                | disjunction
    disjunction = conjunction ("or" conjunction)*
    conjunction = negation ("and" negation)*
    negation    = "not" negation | comparison
    comparison  = sum [("<" | "<=" | ">" | ">=" | "=" | "!=") sum]
    sum         = product (("+" | "-") product)*
    product     = unary (("*" | "/") unary)*
    unary       = "-" unary | power
    power       = primary ["^" ["-"] whole-number]
    primary     = number [unit] | "true" | "false" | name | name "(" [expression ("," expression)*] ")"
                | "(" expression ")"

In words:

* A number is digits with an optional decimal point (``17``, ``0.5``, ``.5``; no exponents).
  A unit may follow, with or without spaces: any spelling of ``fieldkit.units.SPELLINGS``
  (``17 bar``, ``2 L/min``, ``55 °C``, ``12 mm/min``, ``90 %``). The longest spelling that
  ends on a word boundary wins, so ``5 min-1`` is 5 rpm; write ``5 min - 1`` for a subtraction.
  A number without a unit is a plain number; ``90 %`` is the plain number 0.9. A minus sign
  right before a number belongs to it: ``-40 °C`` is 233.15 K, not the negative of 313.15 K
  (powers still bind first: ``-2 ^ 2`` is -4).
* A name is a lower-case letter followed by lower-case letters, digits and single ``_``. Names
  come from the caller's symbol table. Keywords (and, or, not, when, then, else, true, false)
  and unit words (bar, psi, min, …) are never names; a function may share a unit word's
  spelling (``min``) because a call always has ``(``.
* ``^`` takes a whole number from -4 to 4 written directly; ``-x ^ 2`` is ``-(x ^ 2)``.
  ``x ^ 2 ^ 2`` is refused: write ``(x ^ 2) ^ 2``.
* Comparisons do not chain (``a < b < c`` is refused). ``=`` and ``!=`` allow a relative
  difference of 1e-9 (conversion noise); the others compare exactly. Comparing with zero is
  exact: to ask "about zero" write ``abs(x) < 0.01 bar``.
* ``when C then A else B``: C is true/false; A and B have one type. Inside a larger
  expression a ``when`` needs parentheses (or it would swallow what follows); it may stand
  alone as a function argument, and after ``else`` another ``when`` may follow directly,
  giving a chain of cases.
* Calls: ``name(a, b)`` with at most 16 arguments, only to functions in the caller's table.
  Builtins (:data:`BUILTIN_FUNCTIONS`): ``min`` and ``max`` (two or more values of one kind),
  ``abs``, ``clamp(x, low, high)``, ``sqrt`` (even powers only, e.g. of an area).
* ``and``/``or`` short-circuit; ``not`` binds looser than comparisons (``not a < b``).
* Spaces, tabs and line breaks separate tokens. The typeset signs ``−  ≤  ≥  ≠`` are read as
  ``-  <=  >=  !=``.

Types are checked when compiling, with pint dimensionalities: ``+``, ``-``, comparisons,
when-branches and SAME function parameters need one dimension; ``*``, ``/`` and ``^`` combine
them; and/or/not/when need true/false. A mistake is an :class:`ExprError` naming both kinds and
pointing a caret at the column. Kinds that share a dimension (volume and displacement, ratio and
plain number) are interchangeable.

Values: evaluation works on floats in SI base units (pascal, m³/s, kelvin, rad/s for speeds,
fractions for ratios); :func:`si_value` converts a pint quantity. Temperatures are absolute:
``40 °C`` is 313.15 K, and a difference of two temperatures is in kelvin, so a temperature
difference is written in K (``t_out - t_in > 20 K``). Putting a difference beside a °C or °F
literal, or adding a °C literal to a temperature, is refused at compile time.

Limits (refused with ExprError): more than 1000 characters, more than 400 tokens, nesting
deeper than 32 (parentheses, calls, '-', 'not', 'when'), more than 16 arguments, exponents
outside -4…4; quotes, brackets, braces, ';', '.' outside numbers, '__', and words such as
``import`` or ``lambda``.

Evaluation errors: a missing or non-finite input, a division by zero, zero to a negative power,
a function refusing its arguments, and any infinite or NaN value reaching a comparison, a
function argument or the result all raise ExprError; no NaN is ever returned.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from fieldkit.expr.compiled import Compiled
from fieldkit.expr.compiler import REL_TOLERANCE, Compiler, same_type
from fieldkit.expr.dims import (
    BOOLEAN,
    DIMENSIONLESS,
    Dim,
    TypeSpec,
    describe,
    kind_dimension,
    si_value,
    to_quantity,
    to_type,
)
from fieldkit.expr.errors import ExprError
from fieldkit.expr.functions import ANY, BUILTIN_FUNCTIONS, SAME, FunctionSpec, function_table
from fieldkit.expr.lexer import FORBIDDEN_WORDS, KEYWORDS, MAX_CHARS, MAX_TOKENS, UNIT_WORDS
from fieldkit.expr.parser import MAX_ARGS, MAX_DEPTH, MAX_EXPONENT, parse

_NAME = re.compile(r"[a-z][a-z0-9_]*")


def compile_expression(
    source: str,
    symbols: Mapping[str, TypeSpec],
    functions: Mapping[str, FunctionSpec] | None = None,
    *,
    expect: TypeSpec | None = None,
) -> Compiled:
    """Parse and check ``source`` once; evaluate the result many times.

    Args:
        source: the expression as written in a rule pack.
        symbols: the names a rule may read, each with a Kind, a pint dimensionality or BOOLEAN.
        functions: the functions it may call; None means :data:`BUILTIN_FUNCTIONS`. A table
            given here is the whole table: use :func:`function_table` to add to the builtins.
        expect: when given, the result must have this type (e.g. BOOLEAN for a condition).

    Raises:
        ExprError: for anything wrong with the text, with ``.column`` and a caret excerpt.
    """
    tree = parse(source)
    compiler = Compiler(source, symbols, BUILTIN_FUNCTIONS if functions is None else functions)
    typed = compiler.compile(tree)
    if expect is not None:
        wanted = to_type(expect, "expect")
        if not same_type(wanted, typed.type):
            raise ExprError(
                f"this expression must give {describe(wanted)}, but it gives {describe(typed.type)}",
                source,
                0,
            )
    return Compiled(
        source,
        typed.type,
        typed.fn,
        compiler.name_types,
        compiler.first_use,
        frozenset(compiler.calls),
        typed.tag,
    )


def check_name(name: str) -> str:
    """``name`` if a rule could use it as a symbol, else ExprError saying why (for profiles
    and rule packs that define names, so a bad one is reported where it is defined)."""
    if not isinstance(name, str) or not _NAME.fullmatch(name) or "__" in name:
        raise ExprError(
            f"{name!r} cannot be a name: use lower-case letters, digits and single '_', "
            "starting with a letter"
        )
    if name in KEYWORDS or name in FORBIDDEN_WORDS:
        raise ExprError(f"{name!r} cannot be a name: it is a reserved word")
    if name in UNIT_WORDS:
        raise ExprError(f"{name!r} cannot be a name: it is a unit word")
    return name


__all__ = [
    "ANY",
    "BOOLEAN",
    "BUILTIN_FUNCTIONS",
    "DIMENSIONLESS",
    "MAX_ARGS",
    "MAX_CHARS",
    "MAX_DEPTH",
    "MAX_EXPONENT",
    "MAX_TOKENS",
    "REL_TOLERANCE",
    "SAME",
    "Compiled",
    "Dim",
    "ExprError",
    "FunctionSpec",
    "check_name",
    "compile_expression",
    "function_table",
    "kind_dimension",
    "si_value",
    "to_quantity",
]
