"""Which cautions a step raises, from what the step does.

A step is one reading: a test point in a circuit, taken in a function state. The cautions in
``rules/cautions.toml`` say when they apply (the point's pressure rating, the circuit kind and
function state, the parts fitted, the engine running or stopped, where the technician stands);
this module only matches those situations. The screens, ``diagnose`` and the job card all ask
here, so a step shows the same cautions everywhere.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass

from fieldkit.diagnosis.catalogue import Caution, CautionWhen, Engine, Severity
from fieldkit.model.condition import FunctionState
from fieldkit.model.fitted import applies, part_fitted
from fieldkit.model.profile import Circuit, TestPoint
from fieldkit.model.roles import ROLES
from fieldkit.units import METRIC, DisplaySystem, format_value

#: A step with the drive engaged or stalled: the machine, or what the motor turns, can move.
DRIVE_STATES = frozenset({FunctionState.FULL_STROKE, FunctionState.STALLED, FunctionState.UNDER_LOAD})

SEVERITY_RANK = {Severity.DANGER: 0, Severity.WARNING: 1, Severity.NOTICE: 2}


@dataclass(frozen=True, slots=True)
class Raised:
    """A caution and the plain reason it is on this step."""

    caution: Caution
    because: str


def engine_for(point: TestPoint) -> Engine:
    """Whether the reading is taken with the engine running (most are) or stopped."""
    return Engine.RUNNING if ROLES[point.role].engine_running else Engine.STOPPED


def drive_engaged(circuit: Circuit, function: FunctionState) -> bool:
    """A drive circuit (travel loop, motor, travel brake) with its function engaged or stalled."""
    return circuit.kind.value in {"closed_loop_drive", "motor", "brake_release"} and function in DRIVE_STATES


def _rating_bar(point: TestPoint) -> float | None:
    rating = point.pressure_rating
    return None if rating is None else float(rating.to("bar").magnitude)


def situation_holds(w: CautionWhen, circuit: Circuit, point: TestPoint, function: FunctionState) -> bool:
    """Every key the situation gives holds for this step."""
    if w.circuits and circuit.kind.value not in w.circuits:
        return False
    if w.functions and function not in w.functions:
        return False
    if w.roles and point.role not in w.roles:
        return False
    if w.parts and not any(part_fitted(circuit, p) for p in w.parts):
        return False
    if w.rated_at_least is not None:
        rating = _rating_bar(point)
        if rating is None or rating < float(w.rated_at_least.to("bar").magnitude):
            return False
    if w.engine is not None and engine_for(point) is not w.engine:
        return False
    return not (w.positions and point.position not in w.positions)


def _reason(
    c: Caution, circuit: Circuit, point: TestPoint, function: FunctionState, system: DisplaySystem = METRIC
) -> str | None:
    """Why the caution applies to this step, in a few words; None when it does not."""
    if point.role in c.roles:
        return f"{point.label}"
    if function in c.functions:
        return f"{point.label}, {function.label}"
    for w in c.when:
        if situation_holds(w, circuit, point, function):
            if w.rated_at_least is not None:
                rating = point.pressure_rating
                return (
                    f"{point.label}, rated {format_value(rating, system)}"
                    if rating is not None
                    else point.label
                )
            if w.functions:
                return f"{point.label}, {function.label}"
            return point.label
    return None


def cautions_for_step(
    cautions: Mapping[str, Caution],
    circuit: Circuit,
    point: TestPoint,
    function: FunctionState,
    *,
    include_general: bool = False,
    system: DisplaySystem = METRIC,
) -> list[Raised]:
    """The cautions for taking this reading: named by the point, or raised by what the step does.
    ``system`` gives the units of a rating named in the reason (the card's units, not always bar).

    A caution whose text stops the engine is replaced by its ``running_instead`` on a step that
    needs the engine running, so a step never tells the technician to do both. Worst first."""
    found: dict[str, Raised] = {}
    for cid in point.cautions:
        if cid in cautions and applies(cautions[cid].needs, circuit):
            found[cid] = Raised(cautions[cid], point.label)
    for c in cautions.values():
        if not applies(c.needs, circuit):
            continue
        if c.always:
            if include_general:
                found.setdefault(c.id, Raised(c, "always"))
            continue
        why = _reason(c, circuit, point, function, system)
        if why is not None:
            found.setdefault(c.id, Raised(c, why))
    if engine_for(point) is Engine.RUNNING:
        for cid in [cid for cid, r in found.items() if r.caution.stops_engine]:
            raised = found.pop(cid)
            instead = raised.caution.running_instead
            if instead is not None and instead in cautions:
                found.setdefault(instead, Raised(cautions[instead], f"{raised.because}, engine running"))
    return sort_raised(drop_covered(found.values()))


def drop_covered(raised: Iterable[Raised]) -> list[Raised]:
    """Leave out a caution when one that says all it says is shown too (``covered_by``)."""
    items = list(raised)
    shown = {r.caution.id for r in items}
    return [r for r in items if not shown.intersection(r.caution.covered_by)]


def sort_raised(raised: Iterable[Raised]) -> list[Raised]:
    """The general caution first, then the worst, then by title."""
    return sorted(
        raised, key=lambda r: (not r.caution.always, SEVERITY_RANK[r.caution.severity], r.caution.title)
    )


def needs_two_people(raised: Iterable[Raised]) -> bool:
    return any(r.caution.two_people for r in raised)
