"""Which readings a technician takes on a machine, under which conditions, in which order.

Every test point is read under each condition its expected ranges name (a charge point in
neutral and in stroke), plus the few pairings a test procedure needs although no range asks
for them: return pressure with a function stalled on a fixed pump (it adds to the reliefs),
charge pressure at stall, case pressure where the most oil leaks to the case (a variable pump
at stall, a motor under load), and pump outlet with LS signal while a function moves (margin is
their difference). The order is the one a technician works in: oil temperature and speed first,
then everything in neutral, in stroke, under load, stalled; drift tests with the load held;
engine-off checks (accumulator gas) last; and oil temperature again.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import IntEnum

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, CircuitKind, MachineProfile, TestPoint
from fieldkit.model.roles import Role


class Stage(IntEnum):
    """Working order of a visit."""

    START = 0
    NEUTRAL = 1
    FULL_STROKE = 2
    UNDER_LOAD = 3
    STALLED = 4
    DRIFT = 5
    ENGINE_OFF = 6
    FINISH = 7


_STATE_STAGE = {
    FunctionState.NEUTRAL: Stage.NEUTRAL,
    FunctionState.FULL_STROKE: Stage.FULL_STROKE,
    FunctionState.UNDER_LOAD: Stage.UNDER_LOAD,
    FunctionState.STALLED: Stage.STALLED,
}

#: Conditions a role is read in when its ranges say nothing about the condition.
_DEFAULT_STATE: dict[Role, FunctionState] = {
    Role.SUCTION_PRESSURE: FunctionState.FULL_STROKE,
    Role.FILTER_PRESSURE_DROP: FunctionState.FULL_STROKE,
    Role.RETURN_PRESSURE: FunctionState.FULL_STROKE,
    Role.PUMP_FLOW: FunctionState.UNDER_LOAD,
    Role.PUMP_CASE_DRAIN_FLOW: FunctionState.STALLED,
    Role.MOTOR_CASE_DRAIN_FLOW: FunctionState.STALLED,
    Role.STALL_PRESSURE: FunctionState.STALLED,
    Role.WORK_PORT_STALL_PRESSURE: FunctionState.STALLED,
    Role.STEERING_RELIEF_PRESSURE: FunctionState.STALLED,
    Role.STEERING_FLOW: FunctionState.UNDER_LOAD,
    Role.LOOP_A_PRESSURE: FunctionState.STALLED,
    Role.LOOP_B_PRESSURE: FunctionState.STALLED,
}

#: Pairings a test procedure adds (common practice): (circuit kind, role) → states.
_EXTRA: dict[tuple[CircuitKind, Role], tuple[FunctionState, ...]] = {
    (CircuitKind.OPEN_FIXED_PUMP, Role.RETURN_PRESSURE): (FunctionState.STALLED,),
    (CircuitKind.LOAD_SENSING, Role.CASE_PRESSURE): (FunctionState.STALLED,),
    (CircuitKind.PRESSURE_COMPENSATED, Role.CASE_PRESSURE): (FunctionState.STALLED,),
    (CircuitKind.MOTOR, Role.CASE_PRESSURE): (FunctionState.UNDER_LOAD,),
    (CircuitKind.CLOSED_LOOP_DRIVE, Role.CHARGE_PRESSURE): (FunctionState.STALLED,),
    (CircuitKind.LOAD_SENSING, Role.LS_SIGNAL_PRESSURE): (FunctionState.FULL_STROKE,),
    (CircuitKind.LOAD_SENSING, Role.PUMP_OUTLET_PRESSURE): (FunctionState.FULL_STROKE,),
}

#: Readings that are taken once for the whole machine: one thermometer in the tank, one tachometer.
_ONCE = (Role.OIL_TEMPERATURE, Role.PUMP_SPEED)


@dataclass(frozen=True, slots=True)
class Planned:
    """One reading to take."""

    circuit_id: str
    point: TestPoint
    state: FunctionState
    stage: Stage

    @property
    def engine_off(self) -> bool:
        return self.stage is Stage.ENGINE_OFF


def states_for(circuit: Circuit, tp: TestPoint) -> list[FunctionState]:
    """The conditions a point is read in: the first condition of each of its ranges, then the
    procedure's pairings."""
    states: list[FunctionState] = []
    for rng in tp.expected:
        states.append(
            rng.when.function[0] if rng.when.function else _DEFAULT_STATE.get(tp.role, FunctionState.NEUTRAL)
        )
    if not tp.expected:
        states.append(_DEFAULT_STATE.get(tp.role, FunctionState.NEUTRAL))
    states.extend(_EXTRA.get((circuit.kind, tp.role), ()))
    return list(dict.fromkeys(states))


def _stage(tp: TestPoint, state: FunctionState) -> Stage:
    if tp.role is Role.ACCUMULATOR_PRECHARGE:
        return Stage.ENGINE_OFF
    if tp.role in (Role.CYLINDER_DRIFT, Role.CYLINDER_SEAL_DRIFT):
        return Stage.DRIFT
    return _STATE_STAGE[state]


def reading_plan(profile: MachineProfile) -> list[Planned]:
    """Every reading of a full check of this machine, in the order a technician takes them."""
    planned: list[Planned] = []
    once: dict[Role, tuple[str, TestPoint]] = {}
    for circuit in profile.circuits:
        for tp in circuit.test_points:
            if tp.role in _ONCE:
                once.setdefault(tp.role, (circuit.id, tp))
                continue
            for state in states_for(circuit, tp):
                planned.append(Planned(circuit.id, tp, state, _stage(tp, state)))
        # A flow test is read with the speed it ran at: the tachometer is read again under load,
        # where engine droop shows (common practice).
        speed = next((tp for tp in circuit.test_points if tp.role is Role.PUMP_SPEED), None)
        if speed is not None and any(tp.role is Role.PUMP_FLOW for tp in circuit.test_points):
            planned.append(Planned(circuit.id, speed, FunctionState.UNDER_LOAD, Stage.UNDER_LOAD))
    planned.sort(key=lambda r: r.stage)  # stable: profile order within a stage
    head: list[Planned] = []
    tail: list[Planned] = []
    if Role.OIL_TEMPERATURE in once:
        cid, tp = once[Role.OIL_TEMPERATURE]
        head.append(Planned(cid, tp, FunctionState.NEUTRAL, Stage.START))
        tail.append(Planned(cid, tp, FunctionState.NEUTRAL, Stage.FINISH))
    if Role.PUMP_SPEED in once:
        cid, tp = once[Role.PUMP_SPEED]
        head.append(Planned(cid, tp, FunctionState.NEUTRAL, Stage.START))
    return head + planned + tail


__all__ = ["Planned", "Stage", "reading_plan", "states_for"]
