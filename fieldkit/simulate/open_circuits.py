"""Open circuits: fixed pump with reliefs, load-sensing pump, pressure-compensated pump.

Parameters a circuit model carries (``CircuitModel.p``), canonical units:

* ``disp`` pump displacement (cc/rev); ``qr`` flow at rated speed and no load (L/min);
  ``fill`` share of the displacement a fixed pump delivers at no load;
* ``leak`` internal leakage (L/min) of the sound pump at ``p_test`` and the reference oil
  temperature; it is turned into a leakage gap (``pump_gap`` µm, ``pump_slot`` width over
  length) that passes Q = w·h³·Δp / (12·μ·L) from the outlet to ``leak_back`` (the inlet of a
  gear pump, the case of a piston pump): a worn pump is one whose gap has opened;
* ``ret_turb`` / ``ret_lam`` return line drop at ``qr`` (bar): the turbulent part (cooler,
  hoses: ∝ Q², orifice law) and the laminar part (filter element: ∝ Q · ν); ``ret_restrict``
  multiplies the turbulent part (a blocked or undersized line);
* ``suc_turb`` / ``suc_lam`` / ``suc_restrict`` the same for the pump inlet (bar of vacuum);
* ``centre_dp`` open-centre passage drop at ``qr`` (fixed pump, in neutral);
* ``spool_leak`` leakage past a centred section spool, relative to a sound one: drift of a
  loaded function scales with it (fixed pump);
* ``drain`` case drain flow (L/min) of the sound pump at ``p_test``, the reference temperature (a
  piston pump's internal leakage leaves by its case drain, so it is the same gap); ``drain_static``
  and ``drain_r`` what the case reads for it (bar, bar per L/min), ``case_extra`` back pressure
  added downstream of the case drain;
* steering behind a priority valve (load sensing): ``steer_relief``, ``steer_standby`` (CF line
  with the wheel at rest), ``cf_flow`` (priority flow the steering asks for);
* load sensing: ``standby``, ``margin``, ``cutoff``, ``ls_vent`` (signal in neutral),
  ``load_p`` (work port pressure with a function moving), ``ls_ratio`` (signal over work port
  pressure: 1 when the signal line holds); pressure compensated: ``cutoff``.

A work-port stall point that names its port relief (``TestPoint.relief``) reads the circuit's
reliefs with that port relief joined in parallel with the main one: the lower governs, so a port
relief set above the main relief never shows at its port.

Reliefs are arranged by the profile's ``relief_layout`` and solved with the simulator's own
valves (:mod:`fieldkit.simulate.hydraulics`): each cracks at its setting and rises with the flow
it passes, so the stall pressure depends on what the pump actually delivers.
"""

from __future__ import annotations

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, CircuitKind, ReliefLayout, TestPoint
from fieldkit.model.roles import Role
from fieldkit.simulate.constants import (
    DEEPEST_VACUUM_BAR,
    LEAKAGE_SCATTER,
    LOAD_SCATTER,
    LOAD_SHARE,
    RESTRICTION_SCATTER,
    SETTING_SCATTER,
)
from fieldkit.simulate.hydraulics import DEFAULT_OVERRIDE_SHARE, Network, Valve, network_inlet
from fieldkit.simulate.machine import (
    CircuitModel,
    Draw,
    Env,
    Machine,
    ReliefState,
    any_bounds,
    bounds,
    drain_line,
    gap_leak,
    gap_path,
    middle,
    param,
    point,
    typical,
)
from fieldkit.units import Kind, to_canonical

#: A pump starts to lose fill when its inlet vacuum passes about a quarter of a bar (air and
#: vapour come out of the oil) and loses about a tenth of its fill per further 0.1 bar:
#: the simulator's own simple model, not a published curve.
CAVITATION_ONSET_BAR = 0.25
#: The loading valve pressure of a flow test, as a share of the main relief (common practice:
#: load the pump well up, below the relief so no oil bypasses).
FLOW_TEST_SHARE = 0.8


def cavitation_fill(vacuum_bar: float) -> float:
    """Share of the displacement a pump still fills at this inlet vacuum."""
    return max(0.3, 1.0 - max(0.0, vacuum_bar - CAVITATION_ONSET_BAR))


# --- reliefs -------------------------------------------------------------------------------


def main_relief_id(model: CircuitModel) -> str | None:
    """The main relief: one named 'main', else the one set at the main_relief_setting figure,
    else the first one in the layout."""
    if not model.reliefs:
        return None
    if "main" in model.reliefs:
        return "main"
    figure = param(model.circuit, "main_relief_setting")
    if figure is not None:
        for rid, r in model.reliefs.items():
            if abs(r.setting - figure) < 0.5:
                return rid
    layout = model.circuit.relief_layout
    return layout.relief_ids()[0] if layout is not None else next(iter(model.reliefs))


def relief_valves(model: CircuitModel) -> dict[str, Valve]:
    """This machine's reliefs as the simulator's own valves: cracking at the drawn setting, rising
    by the profile's override at the pump's rated flow (or the simulator's default share when the
    profile states none)."""
    qr = max(model.p["qr"], 1e-6)
    return {
        rid: Valve(
            r.setting,
            (r.override if r.override > 0 else DEFAULT_OVERRIDE_SHARE * r.setting) / qr,
            r.drain == "external",
        )
        for rid, r in model.reliefs.items()
    }


def relief_network(model: CircuitModel, also: tuple[str, ...] = ()) -> Network | None:
    """The reliefs in circuit as laid out by the profile, plus any relief wrongly joined in
    parallel with the main one; without a layout one relief stands alone and several share the
    flow in parallel. ``also`` joins more reliefs in parallel with the main one: a work port's
    own port relief while that port is stalled (the lower of the two governs)."""
    if not model.reliefs:
        return None
    extra = [rid for rid in (*model.parallel_extra, *also) if rid in model.reliefs]
    main = main_relief_id(model)

    def build(node: str | ReliefLayout, inside_parallel: bool) -> Network:
        if isinstance(node, str):
            return ("parallel", [node, *extra]) if node == main and extra and not inside_parallel else node
        is_parallel = bool(node.parallel)
        items = [build(m, is_parallel) for m in node.members()]
        if is_parallel and main in node.members():
            items.extend(extra)
        return ("parallel" if is_parallel else "series", items)

    layout = model.circuit.relief_layout
    if layout is not None:
        return build(layout, False)
    in_circuit = [rid for rid in model.reliefs if rid not in extra]
    if len(in_circuit) == 1:
        return build(in_circuit[0], False)
    return ("parallel", list(model.reliefs))


def downstream(model: CircuitModel, flow: float, return_bar: float) -> float:
    """Pressure all return flow must pass before tank: valves after the first item of a series
    layout (a return check, a back-pressure valve), passing ``flow``, on top of the return line's
    own drop."""
    net = relief_network(model)
    if not isinstance(net, tuple) or net[0] != "series" or len(net[1]) < 2:
        return return_bar
    return network_inlet(("series", net[1][1:]), relief_valves(model), flow, return_bar)


def relief_pressure(
    model: CircuitModel, flow: float, return_bar: float, also: tuple[str, ...] = ()
) -> float | None:
    """Pump-side pressure with ``flow`` passing over the reliefs and ``return_bar`` behind them
    (``also``: reliefs joined in parallel with the main one, see :func:`relief_network`)."""
    net = relief_network(model, also)
    if net is None:
        return None
    return network_inlet(net, relief_valves(model), flow, return_bar)


# --- flows and line losses -------------------------------------------------------------------


def intake(model: CircuitModel, env: Env) -> float:
    """Oil the pump draws at full displacement (L/min)."""
    return model.p["qth"] * env.speed_ratio


def inlet_vacuum(model: CircuitModel, flow: float, env: Env) -> float:
    x = flow / model.p["qr"]
    p = model.p
    return (p["suc_turb"] * x * x + p["suc_lam"] * x * env.mu_ratio) * p["suc_restrict"]


def leakage(model: CircuitModel, pressure: float, env: Env) -> float:
    """Oil slipping back inside the pump through its running clearances (laminar gap law), from
    the outlet to the low side: the inlet of a gear pump, the case of a piston pump."""
    return gap_leak(model.p, "pump", pressure - model.p["leak_back"], env)


def max_delivery(model: CircuitModel, pressure: float, env: Env) -> float:
    """What the pump delivers at full displacement against a pressure: what it fills less what
    leaks back inside it."""
    drawn = intake(model, env)
    fill = model.p["fill"] * cavitation_fill(inlet_vacuum(model, drawn, env))
    return max(0.0, drawn * fill - leakage(model, pressure, env))


def return_drop(model: CircuitModel, flow: float, env: Env) -> float:
    x = flow / model.p["qr"]
    p = model.p
    return p["ret_turb"] * p["ret_restrict"] * x * x + p["ret_lam"] * x * env.mu_ratio


def filter_drop(model: CircuitModel, flow: float, env: Env) -> float:
    return model.p["ret_lam"] * flow / model.p["qr"] * env.mu_ratio


def drain_flow(model: CircuitModel, pressure: float, env: Env) -> float:
    """Case drain of a piston pump: what leaks inside it leaves by the case (a gear pump has none)."""
    return 0.0 if model.kind is CircuitKind.OPEN_FIXED_PUMP else leakage(model, pressure, env)


def case_pressure(model: CircuitModel, drain: float) -> float:
    p = model.p
    return p["drain_static"] + p["drain_r"] * drain + p["case_extra"]


# --- operating points ------------------------------------------------------------------------


def _fixed_stall(model: CircuitModel, env: Env, also: tuple[str, ...] = ()) -> tuple[float, float] | None:
    """Stall pressure and the flow going over the reliefs (``also``: a stalled work port's own
    port relief, in parallel with the main one)."""
    main = main_relief_id(model)
    pressure: float | None = model.reliefs[main].setting if main else 0.0
    flow = 0.0
    # The flow over the reliefs sets their override, and the pressure sets the pump's leakage:
    # a few rounds settle both (leakage is a few per cent of the flow, so it converges fast).
    for _ in range(4):
        assert pressure is not None
        flow = max_delivery(model, pressure, env)
        pressure = relief_pressure(model, flow, return_drop(model, flow, env), also)
        if pressure is None:
            return None
    assert pressure is not None
    return pressure, flow


def own_limit(model: CircuitModel) -> float:
    """Where a variable pump settles against a dead end with no relief in play (the relief
    screwed in, or the pump deadheaded on a test gauge): its cut-off, or lower where a leaking
    LS signal lets it settle where signal + margin meets the work port pressure:
    p = margin / (1 − ratio)."""
    p = model.p
    limit = p["cutoff"]
    ratio = p.get("ls_ratio", 1.0)
    if ratio < 1.0:
        limit = min(limit, p["margin"] / (1.0 - ratio))
    return limit


def _variable_limit(model: CircuitModel, env: Env) -> tuple[float, bool]:
    """Highest pressure a variable pump reaches with a function stalled, and whether a relief
    (not the pump's own cut-off or signal) sets it. A relief below the cut-off passes the
    pump's whole flow."""
    limit = own_limit(model)
    full = max_delivery(model, limit, env)
    relief = relief_pressure(model, full, return_drop(model, full, env))
    if relief is not None and relief < limit:
        return relief, True
    return limit, False


def _variable_pressure(model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Pump outlet pressure of a variable pump in a state."""
    p = model.p
    if state is FunctionState.STALLED:
        return _variable_limit(model, env)[0]
    if state is FunctionState.NEUTRAL:  # LS: standby; compensated: it holds its cut-off
        return p["standby"] if "standby" in p else _variable_limit(model, env)[0]
    if model.kind is CircuitKind.LOAD_SENSING:
        return min(p["load_p"] * p["ls_ratio"] + _margin(model, env), _variable_limit(model, env)[0])
    return p["load_p"]


def _demand(model: CircuitModel, env: Env) -> float:
    """Flow a function at full lever asks for: the rated flow, at this engine speed."""
    return model.p["qr"] * env.speed_ratio


def _margin(model: CircuitModel, env: Env) -> float:
    """Margin a load-sensing pump holds with a function at full lever. The spool is an orifice
    sized for the rated flow at the margin setting; a pump that cannot deliver that flow (worn,
    starved) passes less, and by the orifice law the drop across the spool falls with the
    square of the flow."""
    p = model.p
    delivered = max_delivery(model, p["load_p"] + p["margin"], env)
    share = min(1.0, delivered / _demand(model, env))
    return p["margin"] * share * share


def _variable_flow(model: CircuitModel, state: FunctionState, env: Env) -> float:
    """Flow through the valve and back to tank: a small trickle in neutral and at a stall the
    pump's own cut-off holds, the pump's full delivery with a function moving or a relief open."""
    pressure = _variable_pressure(model, state, env)
    if state is FunctionState.NEUTRAL:
        return 0.02 * model.p["qr"]
    if state is FunctionState.STALLED and not _variable_limit(model, env)[1]:
        return 0.02 * model.p["qr"]
    return min(max_delivery(model, pressure, env), _demand(model, env))


def _shared(model: CircuitModel, role: Role, flow: float, env: Env) -> float | None:
    if role is Role.RETURN_PRESSURE:
        return return_drop(model, flow, env)
    if role is Role.FILTER_PRESSURE_DROP:
        return filter_drop(model, flow, env)
    if role is Role.SUCTION_PRESSURE:
        return -min(
            inlet_vacuum(
                model, intake(model, env) if model.kind is CircuitKind.OPEN_FIXED_PUMP else flow, env
            ),
            DEEPEST_VACUUM_BAR,
        )
    return None


def fixed_pump(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    role = tp.role
    p = model.p
    if role is Role.CYLINDER_DRIFT:
        # A loaded function with its spool centred: oil slips past the spool lands to tank, so the
        # drift scales with the spool's leakage (the healthy drift is the middle of the range).
        drift = typical(tp, state)
        return None if drift is None else drift * model.typical.get(tp.id, 1.0) * p["spool_leak"]
    if state is FunctionState.STALLED:
        port = (tp.relief,) if role is Role.WORK_PORT_STALL_PRESSURE and tp.relief else ()
        stall = _fixed_stall(model, env, port)
        if stall is None:
            return None
        pressure, flow = stall
        if role in (Role.STALL_PRESSURE, Role.PUMP_OUTLET_PRESSURE, Role.WORK_PORT_STALL_PRESSURE):
            return pressure
        return _shared(model, role, flow, env)
    if state is FunctionState.UNDER_LOAD and role is Role.PUMP_FLOW:
        return max_delivery(model, p["p_test"], env)
    load = {
        FunctionState.NEUTRAL: 0.0,
        FunctionState.FULL_STROKE: LOAD_SHARE * p["p_test"],
        FunctionState.UNDER_LOAD: p["p_test"],
    }[state]
    flow = max_delivery(model, load, env)
    if role is Role.PUMP_FLOW:
        return flow
    if role is Role.PUMP_OUTLET_PRESSURE and state is FunctionState.NEUTRAL:
        x = flow / p["qr"]
        return p["centre_dp"] * x * x + downstream(model, flow, return_drop(model, flow, env))
    return _shared(model, role, flow, env)


def variable_pump(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    role = tp.role
    p = model.p
    if role in _STEERING_ROLES:
        return _steering(model, role, state, env)
    pressure = _variable_pressure(model, state, env)
    if role is Role.LS_STANDBY_PRESSURE:
        return p["standby"] if state is FunctionState.NEUTRAL else None
    if role is Role.LS_SIGNAL_PRESSURE:
        if state is FunctionState.NEUTRAL:
            return p["ls_vent"]
        if state is FunctionState.STALLED:
            return pressure * p["ls_ratio"]
        return p["load_p"] * p["ls_ratio"]
    if role is Role.PUMP_OUTLET_PRESSURE:
        return pressure
    if role is Role.STALL_PRESSURE:
        return pressure if state is FunctionState.STALLED else None
    if role is Role.PUMP_PRESSURE_RELIEF_ISOLATED:
        return own_limit(model) if state is FunctionState.STALLED else None
    if role is Role.PUMP_CASE_DRAIN_FLOW:
        return drain_flow(model, pressure, env)
    if role is Role.CASE_PRESSURE:
        return case_pressure(model, drain_flow(model, pressure, env))
    if role is Role.PUMP_FLOW:
        return max_delivery(model, pressure, env) if state is not FunctionState.NEUTRAL else 0.02 * p["qr"]
    return _shared(model, role, _variable_flow(model, state, env), env)


_STEERING_ROLES = (Role.STEERING_STANDBY_PRESSURE, Role.STEERING_RELIEF_PRESSURE, Role.STEERING_FLOW)


def _steering(model: CircuitModel, role: Role, state: FunctionState, env: Env) -> float | None:
    """Steering fed first through a priority valve. With the wheel at rest the priority spring
    holds the CF line at its standby; held against its stop the steering reads its relief, or
    the pump's own limit where that is lower (a steering relief at or above the cut-off never
    opens); turning, the priority valve passes the steering its flow while the pump can give it."""
    p = model.p
    if role is Role.STEERING_STANDBY_PRESSURE:
        return p["steer_standby"] if state is FunctionState.NEUTRAL else None
    if role is Role.STEERING_RELIEF_PRESSURE:
        return min(p["steer_relief"], own_limit(model)) if state is FunctionState.STALLED else None
    if state is FunctionState.NEUTRAL:
        return 0.0
    return min(p["cf_flow"], max_delivery(model, p["load_p"], env))


def stall_pressure(model: CircuitModel, env: Env) -> float | None:
    """Pressure a stalled function in this circuit reads (for actuators fed from it)."""
    if model.kind is CircuitKind.OPEN_FIXED_PUMP:
        stall = _fixed_stall(model, env)
        return None if stall is None else stall[0]
    return _variable_limit(model, env)[0]


def return_back(model: CircuitModel, env: Env) -> float:
    """Back pressure a motor or actuator outlet sees in this circuit's return with a function
    working: the downstream valves plus the return line at working flow."""
    if model.kind is CircuitKind.OPEN_FIXED_PUMP:
        flow = max_delivery(model, LOAD_SHARE * model.p["p_test"], env)
    else:
        flow = _variable_flow(model, FunctionState.FULL_STROKE, env)
    return downstream(model, flow, return_drop(model, flow, env))


# --- healthy parameters ------------------------------------------------------------------------


def _reliefs(circuit: Circuit, draw: Draw) -> dict[str, ReliefState]:
    """Each relief as built: its drawn setting, and its override at rated flow, the profile's or the
    simulator's own share of the setting. The override belongs to the valve's spring and flow
    forces, so a fault that moves the setting later leaves it as it is."""
    out = {}
    for r in circuit.reliefs:
        setting = to_canonical(r.setting, Kind.PRESSURE)
        override = (
            to_canonical(r.override, Kind.PRESSURE)
            if r.override is not None
            else DEFAULT_OVERRIDE_SHARE * setting
        )
        out[r.id] = ReliefState(draw(setting, SETTING_SCATTER), override, r.drain)
    return out


def build_open(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
    """Healthy parameters of an open circuit from its profile figures and expected ranges."""
    kind = circuit.kind
    fixed = kind is CircuitKind.OPEN_FIXED_PUMP
    rated = machine.rated_rpm
    disp = param(circuit, "pump_displacement")
    rated_flow = param(circuit, "rated_flow")
    if disp is None:
        disp = (rated_flow if rated_flow is not None else 100.0) / rated * 1000.0 / 0.95
    qth = disp * rated / 1000.0
    qr = rated_flow if rated_flow is not None else (0.95 if fixed else 1.0) * qth
    model = CircuitModel(circuit, {}, _reliefs(circuit, draw))
    p = model.p
    p.update(
        disp=disp,
        qth=qth,
        qr=qr,
        fill=min(1.0, qr / qth) if fixed else 1.0,
        ret_restrict=1.0,
        suc_restrict=1.0,
        case_extra=0.0,
        ls_ratio=1.0,
        spool_leak=1.0,
    )
    main = main_relief_id(model)
    main_setting = model.reliefs[main].setting if main else param(circuit, "main_relief_setting")

    # Settings of a variable pump; the flow test pressure of a fixed one.
    cutoff = param(circuit, "compensator_setting") or middle(
        *bounds(point(circuit, Role.STALL_PRESSURE), FunctionState.STALLED)
    )
    if not fixed:
        p["cutoff"] = draw(cutoff if cutoff else (main_setting or 200.0), SETTING_SCATTER)
    if kind is CircuitKind.LOAD_SENSING:
        standby = (
            param(circuit, "ls_standby_setting")
            or middle(*bounds(point(circuit, Role.LS_STANDBY_PRESSURE), FunctionState.NEUTRAL))
            or 25.0
        )
        margin = param(circuit, "ls_margin_setting") or max(10.0, standby - 4.0)
        shift = draw(1.0, SETTING_SCATTER * 2) - 1.0  # one spring sets both
        p.update(standby=standby * (1 + shift), margin=margin * (1 + shift), ls_vent=draw(0.3, LOAD_SCATTER))
    if point(circuit, Role.STEERING_RELIEF_PRESSURE) or point(circuit, Role.STEERING_FLOW):
        # Steering behind a priority valve: its relief, the priority spring's standby, the CF flow.
        steer = param(circuit, "steering_relief_setting") or middle(
            *bounds(point(circuit, Role.STEERING_RELIEF_PRESSURE), FunctionState.STALLED)
        )
        p["steer_relief"] = draw(steer or 0.7 * p["cutoff"], SETTING_SCATTER)
        cf_standby = param(circuit, "steering_standby_setting") or middle(
            *bounds(point(circuit, Role.STEERING_STANDBY_PRESSURE), FunctionState.NEUTRAL)
        )
        p["steer_standby"] = draw(cf_standby or 7.0, SETTING_SCATTER)
        cf = param(circuit, "priority_flow") or middle(
            *bounds(point(circuit, Role.STEERING_FLOW), FunctionState.UNDER_LOAD)
        )
        p["cf_flow"] = draw(cf or 0.3 * qr, LOAD_SCATTER)
    if fixed:
        p["p_test"] = round(FLOW_TEST_SHARE * (main_setting or 150.0) / 10.0) * 10.0
        low, high = bounds(point(circuit, Role.PUMP_FLOW), FunctionState.UNDER_LOAD)
        mid = middle(low, high)
        leak = qr - mid if mid is not None and qr - mid > 0.01 * qr else 0.03 * qr
        p["leak"] = draw(leak, LEAKAGE_SCATTER)
        p["drain"] = 0.0
    else:
        p["p_test"] = p["cutoff"]
        drain = param(circuit, "case_drain_baseline")
        if drain is None:
            high = bounds(point(circuit, Role.PUMP_CASE_DRAIN_FLOW), FunctionState.STALLED)[1]
            drain = 0.4 * high if high is not None else 0.02 * qr
        p["drain"] = draw(drain, LEAKAGE_SCATTER)
        p["leak"] = p["drain"]  # what leaks inside a piston pump leaves by its case drain
    p["load_p"] = draw(LOAD_SHARE * (p.get("cutoff") or main_setting or 150.0), LOAD_SCATTER)

    max_case = param(circuit, "max_case_pressure") or any_bounds(point(circuit, Role.CASE_PRESSURE))[1] or 2.0
    p["drain_static"], p["drain_r"] = drain_line(max_case, max(p["drain"], 0.1), draw)
    # The pump's leakage figure at its test pressure and the reference temperature becomes a gap:
    # a gear pump leaks to its inlet (about tank pressure), a piston pump to its case.
    p["leak_back"] = 0.0 if fixed else p["drain_static"]
    gap_path(p, "pump", p["leak"], p["p_test"] - p["leak_back"], machine.mu_ref)

    # Return line and filter, inlet: half of what the profile allows on a sound machine.
    total = middle(*any_bounds(point(circuit, Role.RETURN_PRESSURE)))
    if total is None:
        figure = param(circuit, "return_back_pressure_max")
        total = 0.5 * figure if figure is not None else 1.5
    filt = middle(*any_bounds(point(circuit, Role.FILTER_PRESSURE_DROP)))
    lam = min(filt if filt is not None else 0.4 * total, 0.8 * total)
    p["ret_lam"] = draw(lam, RESTRICTION_SCATTER)
    p["ret_turb"] = draw(total - lam, RESTRICTION_SCATTER)
    floor = any_bounds(point(circuit, Role.SUCTION_PRESSURE))[0]
    if floor is None:
        floor = param(circuit, "min_suction_pressure")
    vacuum = 0.35 * abs(floor) if floor is not None else 0.05
    p["suc_turb"] = draw(vacuum / 2, RESTRICTION_SCATTER)
    p["suc_lam"] = draw(vacuum / 2, RESTRICTION_SCATTER)
    if fixed:
        neutral = middle(*bounds(point(circuit, Role.PUMP_OUTLET_PRESSURE), FunctionState.NEUTRAL))
        back = downstream(model, qr, p["ret_turb"] + p["ret_lam"])
        p["centre_dp"] = draw(
            max(0.5, (neutral if neutral is not None else back + 3.0) - back), RESTRICTION_SCATTER
        )
    return model


__all__ = [
    "build_open",
    "cavitation_fill",
    "fixed_pump",
    "main_relief_id",
    "relief_pressure",
    "relief_network",
    "relief_valves",
    "return_back",
    "stall_pressure",
    "variable_pump",
]
