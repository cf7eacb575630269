"""Closed-loop (hydrostatic) transmissions: charge pressure and the charge flow budget.

In a closed loop the pump's outlet feeds the motor and the motor's outlet returns straight to
the pump. A small charge pump refills the low-pressure side with what the loop loses through
the pump and motor case drains and the loop-flushing valve. If the charge pump cannot keep up,
charge pressure falls and the main pump can cavitate; that is what these functions judge.
"""

from __future__ import annotations

from dataclasses import dataclass

from fieldkit.physics.common import OutOfRangeError, Ratio, fraction, out, shown, si
from fieldkit.units import Kind, Quantity


def net_charge_pressure(charge_pressure: Quantity, case_pressure: Quantity) -> Quantity:
    """Charge pressure above case pressure.

    The charge relief and the pump's control work against the case (the charge relief commonly
    discharges into it, common practice), so makers state charge pressure as net of case
    pressure; two gauge readings are compared after taking one from the other.
    """
    return out(
        si(charge_pressure, Kind.PRESSURE, "charge pressure")
        - si(case_pressure, Kind.PRESSURE, "case pressure"),
        Kind.PRESSURE,
    )


@dataclass(frozen=True, slots=True)
class ChargePressures:
    """Expected charge pressure gauge readings in neutral and in stroke."""

    neutral: Quantity
    in_stroke: Quantity
    in_stroke_governed_by: str  # "flushing relief" or "charge relief"


def expected_charge_pressure(
    charge_relief_setting: Quantity,
    flushing_relief_setting: Quantity | None = None,
    case_pressure: Quantity | None = None,
) -> ChargePressures:
    """Charge pressure a healthy loop should show in neutral and in stroke.

    The model, plainly (common practice, from memory):

    * In neutral both loop sides sit at charge pressure, the flushing shuttle stays centred,
      and all charge flow leaves over the charge relief: the gauge reads its setting.
    * In stroke the shuttle shifts and connects the low-pressure side to the flushing relief.
      That relief is set below the charge relief, so charge flow now leaves through it and it
      governs: the gauge reads the flushing relief setting. If it is not set lower (or there
      is no flushing valve) the charge relief still governs.
    * Both reliefs discharge into a case, so a case pressure adds to both readings one for one
      (the relief model in :mod:`fieldkit.physics.reliefs`). Pressure drops across the
      charge check valves are ignored.

    Settings are net (above case), as data sheets give them; the results are gauge readings.
    """
    charge = si(charge_relief_setting, Kind.PRESSURE, "charge relief setting", positive=True)
    case = 0.0 if case_pressure is None else si(case_pressure, Kind.PRESSURE, "case pressure")
    if flushing_relief_setting is None:
        stroke, by = charge, "charge relief"
    else:
        flushing = si(flushing_relief_setting, Kind.PRESSURE, "flushing relief setting", positive=True)
        stroke, by = (flushing, "flushing relief") if flushing < charge else (charge, "charge relief")
    return ChargePressures(out(charge + case, Kind.PRESSURE), out(stroke + case, Kind.PRESSURE), by)


@dataclass(frozen=True, slots=True)
class ChargeBudget:
    """Charge pump supply against what the loop loses."""

    supply: Quantity
    demand: Quantity
    surplus: Quantity  # negative: a deficit
    keeps_loop_full: bool

    @property
    def message(self) -> str:
        supply, demand = shown(self.supply), shown(self.demand)
        if self.keeps_loop_full:
            spare = shown(self.surplus)
            return f"charge pump supplies {supply} against {demand} lost: {spare} spare over the relief"
        return (
            f"charge pump supplies {supply} but the loop loses {demand}: charge pressure will fall "
            f"below the relief setting and the pump may cavitate"
        )


def charge_flow_budget(
    charge_displacement: Quantity,
    speed: Quantity,
    charge_volumetric_efficiency: Ratio,
    pump_case_drain: Quantity,
    motor_case_drain: Quantity,
    flushing_flow: Quantity | None = None,
    flushing_through_motor_case: bool = False,
) -> ChargeBudget:
    """Whether the charge pump can keep the loop full: V · n · ηv against the case drains plus flushing.

    Everything that leaves the loop must be replaced by charge flow: the pump and motor case
    drains (internal leakage) and the oil the flushing valve takes for cooling. On many motors
    the flushing oil is routed through the motor case and is already in the motor case drain
    reading; set ``flushing_through_motor_case`` so it is not counted twice. The surplus leaves
    over the charge (or flushing) relief; with none left, the relief closes and charge pressure
    falls, which is the field signature of a worn loop or a tired charge pump.
    """
    supply = (
        si(charge_displacement, Kind.DISPLACEMENT, "charge pump displacement", positive=True)
        * si(speed, Kind.SPEED, "shaft speed", non_negative=True)
        * fraction(charge_volumetric_efficiency, "charge pump volumetric efficiency")
    )
    demand = si(pump_case_drain, Kind.FLOW, "pump case drain", non_negative=True) + si(
        motor_case_drain, Kind.FLOW, "motor case drain", non_negative=True
    )
    flushing = (
        0.0 if flushing_flow is None else si(flushing_flow, Kind.FLOW, "flushing flow", non_negative=True)
    )
    if not flushing_through_motor_case:
        demand += flushing
    surplus = supply - demand
    return ChargeBudget(
        out(supply, Kind.FLOW), out(demand, Kind.FLOW), out(surplus, Kind.FLOW), keeps_loop_full=surplus > 0.0
    )


def cross_port_stall_reading(
    setting: Quantity, low_side_pressure: Quantity, convention: str = "differential"
) -> Quantity:
    """What a loop port gauge reads with the drive stalled against its cross-port relief.

    The cross-port relief discharges from the high side into the low side, which the charge
    circuit holds at charge pressure. A setting stated as a *differential* is held across the
    valve, so the high-side gauge reads setting + low-side pressure; a setting stated as a
    *gauge* figure is what the gauge reads (common practice: makers state either, so the
    profile says which).
    """
    high = si(setting, Kind.PRESSURE, "cross-port relief setting", positive=True)
    if convention == "gauge":
        return out(high, Kind.PRESSURE)
    if convention != "differential":
        raise OutOfRangeError(f"relief convention must be 'differential' or 'gauge'; got {convention!r}")
    return out(high + si(low_side_pressure, Kind.PRESSURE, "low-side (charge) pressure"), Kind.PRESSURE)
