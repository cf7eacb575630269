"""Rule packs: TOML files of rules that turn readings into findings with evidence for faults.

A rule computes one value from readings and circuit figures (an expression of our own language,
see :mod:`fieldkit.expr`), compares it with limits, and says how likely each outcome
(low / in range / high) is under each fault. Faults it does not list behave like a healthy
machine. Every expression is compiled and dimension-checked when the pack loads, so a rule that
compares a pressure with a flow is refused with its file and line before any visit is judged.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from pydantic import Field, model_validator

from fieldkit.diagnosis.catalogue import ANY_CIRCUIT, CircuitKindList, CircuitKinds
from fieldkit.diagnosis.symbols import DERIVED, FUNCTIONS, SYMBOLS, names_to_roles
from fieldkit.errors import DataFileError
from fieldkit.expr import ExprError, compile_expression
from fieldkit.expr.dims import describe
from fieldkit.model.base import Strict
from fieldkit.model.condition import FunctionState
from fieldkit.model.parts import Part
from fieldkit.tomlfile import key_lines, line_for, parse_toml, read_text, validate

#: Probability that a healthy machine (or a fault the rule does not name) reads low or high here
#: anyway: slips, transients, a maker's range drawn tight. common practice (estimate).
DEFAULT_FALSE_ALARM = 0.03
MIN_LIKELIHOOD = 0.01


class Healthy(Strict):
    """P(low) and P(high) on a healthy machine. Usually small; a rule that compares a reading with
    a figure a healthy machine does not reach (a lower relief's setting, say) sets one high."""

    low: float = Field(default=DEFAULT_FALSE_ALARM, ge=MIN_LIKELIHOOD, le=1 - 2 * MIN_LIKELIHOOD)
    high: float = Field(default=DEFAULT_FALSE_ALARM, ge=MIN_LIKELIHOOD, le=1 - 2 * MIN_LIKELIHOOD)

    @model_validator(mode="after")
    def _room(self) -> Healthy:
        if self.low + self.high > 1 - MIN_LIKELIHOOD:
            raise ValueError("healthy low + high leaves no room for 'in range'")
        return self


class RuleSpec(Strict):
    """One rule as written in a pack."""

    id: str = Field(pattern=r"^[a-z][a-z0-9\-]*$", max_length=60)
    title: str = Field(min_length=3, max_length=120)
    circuits: CircuitKinds = Field(description="circuit kinds, or '*' for machine-wide")
    needs: list[Part] = Field(
        default_factory=list, description="optional parts the rule asks about (any one); see model.fitted"
    )
    when: list[FunctionState] = Field(
        default_factory=list, description="function states the readings are taken in"
    )
    value: str = Field(min_length=1)
    limits: str | None = Field(default=None, pattern="^expected$")
    low: str | None = None
    high: str | None = None
    healthy: Healthy = Field(default_factory=Healthy)
    supplied_from: CircuitKindList = Field(
        default_factory=list,
        description=(
            "circuit kinds that can feed the rule's circuit (a brake released from a drive's charge "
            "gallery): where the machine's profile says a circuit is supplied_by one of these, the "
            "feeding circuit's faults read through this rule's tables too"
        ),
    )
    if_low: dict[str, float] = Field(default_factory=dict, description="fault → P(value reads low | fault)")
    if_high: dict[str, float] = Field(default_factory=dict, description="fault → P(value reads high | fault)")
    say_low: str = ""
    say_high: str = ""
    say_ok: str = ""
    do_low: str = ""
    do_high: str = ""
    cautions: list[str] = Field(default_factory=list, description="raised when the value is out of range")
    source: str = Field(default="", description="where the limit or the physics comes from")
    discount_when_invalid: bool = Field(
        default=True, description="weaken evidence from cold oil / wrong speed"
    )
    zero_if_missing: list[str] = Field(
        default_factory=list,
        description="readings (a reference pressure, such as the case under a charge gauge) taken as zero "
        "when none was read in the rule's condition; the finding says so",
    )

    @model_validator(mode="after")
    def _shape(self) -> RuleSpec:
        if self.limits is None and self.low is None and self.high is None:
            raise ValueError('a rule needs limits = "expected", or low, high or both')
        if self.limits is not None and (self.low is not None or self.high is not None):
            raise ValueError('write either limits = "expected" or low/high, not both')
        for table, probs in (("if_low", self.if_low), ("if_high", self.if_high)):
            for fault, p in probs.items():
                if not MIN_LIKELIHOOD <= p <= 1 - MIN_LIKELIHOOD:
                    raise ValueError(
                        f"{table}.{fault} = {p}: a likelihood lies between {MIN_LIKELIHOOD} and "
                        f"{1 - MIN_LIKELIHOOD}"
                    )
        for fault in set(self.if_low) | set(self.if_high):
            p_low = self.if_low.get(fault, self.healthy.low)
            p_high = self.if_high.get(fault, self.healthy.high)
            if p_low + p_high > 1 - MIN_LIKELIHOOD:
                raise ValueError(
                    f"for {fault}, P(low) + P(high) = {p_low + p_high:.2f} leaves no room for 'in range'"
                )
        return self

    @model_validator(mode="after")
    def _optional_readings(self) -> RuleSpec:
        for name in self.zero_if_missing:
            if name not in SYMBOLS.readings:
                raise ValueError(f"zero_if_missing names '{name}', which is not a reading")
        return self

    @property
    def machine_wide(self) -> bool:
        return ANY_CIRCUIT in self.circuits

    def likelihood(self, fault: str) -> tuple[float, float, float]:
        """P(low), P(in range), P(high) for a fault (unnamed faults read like a healthy machine)."""
        p_low = self.if_low.get(fault, self.healthy.low)
        p_high = self.if_high.get(fault, self.healthy.high)
        return p_low, 1.0 - p_low - p_high, p_high


class _PackFile(Strict):
    rule: list[RuleSpec] = Field(min_length=1)


@dataclass(frozen=True)
class Rule:
    """A rule with its expressions compiled; where it was written, for messages."""

    spec: RuleSpec
    value: Any
    low: Any | None
    high: Any | None
    path: str
    line: int | None

    @property
    def id(self) -> str:
        return self.spec.id

    @property
    def names(self) -> frozenset[str]:
        out = set(self.value.names)
        for e in (self.low, self.high):
            if e is not None:
                out |= e.names
        return frozenset(out)

    @property
    def roles(self) -> frozenset[str]:
        """Reading roles the rule needs (derived names count as the roles they come from)."""
        return names_to_roles(self.names)

    @property
    def where(self) -> str:
        return f"{self.path}:{self.line}" if self.line else self.path


def _compile(source: str, path: str, line: int | None, key: str) -> Any:
    try:
        return compile_expression(source, SYMBOLS, FUNCTIONS)
    except ExprError as exc:
        raise DataFileError(path, str(exc), line=line, key=key) from None


def load_pack(path: Path) -> list[Rule]:
    """Load and compile one rule pack; the first mistake stops it with file, line and key."""
    text = read_text(path)
    spec = validate(_PackFile, parse_toml(text, str(path)), str(path), text)
    lines = key_lines(text)
    rules: list[Rule] = []
    for i, rs in enumerate(spec.rule):
        at = line_for(lines, ("rule", i))

        # The rule's place is bound now, not looked up when called (no loop variable in a closure).
        expr = functools.partial(_rule_expression, path, lines, i, at, rs.id)

        value = expr("value", rs.value)
        low, high = expr("low", rs.low), expr("high", rs.high)
        for key, limit in (("low", low), ("high", high)):
            if limit is not None and limit.result != value.result:
                raise DataFileError(
                    str(path),
                    f"rule '{rs.id}': {key} is {_dim(limit.result)} but value is {_dim(value.result)}",
                    line=line_for(lines, ("rule", i, key)) or at,
                    key=f"rule.{i}.{key}",
                )
        if rs.limits == "expected" and not _single_reading(value.names - set(rs.zero_if_missing)):
            raise DataFileError(
                str(path),
                f"rule '{rs.id}': limits = \"expected\" needs a value that is one reading "
                "(or one reading normalised, such as pump_case_drain_flow_at_ref, or one reading "
                "less a reference named in zero_if_missing)",
                line=line_for(lines, ("rule", i, "limits")) or at,
            )
        rules.append(Rule(rs, value, low, high, str(path), at))
    return rules


def _rule_expression(
    path: Path, lines: Any, index: int, at: int | None, rule_id: str, key: str, source: str | None
) -> Any:
    """One expression of rule ``index`` compiled, with the line of its key (else of the rule)."""
    if source is None:
        return None
    return _compile(
        source, str(path), line_for(lines, ("rule", index, key)) or at, f"rule.{index}.{key} ({rule_id})"
    )


def _single_reading(names: frozenset[str]) -> bool:
    if len(names) != 1:
        return False
    name = next(iter(names))
    return name in SYMBOLS.readings or (name in DERIVED and len(DERIVED[name][1]) == 1)


def _dim(result: Any) -> str:
    return describe(result)


def load_packs(folder: Path) -> list[Rule]:
    """Every ``*.toml`` pack under ``folder/packs``; rule ids are unique across packs."""
    rules: list[Rule] = []
    seen: dict[str, str] = {}
    for path in sorted((folder / "packs").glob("*.toml")):
        for rule in load_pack(path):
            if rule.id in seen:
                raise DataFileError(
                    rule.path, f"rule id '{rule.id}' is also used at {seen[rule.id]}", line=rule.line
                )
            seen[rule.id] = rule.where
            rules.append(rule)
    if not rules:
        raise DataFileError(str(folder / "packs"), "no rule packs found")
    return rules
