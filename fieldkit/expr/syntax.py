"""The parsed form of an expression: small immutable nodes that remember where they came from.

Every node keeps ``start``/``end`` (a slice of the source) so messages can quote the part
that is wrong and put the caret under it. Chains of ``+ -`` and ``* /`` and of ``and``/``or``
are flat, so a long sum does not make a deep tree.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TypeAlias


@dataclass(frozen=True, slots=True)
class Number:
    start: int
    end: int
    magnitude: float
    unit: str | None


@dataclass(frozen=True, slots=True)
class Truth:
    start: int
    end: int
    value: bool


@dataclass(frozen=True, slots=True)
class Name:
    start: int
    end: int
    name: str


@dataclass(frozen=True, slots=True)
class Call:
    start: int
    end: int
    name: str
    args: tuple[Node, ...]


@dataclass(frozen=True, slots=True)
class Negate:
    start: int
    end: int
    operand: Node


@dataclass(frozen=True, slots=True)
class Not:
    start: int
    end: int
    operand: Node


@dataclass(frozen=True, slots=True)
class Power:
    start: int
    end: int
    base: Node
    exponent: int
    op_at: int


@dataclass(frozen=True, slots=True)
class Step:
    """One ``op operand`` link of a chain; ``at`` is where the operator stands."""

    op: str
    at: int
    operand: Node


@dataclass(frozen=True, slots=True)
class Chain:
    """``first (op operand)…`` for the left-associative ``+ -`` or ``* /`` levels."""

    start: int
    end: int
    first: Node
    steps: tuple[Step, ...]


@dataclass(frozen=True, slots=True)
class Compare:
    start: int
    end: int
    op: str
    op_at: int
    left: Node
    right: Node


@dataclass(frozen=True, slots=True)
class Logic:
    """``and``/``or`` over two or more operands, evaluated left to right with short circuit."""

    start: int
    end: int
    op: str
    operands: tuple[Node, ...]
    op_at: tuple[int, ...]


@dataclass(frozen=True, slots=True)
class When:
    start: int
    end: int
    condition: Node
    then: Node
    otherwise: Node
    then_at: int
    else_at: int


Node: TypeAlias = Number | Truth | Name | Call | Negate | Not | Power | Chain | Compare | Logic | When
