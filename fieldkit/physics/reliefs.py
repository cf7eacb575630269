"""Relief valves alone, in series and in parallel: what each gauge should read when the pump is deadheaded.

A circuit's reliefs are described as a small tree: :class:`ReliefValve` leaves joined by
:class:`Series` (flow passes each valve in turn, pump side first) and :class:`Parallel`
(branches share one inlet and one outlet). The model, plainly:

* A valve's *setting* is its cracking pressure with no back pressure on its outlet; at full
  flow it reads higher by its *override* (full-flow minus cracking pressure).
* Back pressure on the outlet of a direct-acting or internally drained valve acts on the back
  of its poppet or pilot, so it adds to the opening pressure one for one (common practice,
  from memory). An externally drained valve's pilot is vented to tank on its own line, so its
  opening pressure stays at its setting (common practice, from memory); oil still cannot flow
  uphill, so its inlet is never below its outlet.
* Parallel: the branch with the lowest opening pressure opens first and takes the flow. At
  full flow the inlet reads that branch's full-flow pressure, but never more than any other
  branch's full-flow pressure: a branch with a steep override can be overtaken by one that
  cracks later but opens fully sooner, and then that branch passes the rest of the flow. The
  inlet is therefore capped at the lowest full-flow pressure of any branch (sharing between two
  part-open branches reads a little lower still; ignored here).
* Series: each valve's outlet is the next valve's inlet, so with internal drains the settings
  add; the return back pressure adds to the whole chain.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from enum import StrEnum
from typing import Union

from fieldkit.model.profile import Relief, ReliefLayout
from fieldkit.physics.common import OutOfRangeError, out, shown, si
from fieldkit.units import Q_, Kind, Quantity

_ZERO_BAR = Q_(0.0, "bar")


class Drain(StrEnum):
    """Where a relief's spring chamber or pilot drains. A direct-acting relief counts as internal."""

    INTERNAL = "internal"
    EXTERNAL = "external"


@dataclass(frozen=True)
class ReliefValve:
    """One relief valve as the circuit diagram shows it."""

    name: str
    setting: Quantity
    override: Quantity = _ZERO_BAR
    drain: Drain | str = Drain.INTERNAL
    _setting_pa: float = field(init=False, repr=False, compare=False)
    _override_pa: float = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            raise OutOfRangeError(f"a relief valve needs a name; got {self.name!r}")
        try:
            object.__setattr__(self, "drain", Drain(self.drain))
        except ValueError:
            raise OutOfRangeError(
                f"relief {self.name!r}: drain must be 'internal' or 'external'; got {self.drain!r}"
            ) from None
        label = f"relief {self.name!r}"
        object.__setattr__(
            self, "_setting_pa", si(self.setting, Kind.PRESSURE, f"{label} setting", positive=True)
        )
        object.__setattr__(
            self, "_override_pa", si(self.override, Kind.PRESSURE, f"{label} override", non_negative=True)
        )

    def _opens_at(self, back_pa: float, full_flow: bool) -> float:
        own = self._setting_pa + (self._override_pa if full_flow else 0.0)
        if self.drain is Drain.INTERNAL:
            return own + back_pa
        return max(own, back_pa)

    def cracking_pressure(self, back_pressure: Quantity | None = None) -> Quantity:
        """Inlet pressure at which the valve starts to pass oil, with this back pressure on its outlet."""
        return out(self._opens_at(_back(back_pressure), full_flow=False), Kind.PRESSURE)

    def full_flow_pressure(self, back_pressure: Quantity | None = None) -> Quantity:
        """Inlet pressure with the whole pump flow passing: cracking pressure plus override."""
        return out(self._opens_at(_back(back_pressure), full_flow=True), Kind.PRESSURE)


def _nodes(items: Iterable[object], kind: str) -> tuple[Arrangement, ...]:
    nodes: list[Arrangement] = []
    for node in items:
        if not isinstance(node, (ReliefValve, Series, Parallel)):
            raise OutOfRangeError(f"a {kind} group holds relief valves or groups; got {node!r}")
        nodes.append(node)
    if not nodes:
        raise OutOfRangeError(f"a {kind} group needs at least one relief")
    return tuple(nodes)


@dataclass(frozen=True)
class Series:
    """Reliefs the flow passes one after another, listed from the pump side to tank."""

    items: tuple[Arrangement, ...]

    def __post_init__(self) -> None:
        object.__setattr__(self, "items", _nodes(self.items, "series"))


@dataclass(frozen=True)
class Parallel:
    """Reliefs or groups sharing one inlet and one outlet."""

    branches: tuple[Arrangement, ...]

    def __post_init__(self) -> None:
        object.__setattr__(self, "branches", _nodes(self.branches, "parallel"))

    def governing(self, back_pressure: Quantity | None = None) -> Arrangement:
        """The branch that opens first: the lowest opening pressure governs."""
        return _lowest(self, _back(back_pressure))


Arrangement = Union[ReliefValve, Series, Parallel]


def _back(back_pressure: Quantity | None) -> float:
    return 0.0 if back_pressure is None else si(back_pressure, Kind.PRESSURE, "back pressure")


def _lowest(group: Parallel, back_pa: float) -> Arrangement:
    return min(group.branches, key=lambda b: _opens_at(b, back_pa, full_flow=False))


def _opens_at(node: Arrangement, back_pa: float, full_flow: bool) -> float:
    """Inlet pressure (Pa) at which oil passes the node with ``back_pa`` on its outlet."""
    if isinstance(node, ReliefValve):
        return node._opens_at(back_pa, full_flow)
    if isinstance(node, Series):
        p = back_pa
        for item in reversed(node.items):
            p = _opens_at(item, p, full_flow)
        return p
    # Cracking: the lowest branch. Full flow: no branch lets the inlet rise past its own
    # full-flow pressure, so the lowest of them caps it.
    return min(_opens_at(b, back_pa, full_flow) for b in node.branches)


def opening_pressure(
    arrangement: Arrangement, back_pressure: Quantity | None = None, at_full_flow: bool = False
) -> Quantity:
    """Pressure upstream of a relief arrangement when oil starts to pass (or, with
    ``at_full_flow``, when the whole pump flow passes)."""
    return out(_opens_at(arrangement, _back(back_pressure), at_full_flow), Kind.PRESSURE)


@dataclass(frozen=True)
class DeadheadResult:
    """What the gauges should read with the pump deadheaded against its reliefs.

    ``points`` maps each valve's name to the expected reading on its inlet. A valve in a branch
    that carries no flow has its inlet fixed only if it sits at the branch's start; further
    along, the pressure depends on leakage, and the entry is None.
    """

    governing: tuple[ReliefValve, ...]
    upstream: Quantity
    points: dict[str, Quantity | None]
    return_pressure: Quantity

    def summary(self) -> str:
        path = " then ".join(v.name for v in self.governing)
        return f"pump side reads {shown(self.upstream)}; flow passes {path}"


def _solve(
    node: Arrangement,
    back_pa: float | None,
    inlet_pa: float | None,
    flowing: bool,
    full_flow: bool,
    points: dict[str, float | None],
    path: list[ReliefValve],
) -> None:
    if isinstance(node, ReliefValve):
        points[node.name] = inlet_pa
        if flowing:
            path.append(node)
    elif isinstance(node, Series):
        if flowing and back_pa is not None:
            outlets = [back_pa]
            for item in reversed(node.items[1:]):
                outlets.append(_opens_at(item, outlets[-1], full_flow))
            outlets.reverse()
            for item, outlet in zip(node.items, outlets, strict=True):
                inlet = _opens_at(item, outlet, full_flow)
                if inlet_pa is not None:
                    # A series branch beside a lower full-flow branch passes only part of the flow:
                    # nothing in it can read above the pressure the parallel group is capped at.
                    inlet = min(inlet, inlet_pa)
                _solve(item, outlet, inlet, True, full_flow, points, path)
        else:
            for i, item in enumerate(node.items):
                _solve(item, None, inlet_pa if i == 0 else None, False, full_flow, points, path)
    else:
        lead = _lowest(node, back_pa) if flowing and back_pa is not None else None
        for branch in node.branches:
            _solve(branch, back_pa, inlet_pa, branch is lead, full_flow, points, path)


def _valve_names(node: Arrangement) -> list[str]:
    if isinstance(node, ReliefValve):
        return [node.name]
    children = node.items if isinstance(node, Series) else node.branches
    return [name for child in children for name in _valve_names(child)]


def deadhead(
    arrangement: Arrangement, return_pressure: Quantity | None = None, at_full_flow: bool = True
) -> DeadheadResult:
    """Expected readings when the pump is deadheaded and its whole flow goes over the reliefs.

    Args:
        arrangement: the circuit's reliefs as a tree of valves, Series and Parallel.
        return_pressure: back pressure in the return line where the reliefs discharge
            (filter, cooler); 0 bar if not given.
        at_full_flow: read the valves at full flow (setting + override), which is what a
            deadheaded pump does; False gives cracking pressures.
    """
    names = _valve_names(arrangement)
    repeated = sorted({n for n in names if names.count(n) > 1})
    if repeated:
        raise OutOfRangeError(
            f"relief names must be unique to label gauge points; repeated: {', '.join(repeated)}"
        )
    back = _back(return_pressure)
    upstream = _opens_at(arrangement, back, at_full_flow)
    points: dict[str, float | None] = {}
    path: list[ReliefValve] = []
    _solve(arrangement, back, upstream, True, at_full_flow, points, path)
    return DeadheadResult(
        governing=tuple(path),
        upstream=out(upstream, Kind.PRESSURE),
        points={n: None if p is None else out(p, Kind.PRESSURE) for n, p in points.items()},
        return_pressure=out(back, Kind.PRESSURE),
    )


def valve_of(relief: Relief) -> ReliefValve:
    """A profile's relief entry as a physics valve (no override stated: none assumed)."""
    override = relief.override if relief.override is not None else _ZERO_BAR
    return ReliefValve(relief.id, relief.setting, override, relief.drain)


def arrangement_for(
    reliefs: Sequence[Relief | ReliefValve],
    layout: ReliefLayout | None,
    *,
    joined: Sequence[ReliefValve] = (),
    joined_to: str | None = None,
) -> Arrangement:
    """The one place a circuit's reliefs become a physics tree, for the rule engine and the
    simulator alike.

    ``layout`` (the profile's ``relief_layout``) arranges them; without one a single relief stands
    alone and several are taken in parallel. ``joined`` valves sit in parallel with the relief
    ``joined_to`` wherever it appears (a relief wrongly connected to the main one, as the
    simulator injects it); they are left out of the default arrangement otherwise.
    """
    valves: dict[str, ReliefValve] = {}
    for r in reliefs:
        v = r if isinstance(r, ReliefValve) else valve_of(r)
        valves[v.name] = v
    if not valves:
        raise OutOfRangeError("a relief arrangement needs at least one relief")
    extra = tuple(joined)
    extra_names = {v.name for v in extra}

    def leaf(name: str, inside_parallel: bool) -> Arrangement:
        if name not in valves:
            raise OutOfRangeError(f"relief layout names '{name}', which the circuit does not list")
        if name == joined_to and extra and not inside_parallel:
            return Parallel((valves[name], *extra))
        return valves[name]

    def build(node: str | ReliefLayout, inside_parallel: bool) -> Arrangement:
        if isinstance(node, str):
            return leaf(node, inside_parallel)
        is_parallel = bool(node.parallel)
        items = [build(m, is_parallel) for m in node.members()]
        if is_parallel and joined_to in node.members() and extra:
            items.extend(extra)
        return Parallel(tuple(items)) if is_parallel else Series(tuple(items))

    if layout is not None:
        return build(layout, False)
    in_circuit = [name for name in valves if name not in extra_names]
    if len(in_circuit) == 1:
        return leaf(in_circuit[0], False)
    return Parallel(tuple(valves.values()))
