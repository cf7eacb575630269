"""The faults the simulator can inject: each one a change of physical parameters, scaled by severity.

One entry per catalogued fault id (the ids are the catalogue's; the physical models are the
simulator's own). Severity 1 is a fault a technician would clearly call; 0.5 half as far from
healthy; the numbers that scale with it are the simulator's own choices, picked so that a
severity-1 fault moves its readings well past the maker's range on the demo machines. Every
change function says in its docstring what breaks and how it shows, and returns one line saying
what it changed on this machine.

A fault names the circuit kinds it can be injected into; whether it actually shows on a given
profile (a test point reads differently by more than its gauge's limit of error) is decided by
:mod:`fieldkit.simulate.simulator`, which skips those that cannot.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from random import Random

from fieldkit.model.profile import CircuitKind
from fieldkit.simulate.machine import CircuitModel, Machine, ReliefState, param, widen
from fieldkit.simulate.open_circuits import main_relief_id
from fieldkit.units import Kind, to_canonical

Change = Callable[[Machine, "CircuitModel | None", float, Random], str]

OPEN = (CircuitKind.OPEN_FIXED_PUMP, CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED)
VARIABLE = (CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED)
LOOP = (CircuitKind.CLOSED_LOOP_DRIVE,)


@dataclass(frozen=True)
class FaultModel:
    id: str
    #: Circuit kinds the change is made in; empty for a fault of the whole visit.
    kinds: tuple[CircuitKind, ...]
    change: Change

    @property
    def machine_wide(self) -> bool:
        return not self.kinds

    @property
    def description(self) -> str:
        return " ".join((self.change.__doc__ or "").split())


FAULTS: dict[str, FaultModel] = {}


def fault(fault_id: str, *kinds: CircuitKind) -> Callable[[Change], Change]:
    def register(change: Change) -> Change:
        FAULTS[fault_id] = FaultModel(fault_id, tuple(kinds), change)
        return change

    return register


def _bar(x: float) -> str:
    return f"{x:.1f} bar"


# --- closed loop ------------------------------------------------------------------------------


@fault("charge_pump_worn", *LOOP)
def charge_pump_worn(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Worn gerotor or gear set: its tip and side clearances have opened, so oil slips back
    inside the charge pump in proportion to the pressure it works against (slip × (1 + 12·s), the gap
    opening by the cube root of that)
    and it fills a little less (−10 %·s). Charge sags wherever the loop asks most of it."""
    assert c is not None
    growth = widen(c.p, "charge", 1.0 + 12.0 * s)
    c.p["charge_fill"] *= 1.0 - 0.1 * s
    return f"charge pump clearances × {growth:.2f} (slip × {1 + 12 * s:.1f}), fill −{10 * s:.0f} %"


@fault("charge_relief_low", *LOOP)
def charge_relief_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Charge relief shimmed short or held open by dirt: it opens 35 %·s below its setting, so
    charge is low in neutral, and in stroke too once it is below the flushing relief."""
    assert c is not None
    before = c.p["charge_relief"]
    c.p["charge_relief"] = before * (1.0 - 0.35 * s)
    return f"charge relief opens at {_bar(c.p['charge_relief'])} instead of {_bar(before)}"


@fault("charge_suction_restricted", *LOOP)
def charge_suction_restricted(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Blocked charge strainer or collapsed suction hose: the inlet restriction grows (× (1 + 8·s)),
    the charge inlet pulls a deep vacuum and, past about a quarter bar, the charge pump no longer fills."""
    assert c is not None
    c.p["inlet_restrict"] *= 1.0 + 8.0 * s
    return f"charge inlet restriction × {1 + 8 * s:.1f}"


@fault("flushing_valve_fault", *LOOP)
def flushing_valve_fault(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Flushing spool stuck with its relief backed off: the flushing path opens 45 %·s below its
    setting, so in stroke it pulls charge down with it; neutral (spool centred) is untouched."""
    assert c is not None
    before = c.p.get("flushing_relief", c.p["charge_relief"] * 0.8)
    c.p["flushing_relief"] = before * (1.0 - 0.45 * s)
    return f"flushing relief opens at {_bar(c.p['flushing_relief'])} instead of {_bar(before)}"


@fault("hp_relief_low", *LOOP)
def hp_relief_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """One cross-port relief (A or B, drawn from the seed) has a weak spring or a marked seat and
    opens 15 %·s early: that direction stalls low."""
    assert c is not None
    side = rng.choice(("hp_a", "hp_b"))
    before = c.p[side]
    c.p[side] = before * (1.0 - 0.15 * s)
    return f"loop {side[-1].upper()} cross-port relief opens at {_bar(c.p[side])} instead of {_bar(before)}"


@fault("hp_relief_high", *LOOP)
def hp_relief_high(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """One cross-port relief (A or B, drawn from the seed) has had its adjuster turned in: it
    opens 10 %·s above its setting, so that direction stalls high."""
    assert c is not None
    side = rng.choice(("hp_a", "hp_b"))
    before = c.p[side]
    c.p[side] = before * (1.0 + 0.10 * s)
    return f"loop {side[-1].upper()} cross-port relief opens at {_bar(c.p[side])} instead of {_bar(before)}"


# --- pumps and motors -------------------------------------------------------------------------


@fault("pump_worn", *OPEN, *LOOP)
def pump_worn(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Scored valve plate, worn pistons or gear side plates: extra internal leakage of 10 %·s of
    the pump's theoretical flow at its test pressure (field notes: a worn piston pump leaks
    above about 5 % of its maximum flow, from memory; severity 1 is twice that), laminar, so it
    grows with pressure. The leakage gap opens to match (Q ∝ h³). A piston pump's case drain carries
    it; a gear pump delivers less."""
    assert c is not None
    base = c.p["pump_drain"] if c.kind is CircuitKind.CLOSED_LOOP_DRIVE else c.p["leak"]
    extra = 0.10 * s * c.p["qth"]
    growth = widen(c.p, "pump", 1.0 + extra / max(base, 1e-6))
    return f"pump clearances × {growth:.2f}: internal leakage {extra:.1f} L/min higher at its test pressure"


@fault("motor_worn", CircuitKind.CLOSED_LOOP_DRIVE, CircuitKind.MOTOR)
def motor_worn(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Worn motor rotating group: leakage to the motor case × (1 + 4·s), so the motor drain rises
    under load and, in a closed loop, the charge pump must replace more."""
    assert c is not None
    growth = widen(c.p, "motor", 1.0 + 4.0 * s)
    return f"motor clearances × {growth:.2f}: internal leakage × {1 + 4 * s:.1f}"


@fault("case_drain_restricted", CircuitKind.CLOSED_LOOP_DRIVE, *VARIABLE, CircuitKind.MOTOR)
def case_drain_restricted(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Kinked or undersized case drain hose: the flow-dependent part of its resistance × (1 + 20·s).
    Drain flow is what the pump leaks and does not change; case pressure rises with it."""
    assert c is not None
    c.p["drain_r"] *= 1.0 + 20.0 * s
    return f"case drain line resistance × {1 + 20 * s:.0f}"


# --- reliefs and settings in open circuits ---------------------------------------------------


def _main(c: CircuitModel) -> tuple[str, ReliefState] | None:
    rid = main_relief_id(c)
    return None if rid is None else (rid, c.reliefs[rid])


@fault("main_relief_low", *OPEN)
def main_relief_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Main relief adjuster backed off or its poppet held off the seat: it opens 15 %·s below its
    setting. Where a pump cut-off sits below the relief, only a drop past the cut-off shows."""
    assert c is not None
    found = _main(c)
    if found is None:
        return "no main relief to change"
    rid, relief = found
    before = relief.setting
    relief.setting = before * (1.0 - 0.15 * s)
    return f"relief '{rid}' opens at {_bar(relief.setting)} instead of {_bar(before)}"


@fault("main_relief_high", *OPEN)
def main_relief_high(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Main relief screwed up or jammed: it opens 12 %·s above its setting. Invisible where a pump
    cut-off below it holds the pressure."""
    assert c is not None
    found = _main(c)
    if found is None:
        return "no main relief to change"
    rid, relief = found
    before = relief.setting
    relief.setting = before * (1.0 + 0.12 * s)
    return f"relief '{rid}' opens at {_bar(relief.setting)} instead of {_bar(before)}"


@fault("parallel_relief_governing", *OPEN)
def parallel_relief_governing(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """A lower-set relief that should be isolated (an auxiliary tool relief behind a selector left
    open) joins the main relief in parallel; the lowest setting governs the pump. All or nothing:
    severity does not change it."""
    assert c is not None
    main = main_relief_id(c)
    layout = c.circuit.relief_layout
    in_layout = set(layout.relief_ids()) if layout is not None else set(c.reliefs)
    figure = param(c.circuit, "parallel_relief_setting")
    spare = [rid for rid in c.reliefs if rid not in in_layout and rid != main]
    if figure is not None:
        spare.sort(key=lambda rid: abs(c.reliefs[rid].setting - figure))
    if not spare and figure is not None:
        c.reliefs["parallel"] = ReliefState(figure, 0.0, "internal")
        spare = ["parallel"]
    if not spare:
        return "no relief outside the layout to join the main one"
    c.parallel_extra.append(spare[0])
    return f"relief '{spare[0]}' ({_bar(c.reliefs[spare[0]].setting)}) now in parallel with the main relief"


@fault("port_relief_low", CircuitKind.OPEN_FIXED_PUMP)
def port_relief_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """One work port's relief (which one drawn from the seed, among the ports a test point is
    on) has a weak spring or dirt under its poppet: it opens 30 %·s below its setting. Only
    that port stalls low, and only once it has dropped below the main relief."""
    assert c is not None
    ports = sorted({tp.relief for tp in c.circuit.test_points if tp.relief and tp.relief in c.reliefs})
    if not ports:
        return "no work port with its own relief to change"
    rid = rng.choice(ports)
    relief = c.reliefs[rid]
    before = relief.setting
    relief.setting = before * (1.0 - 0.30 * s)
    return f"port relief '{rid}' opens at {_bar(relief.setting)} instead of {_bar(before)}"


@fault("section_spool_leak", CircuitKind.OPEN_FIXED_PUMP)
def section_spool_leak(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Worn or scored section spool and bore: oil slips from the loaded work port past the
    centred spool to tank × (1 + 6·s), so a loaded function drifts down in neutral. The stall
    still reaches the relief: the pump's flow far outruns the leak."""
    assert c is not None
    c.p["spool_leak"] *= 1.0 + 6.0 * s
    return f"leakage past the centred spool × {1 + 6 * s:.1f}"


@fault("open_centre_restricted", CircuitKind.OPEN_FIXED_PUMP)
def open_centre_restricted(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """A spool not quite centred, a stuck detent or dirt in the open-centre passage: the drop
    through the centre × (1 + 4·s) plus 8·s bar at rated flow (a spool part-way off centre
    throttles however free the passage was), so the pump outlet sits higher in neutral (and
    heats the oil) while the return line downstream reads as before."""
    assert c is not None
    c.p["centre_dp"] = c.p["centre_dp"] * (1.0 + 4.0 * s) + 8.0 * s
    return f"open-centre passage drop × {1 + 4 * s:.1f} + {8 * s:.1f} bar"


@fault("return_back_pressure", *OPEN, *LOOP)
def return_back_pressure(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Blocked return filter, undersized hose or restricted cooler: the return line's turbulent
    resistance × (1 + 7·s), which adds to internally drained reliefs and to everything returning
    through it. In a closed loop the case drains return that way: case pressure (and the charge
    gauge, whose reliefs vent into the case) rises by 0.5 + 2.5·s bar."""
    assert c is not None
    if c.kind is CircuitKind.CLOSED_LOOP_DRIVE:
        c.p["case_extra"] += 0.5 + 2.5 * s
        return f"case drain return {0.5 + 2.5 * s:.1f} bar higher"
    c.p["ret_restrict"] *= 1.0 + 7.0 * s
    return f"return line restriction × {1 + 7 * s:.1f}"


@fault("compensator_misset", *VARIABLE)
def compensator_misset(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Pressure compensator (high-pressure cut-off) set 12 %·s off, low or high (drawn from the
    seed): a stalled function reads the wrong pressure, or the relief above takes over."""
    assert c is not None
    before = c.p["cutoff"]
    sign = rng.choice((-1.0, 1.0))
    c.p["cutoff"] = before * (1.0 + sign * 0.12 * s)
    return f"pump cut-off at {_bar(c.p['cutoff'])} instead of {_bar(before)}"


@fault("ls_setting_wrong", CircuitKind.LOAD_SENSING)
def ls_setting_wrong(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Flow compensator spring set by feel: standby and margin both shift by 45 %·s of the margin,
    down or up (drawn from the seed), since one spring sets both."""
    assert c is not None
    shift = rng.choice((-1.0, 1.0)) * 0.45 * s * c.p["margin"]
    c.p["margin"] += shift
    c.p["standby"] += shift
    return f"margin and standby {'+' if shift > 0 else ''}{shift:.1f} bar"


@fault("ls_signal_leak", CircuitKind.LOAD_SENSING)
def ls_signal_leak(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Leaking shuttle or LS hose: the signal the pump sees is the work port pressure less a share
    bled to tank (signal / port = 1 − 0.1·s), so at a stall the signal trails the work port and,
    with a big enough leak, the pump settles below its cut-off."""
    assert c is not None
    c.p["ls_ratio"] = 1.0 - 0.1 * s
    return f"LS signal {100 * c.p['ls_ratio']:.0f} % of the work port pressure"


# --- steering behind a priority valve ----------------------------------------------------------


@fault("steering_relief_low", CircuitKind.LOAD_SENSING)
def steering_relief_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Steering relief with a weak spring or dirt on its seat: it opens 20 %·s below its setting,
    so the wheel held at its stop reads low and the machine steers weakly under load."""
    assert c is not None
    if "steer_relief" not in c.p:
        return "no steering on this circuit"
    before = c.p["steer_relief"]
    c.p["steer_relief"] = before * (1.0 - 0.20 * s)
    return f"steering relief opens at {_bar(c.p['steer_relief'])} instead of {_bar(before)}"


@fault("steering_relief_high", CircuitKind.LOAD_SENSING)
def steering_relief_high(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Steering relief adjuster turned in: its setting rises (50 + 50·s) % of the way to the
    pump's cut-off, reaching it at severity 1; at or above the cut-off it never opens and the
    pump's cut-off governs the steering stall."""
    assert c is not None
    if "steer_relief" not in c.p:
        return "no steering on this circuit"
    before = c.p["steer_relief"]
    c.p["steer_relief"] = before + (c.p["cutoff"] - before) * min(1.0, 0.5 + 0.5 * s)
    return f"steering relief set at {_bar(c.p['steer_relief'])} instead of {_bar(before)}"


@fault("priority_valve_sticking", CircuitKind.LOAD_SENSING)
def priority_valve_sticking(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Priority spool held towards the work side by dirt or a weak spring: the steering's CF
    flow falls 40 %·s short and the CF line's standby 60 %·s (the spring no longer holds it)."""
    assert c is not None
    if "cf_flow" not in c.p:
        return "no priority valve on this circuit"
    c.p["cf_flow"] *= 1.0 - 0.40 * s
    c.p["steer_standby"] *= 1.0 - 0.60 * s
    return f"priority flow −{40 * s:.0f} %, steering standby −{60 * s:.0f} %"


# --- actuators, accumulators, brakes, pilot ---------------------------------------------------


@fault("pilot_supply_low", CircuitKind.PILOT_SUPPLY)
def pilot_supply_low(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Pilot relief set low or dirty, or a pilot filter loading up: pilot supply 45 %·s low."""
    assert c is not None
    before = c.p["pilot"]
    c.p["pilot"] = before * (1.0 - 0.45 * s)
    return f"pilot supply {_bar(c.p['pilot'])} instead of {_bar(before)}"


@fault("brake_not_releasing", CircuitKind.BRAKE_RELEASE)
def brake_not_releasing(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Worn brake piston seals or a sticking release valve: the release port loses 50 %·s of its
    supply pressure, and the leak costs the supply 1·s L/min."""
    assert c is not None
    c.p["loss"] = min(0.95, 0.5 * s)
    c.p["leak"] = 1.0 * s
    return f"brake release loses {100 * c.p['loss']:.0f} % of its supply"


@fault("cylinder_seal_bypass", CircuitKind.CYLINDER)
def cylinder_seal_bypass(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Torn or worn piston seal: oil past the piston × (1 + 25·s). With the ports blocked the
    cylinder still locks; with the rod side vented the load sinks."""
    assert c is not None
    c.p["q_seal"] *= 1.0 + 25.0 * s
    return f"piston seal bypass × {1 + 25 * s:.0f}"


@fault("load_holding_valve_leak", CircuitKind.CYLINDER)
def load_holding_valve_leak(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Dirty or worn load-holding check or counterbalance valve: oil leaving the loaded side
    × (1 + 6·s), so the load drifts whether or not the rod side is vented."""
    assert c is not None
    c.p["q_valve"] *= 1.0 + 6.0 * s
    return f"load-holding valve leakage × {1 + 6 * s:.0f}"


@fault(
    "accumulator_precharge_lost", CircuitKind.ACCUMULATOR, CircuitKind.PILOT_SUPPLY, CircuitKind.BRAKE_RELEASE
)
def accumulator_precharge_lost(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Nitrogen lost through a split bladder or a leaking gas valve: precharge 70 %·s down."""
    assert c is not None
    if "precharge" not in c.p:
        return "no accumulator on this circuit"
    before = c.p["precharge"]
    c.p["precharge"] = max(0.0, before * (1.0 - 0.7 * s))
    return f"gas precharge {_bar(c.p['precharge'])} instead of {_bar(before)} (at 20 °C)"


# --- the whole visit ---------------------------------------------------------------------------


def _window(m: Machine) -> tuple[float, float]:
    w = m.profile.test_window
    return to_canonical(w.oil_min, Kind.TEMPERATURE), to_canonical(w.oil_max, Kind.TEMPERATURE)


@fault("relief_overheating", *OPEN, *LOOP)
def relief_overheating(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Oil spending long spells over a relief turns that power into heat: the technician finds
    the oil 4 + 8·s °C above the top of the test window. The thinner oil leaks more (slot flow:
    leakage ∝ 1/ν), which the readings carry."""
    _low, high = _window(m)
    start = high + 4.0 + 8.0 * s
    m.setting.oil_start_c, m.setting.oil_end_c = start, start + 2.0
    return f"oil at {start:.0f} °C from heat over a relief"


@fault("invalid_test_conditions")
def invalid_test_conditions(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Readings taken too early or at the wrong throttle (drawn from the seed): either the oil is
    10 + 8·s °C below the test window, so thick that leakage reads low and filters and lines
    drop more, or the engine runs 8 + 8·s % below rated speed, so every pump delivers less."""
    low, _high = _window(m)
    if rng.random() < 0.5:
        start = low - 10.0 - 8.0 * s
        m.setting.oil_start_c, m.setting.oil_end_c = start, start + 4.0
        return f"cold oil: {start:.0f} °C"
    m.setting.speed_rpm = m.rated_rpm * (1.0 - 0.08 - 0.08 * s)
    return f"engine at {m.setting.speed_rpm:.0f} rpm instead of {m.rated_rpm:.0f} rpm"


@fault("gauge_error")
def gauge_error(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """One pressure reading goes wrong (which one drawn from the seed): either its gauge reads off
    by a bias of (10 + 10·s) % of its span, up or down, or a gauge one standard range too small
    was fitted and its needle stops at full scale."""
    m.gauge_fault = {
        "overrange": float(rng.random() < 0.5),
        "pick": rng.random(),
        "sign": rng.choice((-1.0, 1.0)),
        "size": 0.10 + 0.10 * s,
    }
    return (
        "one gauge overranged"
        if m.gauge_fault["overrange"]
        else f"one gauge biased by {100 * m.gauge_fault['size']:.0f} % of its span"
    )


@fault("suction_cavitation", *OPEN)
def suction_cavitation(m: Machine, c: CircuitModel | None, s: float, rng: Random) -> str:
    """Tank valve half shut, strainer blocked or air drawn in: the inlet restriction × (1 + 6·s);
    past a quarter bar of vacuum the pump stops filling and delivers less."""
    assert c is not None
    c.p["suc_restrict"] *= 1.0 + 6.0 * s
    return f"pump inlet restriction × {1 + 6 * s:.1f}"


#: The catalogue ids this simulator can inject ('no_fault' is the healthy machine).
INJECTABLE: tuple[str, ...] = tuple(FAULTS)

__all__ = ["FAULTS", "INJECTABLE", "FaultModel"]
