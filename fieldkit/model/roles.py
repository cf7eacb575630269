"""Test-point roles: what a gauge teed in at a point measures.

A role fixes the kind of value a reading must have (a case drain needs a flow, a charge point a
pressure), the name rule expressions use for it, and a plain label for screens and reports.
Adding a role is one line here; rules and templates then refer to it by its id.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

from fieldkit.units import Kind


class Role(StrEnum):
    CHARGE_PRESSURE = "charge_pressure"
    CHARGE_PRESSURE_LOW_IDLE = "charge_pressure_low_idle"
    CASE_PRESSURE = "case_pressure"
    PUMP_CASE_DRAIN_FLOW = "pump_case_drain_flow"
    MOTOR_CASE_DRAIN_FLOW = "motor_case_drain_flow"
    LOOP_A_PRESSURE = "loop_a_pressure"
    LOOP_B_PRESSURE = "loop_b_pressure"
    PUMP_OUTLET_PRESSURE = "pump_outlet_pressure"
    STALL_PRESSURE = "stall_pressure"
    WORK_PORT_STALL_PRESSURE = "work_port_stall_pressure"
    PUMP_PRESSURE_RELIEF_ISOLATED = "pump_pressure_relief_isolated"
    STEERING_STANDBY_PRESSURE = "steering_standby_pressure"
    STEERING_RELIEF_PRESSURE = "steering_relief_pressure"
    STEERING_FLOW = "steering_flow"
    RETURN_PRESSURE = "return_pressure"
    FILTER_PRESSURE_DROP = "filter_pressure_drop"
    SUCTION_PRESSURE = "suction_pressure"
    LS_SIGNAL_PRESSURE = "ls_signal_pressure"
    LS_STANDBY_PRESSURE = "ls_standby_pressure"
    PILOT_PRESSURE = "pilot_pressure"
    BRAKE_RELEASE_PRESSURE = "brake_release_pressure"
    ACCUMULATOR_PRECHARGE = "accumulator_precharge"
    OIL_TEMPERATURE = "oil_temperature"
    PUMP_SPEED = "pump_speed"
    PUMP_FLOW = "pump_flow"
    CYLINDER_DRIFT = "cylinder_drift"
    CYLINDER_SEAL_DRIFT = "cylinder_seal_drift"


@dataclass(frozen=True, slots=True)
class RoleInfo:
    kind: Kind
    label: str
    #: Readings of these roles can be hazardous to take (high pressure at the fitting).
    high_pressure: bool = False
    #: Read with the engine running (most readings); False for readings taken with it stopped.
    engine_running: bool = True
    #: The pressure pulses while a function moves (at full stroke or under load): pump ripple and
    #: a changing load swing a pump's outlet, its LS signal and a hydrostatic loop's working side,
    #: so EN 837-2 keeps it within 2/3 of a gauge's scale, not 3/4 (common practice). A profile
    #: may say otherwise for one point (TestPoint.pulsing).
    pulsing: bool = False
    #: A difference between two pressures (a filter's drop), read on a differential gauge: the
    #: point's highest line pressure bears on the gauge's static rating, not on its scale.
    difference: bool = False


ROLES: dict[Role, RoleInfo] = {
    Role.CHARGE_PRESSURE: RoleInfo(Kind.PRESSURE, "charge pressure"),
    # The same gauge read again with the engine at low idle: a worn charge pump falls short of
    # its relief at low speed first, a charge relief set low reads low at every speed.
    Role.CHARGE_PRESSURE_LOW_IDLE: RoleInfo(Kind.PRESSURE, "charge pressure at low idle"),
    Role.CASE_PRESSURE: RoleInfo(Kind.PRESSURE, "case pressure"),
    Role.PUMP_CASE_DRAIN_FLOW: RoleInfo(Kind.FLOW, "pump case drain flow"),
    Role.MOTOR_CASE_DRAIN_FLOW: RoleInfo(Kind.FLOW, "motor case drain flow"),
    Role.LOOP_A_PRESSURE: RoleInfo(Kind.PRESSURE, "loop A pressure", high_pressure=True, pulsing=True),
    Role.LOOP_B_PRESSURE: RoleInfo(Kind.PRESSURE, "loop B pressure", high_pressure=True, pulsing=True),
    Role.PUMP_OUTLET_PRESSURE: RoleInfo(
        Kind.PRESSURE, "pump outlet (system) pressure", high_pressure=True, pulsing=True
    ),
    Role.STALL_PRESSURE: RoleInfo(
        Kind.PRESSURE, "pressure at a stalled function (relief setting)", high_pressure=True
    ),
    # One work port of a valve section stalled: it reads the lower of its own port relief and the
    # main relief (in parallel the lowest setting governs), plus the back pressure behind them.
    # A circuit may have one per port; rules read each of them, not only the first.
    Role.WORK_PORT_STALL_PRESSURE: RoleInfo(
        Kind.PRESSURE, "work port pressure, that function stalled", high_pressure=True
    ),
    # A stall read again with the main relief taken out of play (screwed in, or the valve blocked
    # off and the pump deadheaded on a test gauge): the pump's own compensator alone.
    Role.PUMP_PRESSURE_RELIEF_ISOLATED: RoleInfo(
        Kind.PRESSURE, "pump pressure with the main relief isolated (compensator alone)", high_pressure=True
    ),
    # Steering fed first through a priority valve: the pressure in its priority (CF) line with
    # the wheel at rest, the pressure with the wheel held against its stop (the steering relief),
    # and the priority flow to the steering unit.
    Role.STEERING_STANDBY_PRESSURE: RoleInfo(Kind.PRESSURE, "steering supply (CF) pressure, wheel at rest"),
    Role.STEERING_RELIEF_PRESSURE: RoleInfo(
        Kind.PRESSURE, "steering pressure, wheel held at its stop (steering relief)", high_pressure=True
    ),
    Role.STEERING_FLOW: RoleInfo(Kind.FLOW, "priority (CF) flow to the steering", high_pressure=True),
    Role.RETURN_PRESSURE: RoleInfo(Kind.PRESSURE, "return line pressure"),
    Role.FILTER_PRESSURE_DROP: RoleInfo(Kind.PRESSURE, "filter pressure drop", difference=True),
    Role.SUCTION_PRESSURE: RoleInfo(Kind.PRESSURE, "suction (inlet) pressure"),
    Role.LS_SIGNAL_PRESSURE: RoleInfo(Kind.PRESSURE, "LS signal pressure", high_pressure=True, pulsing=True),
    Role.LS_STANDBY_PRESSURE: RoleInfo(Kind.PRESSURE, "LS standby pressure"),
    Role.PILOT_PRESSURE: RoleInfo(Kind.PRESSURE, "pilot pressure"),
    Role.BRAKE_RELEASE_PRESSURE: RoleInfo(Kind.PRESSURE, "brake release pressure"),
    Role.ACCUMULATOR_PRECHARGE: RoleInfo(
        Kind.PRESSURE, "accumulator gas precharge", high_pressure=True, engine_running=False
    ),
    Role.OIL_TEMPERATURE: RoleInfo(Kind.TEMPERATURE, "oil temperature"),
    Role.PUMP_SPEED: RoleInfo(Kind.SPEED, "pump speed"),
    Role.PUMP_FLOW: RoleInfo(Kind.FLOW, "pump flow", high_pressure=True),
    Role.CYLINDER_DRIFT: RoleInfo(Kind.VELOCITY, "cylinder drift rate", engine_running=False),
    Role.CYLINDER_SEAL_DRIFT: RoleInfo(
        Kind.VELOCITY, "cylinder drift with the rod side vented (piston seal test)", engine_running=False
    ),
}

#: Roles a circuit may carry at several points that rules read one point at a time (each work
#: port of a valve bank has its own port relief), rather than at the circuit's first point only.
PER_POINT_ROLES: frozenset[Role] = frozenset({Role.WORK_PORT_STALL_PRESSURE})
