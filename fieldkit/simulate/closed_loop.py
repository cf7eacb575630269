"""Closed-loop drives, open-circuit motors and spring-applied brakes released by pressure.

Closed loop (``CircuitModel.p``, canonical units):

* ``charge_disp`` charge pump displacement, ``charge_fill`` its fill, ``charge_gap`` /
  ``charge_slot`` its slip gap from outlet back to inlet (laminar gap law, sized so a sound
  pump slips 8 % of its flow at its relief setting): a worn (loose) charge pump sags as
  pressure rises;
* ``charge_relief`` and ``flushing_relief`` settings (net of case, as data sheets give them);
* ``hp_a`` / ``hp_b`` cross-port relief *differentials* above the low side, ``hp_slope`` their
  override (bar per L/min), ``low_side`` the nominal low-side pressure at a stall. The valves
  discharge into the low side, so a stalled port reads charge + differential + override; a
  profile figure stated as the gauge reading (``cross_port_relief_convention = "gauge"``) is
  turned into a differential when the machine is built;
* ``pump_drain`` / ``motor_drain`` case drain of the sound machine at the stall pressure ``p_ref``
  and the reference temperature, turned into leakage gaps (``pump_gap``/``pump_slot``,
  ``motor_gap``/``motor_slot``) from the high side to the case;
* ``drain_static``, ``drain_r``, ``case_extra`` what the pump case reads for the oil through it:
  its own leakage, and in neutral the charge flow the charge relief discharges into it;
  ``case_extra`` is back pressure downstream of the drain hose (cooler, return), which the
  cooler inlet reads too; ``ret_share`` the part of a sound drain line's drop that lies past
  the cooler inlet, ``drain_r0`` the sound hose's resistance (a kinked hose does not lift the
  cooler inlet);
* ``idle_rpm`` low idle, where the charge pump is read a second time;
* ``inlet_turb`` / ``inlet_lam`` / ``inlet_restrict`` charge pump inlet vacuum;
  ``cfilter`` charge filter drop at the design charge flow.

Charge pressure: the charge relief governs in neutral; in stroke the flushing spool also offers
the low side the flushing relief, and the lower of the two governs (case pressure added, since
both work against the case). That holds while the charge pump covers what the loop loses; when
it does not, the reliefs close and charge settles where the charge pump's sagging delivery meets
the loop's leakage. Written here, not taken from :mod:`fieldkit.physics.closed_loop`.

Motor: ``drain`` (L/min at ``dp_ref``) and its gap ``motor_gap``/``motor_slot``, ``load_dp`` (bar
across the motor under the working load), ``line_loss``, case drain line as above. Brake:
``valve_drop``, ``loss`` (share of the supply lost to a leaking release circuit), ``leak`` (L/min
that leak costs the supply), ``vent``, and ``supply`` when the brake has its own supply point.
"""

from __future__ import annotations

from dataclasses import replace

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, CircuitKind, TestPoint
from fieldkit.model.roles import Role
from fieldkit.simulate.constants import (
    DEEPEST_VACUUM_BAR,
    LEAKAGE_SCATTER,
    LOAD_SCATTER,
    LOAD_SHARE,
    RESTRICTION_SCATTER,
    SETTING_SCATTER,
)
from fieldkit.simulate.hydraulics import DEFAULT_OVERRIDE_SHARE
from fieldkit.simulate.machine import (
    CircuitModel,
    Draw,
    Env,
    Machine,
    any_bounds,
    bounds,
    drain_line,
    gap_leak,
    gap_path,
    middle,
    param,
    point,
)
from fieldkit.simulate.open_circuits import cavitation_fill, return_back

#: Charge pump volumetric efficiency at its relief setting on a sound machine (simulator's
#: estimate for a small gear or gerotor pump, from memory).
CHARGE_EFFICIENCY = 0.92
#: Charge pump size when the profile gives none: 10–15 % of the main pump (field notes,
#: Machinery Lubrication 2016); the middle is used.
CHARGE_SHARE = 0.125
#: Loop pressure travelling at full stroke and working under load, as a share of the cross-port
#: relief (simulator's choice of test conditions).
STROKE_SHARE = 0.35
#: Share of a sound case drain line's drop that lies past the cooler inlet (cooler, filter, tank
#: fittings), the rest being the drain hose (simulator's own split).
RETURN_SHARE = 0.6
#: Low idle as a share of rated speed when the profile gives no figure (simulator's choice).
IDLE_SHARE = 0.4
#: Charge relief override: bar per L/min passing over it (a small direct-acting valve; own estimate).
CHARGE_OVERRIDE_SLOPE = 0.02


# --- closed loop ---------------------------------------------------------------------------


def loop_pressure(model: CircuitModel, state: FunctionState) -> float:
    """High-side loop pressure in a state (bar, gauge). At a stall the cross-port relief holds the
    high side at its differential above the low side, which sits near the charge setting."""
    p = model.p
    return {
        FunctionState.NEUTRAL: p["charge_relief"],
        FunctionState.FULL_STROKE: STROKE_SHARE * p["p_ref"],
        FunctionState.UNDER_LOAD: LOAD_SHARE * p["p_ref"],
        FunctionState.STALLED: 0.5 * (p["hp_a"] + p["hp_b"]) + p["low_side"],
    }[state]


def pump_drain(model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Pump case drain: the loop's high side leaking through the rotating group's gaps to the case."""
    p = model.p
    return gap_leak(p, "pump", loop_pressure(model, state) - p["drain_static"], env)


def motor_drain(model: CircuitModel, state: FunctionState, env: Env) -> float:
    p = model.p
    return gap_leak(p, "motor", loop_pressure(model, state) - p["drain_static"], env)


def charge_intake(model: CircuitModel, env: Env) -> float:
    return model.p["charge_disp"] * env.speed_rpm / 1000.0


def charge_vacuum(model: CircuitModel, env: Env) -> float:
    p = model.p
    x = charge_intake(model, env) / p["charge_q0"]
    return (p["inlet_turb"] * x * x + p["inlet_lam"] * x * env.mu_ratio) * p["inlet_restrict"]


def charge_delivered(model: CircuitModel, env: Env) -> float:
    """What the charge pump fills at this speed and inlet vacuum, before its own slip."""
    return charge_intake(model, env) * model.p["charge_fill"] * cavitation_fill(charge_vacuum(model, env))


def net_charge(machine: Machine, model: CircuitModel, state: FunctionState, env: Env) -> tuple[float, float]:
    """Charge pressure above case (bar) and the flow over the charge relief into the pump case
    (L/min) in a state: the governing relief while the charge pump keeps up, below it when the
    loop loses more than the charge pump gives."""
    p = model.p
    neutral = state is FunctionState.NEUTRAL
    # In neutral the flushing spool is centred and only the charge relief can open; in stroke the
    # shifted spool offers the low side the flushing relief too, and whichever opens first governs.
    flushing = p.get("flushing_relief") or None
    by_charge_relief = neutral or flushing is None or p["charge_relief"] <= flushing
    governing = p["charge_relief"] if by_charge_relief else float(flushing or 0.0)
    drawn = charge_delivered(model, env)
    # The charge pump's own slip: a gap from its outlet back to its inlet, so it grows with pressure.
    slip_per_bar = gap_leak(p, "charge", 1.0, env)
    brake_leak = 0.0 if neutral else brake_demand(machine)
    demand = pump_drain(model, state, env) + motor_drain(model, state, env) + brake_leak
    surplus = drawn - slip_per_bar * governing - demand
    if surplus > 0.0:
        return governing + CHARGE_OVERRIDE_SLOPE * surplus, surplus if by_charge_relief else 0.0
    # The reliefs have closed: charge settles where the sagging charge pump meets the loop's losses.
    return max(0.0, (drawn - demand) / slip_per_bar), 0.0


def loop_case(machine: Machine, model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Pump case pressure: the drain line passing the pump's leakage plus whatever the charge
    relief discharges into the case (physics.closed_loop: the charge relief commonly vents
    into it), so the case carries the most oil in neutral."""
    p = model.p
    flow = pump_drain(model, state, env) + net_charge(machine, model, state, env)[1]
    return p["drain_static"] + p["drain_r"] * flow + p["case_extra"]


def cooler_inlet(machine: Machine, model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Return pressure where the case drains enter the cooler: the part of a sound drain line's
    drop that lies past it, plus any back pressure downstream, but not the drain hose itself."""
    p = model.p
    flow = pump_drain(model, state, env) + net_charge(machine, model, state, env)[1]
    return p["ret_share"] * (p["drain_static"] + p["drain_r0"] * flow) + p["case_extra"]


def at_low_idle(machine: Machine, model: CircuitModel, env: Env) -> Env:
    """The same moment with the engine brought down to low idle."""
    idle = model.p["idle_rpm"]
    return replace(env, speed_rpm=idle, speed_ratio=idle / machine.rated_rpm)


def charge_pressure(machine: Machine, model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Charge gauge reading: net charge plus case pressure, since the charge and flushing
    reliefs work against the case (physics.closed_loop.expected_charge_pressure)."""
    return net_charge(machine, model, state, env)[0] + loop_case(machine, model, state, env)


def brake_demand(machine: Machine) -> float:
    """Oil leaking away in brake release circuits fed from charge pressure (L/min)."""
    return sum(m.p.get("leak", 0.0) for m in machine.circuits.values() if m.kind is CircuitKind.BRAKE_RELEASE)


def closed_loop(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    role = tp.role
    p = model.p
    if role is Role.CHARGE_PRESSURE:
        return charge_pressure(machine, model, state, env)
    if role is Role.CHARGE_PRESSURE_LOW_IDLE:
        return charge_pressure(machine, model, FunctionState.NEUTRAL, at_low_idle(machine, model, env))
    if role is Role.RETURN_PRESSURE:
        return cooler_inlet(machine, model, state, env)
    if role is Role.CASE_PRESSURE:
        return loop_case(machine, model, state, env)
    if role is Role.PUMP_CASE_DRAIN_FLOW:
        return pump_drain(model, state, env)
    if role is Role.MOTOR_CASE_DRAIN_FLOW:
        return motor_drain(model, state, env)
    if role in (Role.LOOP_A_PRESSURE, Role.LOOP_B_PRESSURE) and state is FunctionState.STALLED:
        return stall_reading(machine, model, "hp_a" if role is Role.LOOP_A_PRESSURE else "hp_b", env)
    if role is Role.SUCTION_PRESSURE:
        return -min(charge_vacuum(model, env), DEEPEST_VACUUM_BAR)
    if role is Role.FILTER_PRESSURE_DROP:
        return p["cfilter"] * charge_delivered(model, env) / p["charge_q0"] * env.mu_ratio
    return None


def stall_flow(model: CircuitModel, env: Env) -> float:
    """Oil crossing the cross-port relief with the drive stalled: the main pump's delivery less
    what leaks to the pump and motor cases."""
    p = model.p
    leaks = pump_drain(model, FunctionState.STALLED, env) + motor_drain(model, FunctionState.STALLED, env)
    return max(0.0, p["qth"] * env.speed_ratio - leaks)


def stall_reading(machine: Machine, model: CircuitModel, side: str, env: Env) -> float:
    """High-port gauge with the drive stalled: the cross-port relief is a differential valve
    discharging into the low side, so the gauge reads low side (charge) + differential + the
    override for the flow it passes. Whatever the profile's convention, the valve works this way;
    the convention only says how its figure was stated."""
    p = model.p
    low_side = charge_pressure(machine, model, FunctionState.STALLED, env)
    return low_side + p[side] + p["hp_slope"] * stall_flow(model, env)


def build_closed_loop(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
    rated = machine.rated_rpm
    disp = param(circuit, "pump_displacement") or 50.0
    charge_disp = param(circuit, "charge_pump_displacement") or CHARGE_SHARE * disp
    charge_pt = point(circuit, Role.CHARGE_PRESSURE)
    charge = (
        param(circuit, "charge_relief_setting") or middle(*bounds(charge_pt, FunctionState.NEUTRAL)) or 22.0
    )
    flushing = param(circuit, "flushing_relief_setting")
    hp = param(circuit, "high_pressure_relief_setting")
    convention = circuit.cross_port_relief_convention
    if hp is None:  # no figure: the stall range is what the gauge reads
        hp = middle(*bounds(point(circuit, Role.LOOP_A_PRESSURE), FunctionState.STALLED)) or 350.0
        convention = "gauge"
    q0 = charge_disp * rated / 1000.0
    qth = disp * rated / 1000.0
    # The low side at a stall: the lower of the charge and flushing reliefs (net of case).
    low_side = min(charge, flushing) if flushing else charge
    slope = DEFAULT_OVERRIDE_SHARE * hp / qth  # bar per L/min over the cross-port relief
    # A figure stated as the gauge reading at a stall already holds the low side and the override;
    # the valve itself is a differential one, so take them off to get its differential.
    differential = hp if convention == "differential" else hp - low_side - slope * qth
    model = CircuitModel(circuit, {})
    p = model.p
    p.update(
        charge_disp=charge_disp,
        charge_q0=q0,
        charge_fill=1.0,
        charge_relief=draw(charge, SETTING_SCATTER),
        hp_a=draw(differential, SETTING_SCATTER),
        hp_b=draw(differential, SETTING_SCATTER),
        hp_slope=slope,
        low_side=low_side,
        p_ref=differential + low_side,
        case_extra=0.0,
        inlet_restrict=1.0,
    )
    if flushing:
        p["flushing_relief"] = draw(flushing, SETTING_SCATTER)
    p["qth"] = qth
    mu_ref = machine.mu_ref
    # The charge pump slips (1 − ηv) of its flow at its relief setting, back to its own inlet.
    gap_path(p, "charge", draw((1 - CHARGE_EFFICIENCY) * q0, LEAKAGE_SCATTER), charge, mu_ref)
    pump = param(circuit, "case_drain_baseline")
    if pump is None:
        high = bounds(point(circuit, Role.PUMP_CASE_DRAIN_FLOW), FunctionState.STALLED)[1]
        pump = 0.45 * high if high is not None else 0.02 * qth
    high = bounds(point(circuit, Role.MOTOR_CASE_DRAIN_FLOW), FunctionState.STALLED)[1]
    motor = 0.45 * high if high is not None else pump
    p["pump_drain"] = draw(pump, LEAKAGE_SCATTER)
    p["motor_drain"] = draw(motor, LEAKAGE_SCATTER)
    max_case = param(circuit, "max_case_pressure") or any_bounds(point(circuit, Role.CASE_PRESSURE))[1] or 2.0
    # The most oil passes the pump case in neutral, where the charge relief sends the charge flow through it.
    p["drain_static"], p["drain_r"] = drain_line(max_case, CHARGE_EFFICIENCY * q0, draw)
    # Case drain figures are stated at a stall and the reference temperature: size the gaps there.
    stall_dp = p["p_ref"] - p["drain_static"]
    gap_path(p, "pump", p["pump_drain"], stall_dp, mu_ref)
    gap_path(p, "motor", p["motor_drain"], stall_dp, mu_ref)
    p["drain_r0"] = p["drain_r"]
    p["ret_share"] = draw(RETURN_SHARE, RESTRICTION_SCATTER)
    p["idle_rpm"] = param(circuit, "low_idle_speed") or IDLE_SHARE * rated
    floor = any_bounds(point(circuit, Role.SUCTION_PRESSURE))[0]
    vacuum = 0.4 * abs(floor) if floor is not None else 0.06
    p["inlet_turb"] = draw(vacuum / 2, RESTRICTION_SCATTER)
    p["inlet_lam"] = draw(vacuum / 2, RESTRICTION_SCATTER)
    filt = middle(*any_bounds(point(circuit, Role.FILTER_PRESSURE_DROP)))
    p["cfilter"] = draw(filt if filt is not None else 0.3, RESTRICTION_SCATTER)
    return model


# --- motor in an open circuit --------------------------------------------------------------


def _supply_back(machine: Machine, env: Env) -> float:
    feed = machine.first(
        CircuitKind.OPEN_FIXED_PUMP, CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED
    )
    return 0.0 if feed is None else return_back(feed, env)


def motor(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    role = tp.role
    p = model.p
    moving = state in (FunctionState.FULL_STROKE, FunctionState.UNDER_LOAD)
    outlet = p["line_loss"] + _supply_back(machine, env)
    load = p["load_dp"] if state is FunctionState.UNDER_LOAD else 0.5 * p["load_dp"]
    drain = gap_leak(p, "motor", load, env)
    if role is Role.LOOP_B_PRESSURE and moving:
        return outlet
    if role is Role.LOOP_A_PRESSURE and moving:
        return outlet + load
    if role is Role.MOTOR_CASE_DRAIN_FLOW and moving:
        return drain
    if role is Role.CASE_PRESSURE:
        return p["drain_static"] + p["drain_r"] * (drain if moving else 0.0) + p["case_extra"]
    return None


def build_motor(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
    model = CircuitModel(circuit, {})
    p = model.p
    nominal_env = machine.env(machine.reference_c)
    back = _supply_back(machine, nominal_env)
    outlet_mid = middle(*bounds(point(circuit, Role.LOOP_B_PRESSURE), FunctionState.UNDER_LOAD))
    line = max(0.5, (outlet_mid if outlet_mid is not None else back + 1.0) - back)
    p["line_loss"] = draw(min(line, 1.0), RESTRICTION_SCATTER)
    inlet_mid = middle(*bounds(point(circuit, Role.LOOP_A_PRESSURE), FunctionState.UNDER_LOAD))
    load = (inlet_mid - back - p["line_loss"]) if inlet_mid is not None else 100.0
    p["dp_ref"] = max(load, 10.0)
    p["load_dp"] = draw(p["dp_ref"], LOAD_SCATTER)
    drain = param(circuit, "case_drain_baseline")
    if drain is None:
        high = bounds(point(circuit, Role.MOTOR_CASE_DRAIN_FLOW), FunctionState.UNDER_LOAD)[1]
        drain = 0.45 * high if high is not None else 0.5
    p["drain"] = draw(drain, LEAKAGE_SCATTER)
    max_case = param(circuit, "max_case_pressure") or any_bounds(point(circuit, Role.CASE_PRESSURE))[1] or 2.0
    p["drain_static"], p["drain_r"] = drain_line(max_case, p["drain"], draw)
    # The drain figure holds at the working load across the motor and the reference temperature.
    gap_path(p, "motor", p["drain"], p["dp_ref"], machine.mu_ref)
    p["case_extra"] = 0.0
    return model


# --- brake release --------------------------------------------------------------------------


def brake_supply(machine: Machine, model: CircuitModel, state: FunctionState, env: Env) -> float | None:
    """Pressure feeding the brake valve: its own supply figure, else the charge gallery of a
    closed loop on the same machine, else a pilot supply."""
    if "supply" in model.p:
        return model.p["supply"]
    loop = machine.first(CircuitKind.CLOSED_LOOP_DRIVE)
    if loop is not None:
        return charge_pressure(machine, loop, state, env)
    pilot = machine.first(CircuitKind.PILOT_SUPPLY)
    if pilot is not None:
        return pilot.p["pilot"] - (1.0 if state is not FunctionState.NEUTRAL else 0.0)
    return None


def brake_release(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    p = model.p
    supply = brake_supply(machine, model, state, env)
    if tp.role is Role.PILOT_PRESSURE:
        return supply
    if tp.role is Role.BRAKE_RELEASE_PRESSURE:
        if state is FunctionState.NEUTRAL:
            return p["vent"]
        if supply is None:
            return None
        after_valve = max(0.0, supply - p["valve_drop"])
        return after_valve * (1.0 - p["loss"])
    return None


def build_brake(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
    model = CircuitModel(circuit, {})
    p = model.p
    p.update(valve_drop=draw(0.5, RESTRICTION_SCATTER), loss=0.0, leak=0.0, vent=draw(0.2, LOAD_SCATTER))
    supply_pt = point(circuit, Role.PILOT_PRESSURE)
    if supply_pt is not None:
        mid = middle(*any_bounds(supply_pt))
        if mid is not None:
            p["supply"] = draw(mid, SETTING_SCATTER)
    return model


__all__ = [
    "brake_release",
    "build_brake",
    "build_closed_loop",
    "build_motor",
    "charge_pressure",
    "closed_loop",
    "motor",
]
