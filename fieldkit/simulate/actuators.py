"""Cylinders, accumulators and pilot supplies.

Cylinder (``CircuitModel.p``): ``bore``, ``rod`` (mm), ``cap_area`` (mm²), ``q_valve`` oil the
load-holding valve or spool lets out of the loaded side, ``q_seal`` oil passing the piston seal
(L/min at the test load and the reference temperature; laminar, so ∝ 1/μ, dynamic viscosity). With the
control in neutral both ports are blocked and a bypassing seal cannot move the piston (the cap
side pushes more oil than the rod side can take), so only ``q_valve`` drifts the load; with the
rod side vented the seal's oil leaves too (field notes, trade article, second-hand). Drift is the
leak over the cap area, the inverse of :func:`fieldkit.physics.cylinders.leakage_from_drift`.

Accumulator: ``precharge`` gas precharge at ``precharge_c`` (°C), ``cutout`` the charging
valve's cut-out. Gas in a closed shell follows the ideal gas law at constant volume, so a
precharge read warm reads higher: p_abs ∝ T_abs.

Pilot supply: ``pilot`` relief setting, ``signal_drop`` loss through a lever to a spool end.
"""

from __future__ import annotations

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import Circuit, CircuitKind, TestPoint
from fieldkit.model.roles import Role
from fieldkit.physics.accumulators import expected_precharge
from fieldkit.physics.cylinders import bore_area, leakage_from_drift
from fieldkit.simulate.constants import ATM_BAR, KELVIN, LEAKAGE_SCATTER, LOAD_SCATTER, SETTING_SCATTER
from fieldkit.simulate.machine import (
    CircuitModel,
    Draw,
    Env,
    Machine,
    any_bounds,
    bounds,
    middle,
    param,
    point,
    qty,
)
from fieldkit.simulate.open_circuits import stall_pressure

#: Precharge figures are stated for gas at about 20 °C unless the maker says otherwise (from memory).
PRECHARGE_REFERENCE_C = 20.0
#: A sound cylinder drifts at about half its limit through the valve and a tenth through the
#: seal (the middle of the expected range; the split is the simulator's own choice).
VALVE_SHARE = 0.5
SEAL_SHARE = 0.1


def _supply_stall(machine: Machine, env: Env) -> float | None:
    feed = machine.first(
        CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED, CircuitKind.OPEN_FIXED_PUMP
    )
    return None if feed is None else stall_pressure(feed, env)


def _drift(model: CircuitModel, leak: float, env: Env) -> float:
    """mm/min for a leak in L/min over the cap area: v = Q / A. The leak is stated at the reference
    temperature; the load sets the pressure across the gap, so by the laminar gap law it scales
    with 1/μ."""
    return leak / env.mu_ratio * 1.0e6 / model.p["cap_area"]


def precharge_reading(model: CircuitModel, gas_c: float) -> float:
    """Gauge reading of a precharge set at ``precharge_c`` and read with the gas at ``gas_c``:
    constant gas volume, so absolute pressure scales with absolute temperature."""
    p = model.p
    absolute = (p["precharge"] + ATM_BAR) * (gas_c + KELVIN) / (p["precharge_c"] + KELVIN)
    return max(0.0, absolute - ATM_BAR)


def actuator(
    machine: Machine, model: CircuitModel, tp: TestPoint, state: FunctionState, env: Env
) -> float | None:
    role = tp.role
    p = model.p
    if role is Role.ACCUMULATOR_PRECHARGE and "precharge" in p:
        return precharge_reading(model, machine.setting.gas_c)
    if model.kind is CircuitKind.CYLINDER:
        if role is Role.CYLINDER_DRIFT:
            return _drift(model, p["q_valve"], env)
        if role is Role.CYLINDER_SEAL_DRIFT:
            return _drift(model, p["q_valve"] + p["q_seal"], env)
        if role is Role.STALL_PRESSURE and state is FunctionState.STALLED:
            return _supply_stall(machine, env)
        return None
    if model.kind is CircuitKind.ACCUMULATOR and role is Role.PUMP_OUTLET_PRESSURE:
        return p.get("cutout")
    if model.kind is CircuitKind.PILOT_SUPPLY and role is Role.PILOT_PRESSURE:
        supply = point(model.circuit, Role.PILOT_PRESSURE)
        moving = state is not FunctionState.NEUTRAL
        if supply is not None and tp.id == supply.id:
            return p["pilot"] - (p["signal_drop"] if moving else 0.0)
        if state is FunctionState.NEUTRAL:
            return 0.2
        return p["pilot"] - 2 * p["signal_drop"] if state is FunctionState.FULL_STROKE else None
    return None


def accumulator_params(circuit: Circuit, draw: Draw, p: dict[str, float]) -> None:
    tp = point(circuit, Role.ACCUMULATOR_PRECHARGE)
    if tp is None:
        return
    mid = middle(*any_bounds(tp))
    if mid is None:
        low_work = param(circuit, "accumulator_min_working_pressure")
        if low_work is None:
            return
        mid = expected_precharge(qty(low_work, "bar")).m_as("bar")
    p["precharge"] = draw(mid, SETTING_SCATTER * 1.5)
    p["precharge_c"] = PRECHARGE_REFERENCE_C


def build_actuator(machine: Machine, circuit: Circuit, draw: Draw) -> CircuitModel:
    model = CircuitModel(circuit, {})
    p = model.p
    accumulator_params(circuit, draw, p)
    if circuit.kind is CircuitKind.CYLINDER:
        bore = param(circuit, "cylinder_bore") or 100.0
        rod = param(circuit, "cylinder_rod") or 0.6 * bore
        limit = (
            param(circuit, "max_drift_rate")
            or bounds(point(circuit, Role.CYLINDER_DRIFT), FunctionState.NEUTRAL)[1]
            or 10.0
        )
        bore_q, rod_q = qty(bore, "millimeter"), qty(rod, "millimeter")
        p.update(bore=bore, rod=rod, cap_area=bore_area(bore_q).m_as("millimeter ** 2"))
        p["q_valve"] = draw(
            leakage_from_drift(qty(VALVE_SHARE * limit, "millimeter / minute"), bore_q, rod_q).m_as(
                "liter / minute"
            ),
            LEAKAGE_SCATTER,
        )
        p["q_seal"] = draw(
            leakage_from_drift(qty(SEAL_SHARE * limit, "millimeter / minute"), bore_q, rod_q).m_as(
                "liter / minute"
            ),
            LEAKAGE_SCATTER,
        )
    elif circuit.kind is CircuitKind.ACCUMULATOR:
        cutout = param(circuit, "accumulator_max_working_pressure")
        if cutout is None:
            cutout = middle(*any_bounds(point(circuit, Role.PUMP_OUTLET_PRESSURE)))
        if cutout is not None:
            p["cutout"] = draw(cutout, SETTING_SCATTER)
    elif circuit.kind is CircuitKind.PILOT_SUPPLY:
        pilot = (
            param(circuit, "pilot_relief_setting")
            or middle(*bounds(point(circuit, Role.PILOT_PRESSURE), FunctionState.NEUTRAL))
            or 30.0
        )
        p["pilot"] = draw(pilot, SETTING_SCATTER)
        p["signal_drop"] = draw(1.0, LOAD_SCATTER)
    return model


__all__ = ["actuator", "build_actuator", "precharge_reading"]
