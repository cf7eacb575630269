"""Which physics and which healthy parameters each circuit kind uses.

Any circuit may also carry a gas accumulator (a pilot or brake accumulator with its own precharge
point); that part is shared, so it is added here rather than in every kind's module.
"""

from __future__ import annotations

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, CircuitKind, TestPoint
from fieldkit.model.roles import Role
from fieldkit.simulate.actuators import accumulator_params, actuator, build_actuator, precharge_reading
from fieldkit.simulate.closed_loop import (
    brake_release,
    build_brake,
    build_closed_loop,
    build_motor,
    closed_loop,
    motor,
)
from fieldkit.simulate.machine import Builder, CircuitModel, Draw, Env, Machine, PhysicsTable, PointPhysics
from fieldkit.simulate.open_circuits import build_open, fixed_pump, variable_pump


def _with_accumulator(physics: PointPhysics) -> PointPhysics:
    def value(
        machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
    ) -> float | None:
        if tp.role is Role.ACCUMULATOR_PRECHARGE and "precharge" in model.p:
            return precharge_reading(model, machine.setting.gas_c)
        return physics(machine, model, tp, state, env)

    return value


def _building_accumulator(builder: Builder) -> Builder:
    def build(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
        model = builder(machine, circuit, draw)
        if "precharge" not in model.p:
            accumulator_params(circuit, draw, model.p)
        return model

    return build


PHYSICS: dict[CircuitKind, PointPhysics] = {
    CircuitKind.OPEN_FIXED_PUMP: _with_accumulator(fixed_pump),
    CircuitKind.LOAD_SENSING: _with_accumulator(variable_pump),
    CircuitKind.PRESSURE_COMPENSATED: _with_accumulator(variable_pump),
    CircuitKind.CLOSED_LOOP_DRIVE: _with_accumulator(closed_loop),
    CircuitKind.MOTOR: _with_accumulator(motor),
    CircuitKind.BRAKE_RELEASE: _with_accumulator(brake_release),
    CircuitKind.CYLINDER: actuator,
    CircuitKind.ACCUMULATOR: actuator,
    CircuitKind.PILOT_SUPPLY: actuator,
}

BUILDERS: dict[CircuitKind, Builder] = {
    CircuitKind.OPEN_FIXED_PUMP: _building_accumulator(build_open),
    CircuitKind.LOAD_SENSING: _building_accumulator(build_open),
    CircuitKind.PRESSURE_COMPENSATED: _building_accumulator(build_open),
    CircuitKind.CLOSED_LOOP_DRIVE: _building_accumulator(build_closed_loop),
    CircuitKind.MOTOR: _building_accumulator(build_motor),
    CircuitKind.BRAKE_RELEASE: _building_accumulator(build_brake),
    CircuitKind.CYLINDER: build_actuator,
    CircuitKind.ACCUMULATOR: build_actuator,
    CircuitKind.PILOT_SUPPLY: build_actuator,
}

#: What :func:`fieldkit.simulate.machine.build_machine` is given.
TABLE = PhysicsTable(PHYSICS, BUILDERS)

__all__ = ["BUILDERS", "PHYSICS", "TABLE"]
