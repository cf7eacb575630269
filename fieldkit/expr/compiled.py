"""A compiled expression: evaluate on SI floats, propagate uncertainty, turn results into quantities."""

from __future__ import annotations

import math
from collections.abc import Mapping
from numbers import Real
from typing import Any

from fieldkit.expr.compiler import Fn, is_temperature
from fieldkit.expr.dims import BOOLEAN, Dim, TempTag, ValueType, describe, kind_for, to_quantity
from fieldkit.expr.errors import ExprError
from fieldkit.units import Kind, Quantity

# Central-difference step for sensitivity coefficients: a small fraction of the input's
# standard uncertainty, never below float resolution of the input itself.
_STEP_OF_UNCERTAINTY = 1e-4
_STEP_OF_VALUE = 1e-8


class Compiled:
    """An expression ready to run. Build it with :func:`compile_expression`.

    Attributes:
        source: the expression text.
        result: the result's pint dimensionality, or BOOLEAN.
        names: every name the expression reads.
        name_types: the type of each of those names.
        calls: the functions it calls.
        temperature_difference: the result is a temperature difference (kelvin), not a temperature.
    """

    __slots__ = (
        "source",
        "result",
        "names",
        "name_types",
        "calls",
        "temperature_difference",
        "_fn",
        "_first_use",
        "_numbers",
        "_truths",
    )

    def __init__(
        self,
        source: str,
        result: ValueType,
        fn: Fn,
        name_types: Mapping[str, ValueType],
        first_use: Mapping[str, int],
        calls: frozenset[str],
        tag: TempTag | None,
    ) -> None:
        self.source = source
        self.result = result
        self.names = frozenset(name_types)
        self.name_types = dict(name_types)
        self.calls = calls
        self.temperature_difference = is_temperature(result) and tag is TempTag.DELTA
        self._fn = fn
        self._first_use = dict(first_use)
        self._numbers = tuple(sorted(n for n, t in name_types.items() if t is not BOOLEAN))
        self._truths = tuple(sorted(n for n, t in name_types.items() if t is BOOLEAN))

    def __repr__(self) -> str:
        return f"Compiled({self.source!r} -> {describe(self.result)})"

    @property
    def is_boolean(self) -> bool:
        return self.result is BOOLEAN

    @property
    def result_kind(self) -> Kind | None:
        """The trade kind of a numeric result (volume rather than displacement), or None."""
        return None if self.result is BOOLEAN else kind_for(self.result)

    def evaluate(self, env: Mapping[str, Any]) -> float | bool:
        """The value for ``env`` (name → float in SI base units, or bool for true/false names).

        Raises ExprError for a missing or non-finite input, a division by zero, or a result
        that overflowed.
        """
        self._check(env)
        value = self._fn(env)
        if self.result is BOOLEAN:
            return bool(value)
        if not math.isfinite(value):
            raise ExprError("the result is not a finite number (overflow)", self.source, 0)
        return float(value)

    def evaluate_with_uncertainty(
        self, values: Mapping[str, Any], std_uncertainties: Mapping[str, float]
    ) -> tuple[float, float]:
        """Value and combined standard uncertainty, uncorrelated inputs (JCGM 100:2008 GUM 5.1.2).

        u_c² = Σ (∂f/∂x_i)² u²(x_i), first order; each sensitivity coefficient ∂f/∂x_i is a
        central difference with a step of 1e-4·u(x_i). Names missing from ``std_uncertainties``
        are exact. Near a 'when' switch or a min/max corner the coefficient is that of the
        side the step lands on.
        """
        if self.result is BOOLEAN:
            raise ExprError(
                "uncertainty is propagated for numeric results; this expression is true/false", self.source, 0
            )
        value = self.evaluate(values)
        work = dict(values)
        variance = 0.0
        for name in self._numbers:
            u = std_uncertainties.get(name, 0.0)
            if isinstance(u, bool) or not isinstance(u, Real) or not math.isfinite(u) or u < 0:
                raise ExprError(
                    f"the standard uncertainty of '{name}' must be a finite number ≥ 0, got {u!r}",
                    self.source,
                    self._first_use[name],
                )
            if u == 0:
                continue
            x = float(work[name])
            step = max(_STEP_OF_UNCERTAINTY * u, _STEP_OF_VALUE * abs(x))
            up, down = x + step, x - step
            work[name] = up
            f_up = self._fn(work)
            work[name] = down
            f_down = self._fn(work)
            work[name] = x
            coefficient = (f_up - f_down) / (up - down)
            variance += (coefficient * u) ** 2
        if not math.isfinite(variance):
            raise ExprError("the uncertainty is not a finite number (overflow)", self.source, 0)
        return value, math.sqrt(variance)

    def to_quantity(self, value: float) -> Quantity:
        """A numeric result as a pint quantity in SI base units (a temperature difference in
        delta_degC), for messages and display."""
        if not isinstance(self.result, Dim):
            raise ExprError("a true/false result has no unit", self.source, 0)
        return to_quantity(value, self.result, self.temperature_difference)

    def _check(self, env: Mapping[str, Any]) -> None:
        for name in self._numbers:
            try:
                v = env[name]
            except KeyError:
                raise ExprError(f"no value for '{name}'", self.source, self._first_use[name]) from None
            if type(v) is not float and (isinstance(v, bool) or not isinstance(v, Real)):
                raise ExprError(
                    f"the value of '{name}' must be a number in SI base units, got {v!r}",
                    self.source,
                    self._first_use[name],
                )
            if not math.isfinite(v):
                raise ExprError(
                    f"the value of '{name}' is {v}; it must be a finite number",
                    self.source,
                    self._first_use[name],
                )
        for name in self._truths:
            try:
                v = env[name]
            except KeyError:
                raise ExprError(f"no value for '{name}'", self.source, self._first_use[name]) from None
            if not isinstance(v, bool):
                raise ExprError(
                    f"the value of '{name}' must be true or false, got {v!r}",
                    self.source,
                    self._first_use[name],
                )
