"""Whether something that belongs to an optional part applies to a circuit: the one filter.

Faults, rules, cautions and test points may say which optional parts they need (``needs``, any
one of them will do). The profile loader drops template points for parts not fitted; the
engine asks :func:`applies` before it lets a fault be a hypothesis, a rule speak or a caution
show. Keeping the question in one function keeps the answer the same everywhere: no accumulator
fault on a machine without an accumulator.
"""

from __future__ import annotations

from collections.abc import Iterable

from fieldkit.model.parts import Part
from fieldkit.model.profile import Circuit, CircuitKind, MachineProfile

#: Parts a circuit of this kind has by being that kind: an accumulator circuit has its accumulator.
INHERENT: dict[CircuitKind, frozenset[Part]] = {
    CircuitKind.ACCUMULATOR: frozenset({Part.ACCUMULATOR}),
    CircuitKind.BRAKE_RELEASE: frozenset({Part.SPRING_APPLIED_BRAKE}),
}


def part_fitted(circuit: Circuit, part: Part) -> bool:
    """A part is fitted when the circuit says so, when its kind implies it, or when the circuit
    states nothing (then every usual part is assumed, so no caution is lost for want of a tick)."""
    return part in INHERENT.get(circuit.kind, frozenset()) or circuit.has_part(part)


def applies(needs: Iterable[Part], circuit: Circuit | None, profile: MachineProfile | None = None) -> bool:
    """Whether something needing any one of ``needs`` applies to ``circuit``; for machine-wide
    things (``circuit`` None), whether any circuit of ``profile`` has one. Needing nothing
    always applies."""
    wanted = list(needs)
    if not wanted:
        return True
    if circuit is not None:
        return any(part_fitted(circuit, p) for p in wanted)
    if profile is None:
        return True
    return any(part_fitted(c, p) for c in profile.circuits for p in wanted)


__all__ = ["INHERENT", "applies", "part_fitted"]
