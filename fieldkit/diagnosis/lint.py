"""``fieldkit rules check``: mistakes in rule packs that loading alone does not catch.

Loading already refuses syntax, unknown names (roles, parameters), dimension mismatches and
hostile expressions. Here the packs are checked against the catalogues: unknown faults and
cautions, rules that can never move the ranking, and faults no rule gives evidence for.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Protocol

from fieldkit.diagnosis.catalogue import NO_FAULT, Caution, Fault
from fieldkit.diagnosis.rulepack import Rule
from fieldkit.errors import DataFileError


class Knowledge(Protocol):
    """What is checked: the packs and catalogues of one rules folder. The engine's
    :class:`fieldkit.diagnosis.engine.Knowledge` is one; this module needs no more of it, so the
    engine can import the checks without the checks importing the engine."""

    @property
    def rules(self) -> Sequence[Rule]: ...
    @property
    def faults(self) -> Mapping[str, Fault]: ...
    @property
    def cautions(self) -> Mapping[str, Caution]: ...
    @property
    def folder(self) -> Path: ...


#: Faults the engine gives evidence for in code rather than by a rule.
BUILT_IN_EVIDENCE = frozenset({NO_FAULT, "gauge_error"})


@dataclass(frozen=True, slots=True)
class Problem:
    path: str
    line: int | None
    message: str
    error: bool

    @property
    def where(self) -> str:
        return f"{self.path}:{self.line}" if self.line else self.path

    def __str__(self) -> str:
        return f"{self.where}: {'error' if self.error else 'warning'}: {self.message}"


def problems(knowledge: Knowledge) -> list[Problem]:
    found: list[Problem] = []
    evidenced: set[str] = set()
    for rule in knowledge.rules:
        spec = rule.spec
        for table, probs in (("if_low", spec.if_low), ("if_high", spec.if_high)):
            for fault in probs:
                if fault not in knowledge.faults:
                    found.append(
                        Problem(
                            rule.path,
                            rule.line,
                            f"rule '{spec.id}' {table} names unknown fault '{fault}'",
                            True,
                        )
                    )
                    continue
                evidenced.add(fault)
                f = knowledge.faults[fault]
                if (
                    not spec.machine_wide
                    and not f.machine_wide
                    and not any(f.applies_to_name(c) for c in [*spec.circuits, *spec.supplied_from])
                ):
                    found.append(
                        Problem(
                            rule.path,
                            rule.line,
                            f"rule '{spec.id}' gives evidence for '{fault}', which cannot occur in "
                            f"{', '.join(spec.circuits)}",
                            True,
                        )
                    )
        for cid in spec.cautions:
            if cid not in knowledge.cautions:
                found.append(
                    Problem(rule.path, rule.line, f"rule '{spec.id}' raises unknown caution '{cid}'", True)
                )
        if not spec.if_low and not spec.if_high:
            found.append(
                Problem(
                    rule.path,
                    rule.line,
                    f"rule '{spec.id}' names no fault in if_low or if_high: it can never move the ranking",
                    True,
                )
            )
        has_low = spec.limits == "expected" or spec.low is not None
        has_high = spec.limits == "expected" or spec.high is not None
        if spec.if_low and not has_low:
            found.append(
                Problem(
                    rule.path,
                    rule.line,
                    f"rule '{spec.id}' has if_low but no low limit: that evidence can never fire",
                    True,
                )
            )
        if spec.if_high and not has_high:
            found.append(
                Problem(
                    rule.path,
                    rule.line,
                    f"rule '{spec.id}' has if_high but no high limit: that evidence can never fire",
                    True,
                )
            )
        if rule.low is not None and rule.high is not None and not rule.low.names and not rule.high.names:
            lo, hi = rule.low.evaluate({}), rule.high.evaluate({})
            if lo >= hi:
                found.append(
                    Problem(
                        rule.path,
                        rule.line,
                        f"rule '{spec.id}': low limit is not below high limit, so it can never read in range",
                        True,
                    )
                )
    for entry in knowledge.faults.values():
        if entry.id not in evidenced and entry.id not in BUILT_IN_EVIDENCE:
            found.append(
                Problem(
                    str(knowledge.folder / "faults.toml"),
                    None,
                    f"no rule gives evidence for fault '{entry.id}'",
                    False,
                )
            )
    return found


def check_references(knowledge: Knowledge) -> None:
    """Refuse to diagnose with packs that name faults or cautions that do not exist."""
    errors = [p for p in problems(knowledge) if p.error]
    if errors:
        first = errors[0]
        raise DataFileError(
            first.path,
            first.message
            + (f" (and {len(errors) - 1} more; run 'fieldkit rules check')" if len(errors) > 1 else ""),
            line=first.line,
        )
