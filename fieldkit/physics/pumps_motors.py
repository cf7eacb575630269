"""Pumps and motors: flow from displacement, the three efficiencies, leakage, motor torque and speed.

Efficiencies follow the definitions and symbols of ISO 4391 (from memory; test method ISO 4409):
ηv volumetric, ηhm hydromechanical, ηt = ηv · ηhm overall. A pump turns torque into flow and a
motor turns flow into torque, so each ratio is written for a motor the other way up: output
over input in both cases, and every loss makes it smaller than 1.

Displacements are per revolution and speeds in revolutions per time; a displacement given in
plain cm³ is read as cm³ per revolution (see :mod:`fieldkit.physics.common`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fieldkit.physics.common import Ratio, fraction, out, percent, si
from fieldkit.units import Kind, Quantity

_TWO_PI = 2.0 * math.pi


def _v(displacement: Quantity) -> float:
    return si(displacement, Kind.DISPLACEMENT, "displacement", positive=True)


def _n(speed: Quantity, what: str = "shaft speed") -> float:
    return si(speed, Kind.SPEED, what, positive=True)


def theoretical_flow(displacement: Quantity, speed: Quantity) -> Quantity:
    """Flow a pump would deliver (or a motor would swallow) with no leakage, Q = V · n."""
    return out(_v(displacement) * si(speed, Kind.SPEED, "shaft speed", non_negative=True), Kind.FLOW)


# --- efficiencies, pump --------------------------------------------------------------------


def pump_volumetric_efficiency(actual_flow: Quantity, displacement: Quantity, speed: Quantity) -> Quantity:
    """ηv = Q_actual / (V · n): the share of the displaced oil that reaches the outlet; the
    rest leaks back inside the pump. Measured data can give slightly over 100 %; it is returned
    as measured so the caller can judge the meters."""
    q = si(actual_flow, Kind.FLOW, "pump flow", non_negative=True)
    return percent(q / (_v(displacement) * _n(speed)))


def pump_hydromechanical_efficiency(
    pressure_difference: Quantity, displacement: Quantity, input_torque: Quantity
) -> Quantity:
    """ηhm = (Δp · V / 2π) / T_in: the torque the pressure alone would need over the torque the
    shaft actually takes; friction and churning make up the difference."""
    dp = si(pressure_difference, Kind.PRESSURE, "pressure difference", non_negative=True)
    torque = si(input_torque, Kind.TORQUE, "input torque", positive=True)
    return percent(dp * _v(displacement) / _TWO_PI / torque)


def pump_overall_efficiency(
    pressure_difference: Quantity,
    actual_flow: Quantity,
    input_torque: Quantity,
    speed: Quantity,
) -> Quantity:
    """ηt = Δp · Q / (T · 2π · n): hydraulic power out over shaft power in (= ηv · ηhm)."""
    hydraulic = si(pressure_difference, Kind.PRESSURE, "pressure difference", non_negative=True) * si(
        actual_flow, Kind.FLOW, "pump flow", non_negative=True
    )
    shaft = si(input_torque, Kind.TORQUE, "input torque", positive=True) * _TWO_PI * _n(speed)
    return percent(hydraulic / shaft)


# --- efficiencies, motor (each ratio the other way up) ------------------------------------


def motor_volumetric_efficiency(input_flow: Quantity, displacement: Quantity, speed: Quantity) -> Quantity:
    """ηv = V · n / Q_in: the share of the oil fed in that turns the shaft; the rest leaks past
    to the case or the other port."""
    q = si(input_flow, Kind.FLOW, "motor inlet flow", positive=True)
    return percent(_v(displacement) * si(speed, Kind.SPEED, "shaft speed", non_negative=True) / q)


def motor_hydromechanical_efficiency(
    pressure_difference: Quantity, displacement: Quantity, output_torque: Quantity
) -> Quantity:
    """ηhm = T_out / (Δp · V / 2π): the torque delivered over the torque the pressure difference
    across the motor could give with no friction."""
    dp = si(pressure_difference, Kind.PRESSURE, "pressure difference", positive=True)
    torque = si(output_torque, Kind.TORQUE, "output torque", non_negative=True)
    return percent(torque * _TWO_PI / (dp * _v(displacement)))


def motor_overall_efficiency(
    pressure_difference: Quantity,
    input_flow: Quantity,
    output_torque: Quantity,
    speed: Quantity,
) -> Quantity:
    """ηt = T · 2π · n / (Δp · Q): shaft power out over hydraulic power in (= ηv · ηhm)."""
    hydraulic = si(pressure_difference, Kind.PRESSURE, "pressure difference", positive=True) * si(
        input_flow, Kind.FLOW, "motor inlet flow", positive=True
    )
    shaft = (
        si(output_torque, Kind.TORQUE, "output torque", non_negative=True)
        * _TWO_PI
        * si(speed, Kind.SPEED, "shaft speed", non_negative=True)
    )
    return percent(shaft / hydraulic)


# --- field tests --------------------------------------------------------------------------


def volumetric_efficiency_from_flow_test(
    no_load_flow: Quantity,
    no_load_speed: Quantity,
    loaded_flow: Quantity,
    loaded_speed: Quantity,
) -> Quantity:
    """ηv from a flow meter test: loaded flow per revolution over no-load flow per revolution.

    Engines and electric motors slow down under load, so comparing raw flows would blame the
    pump for the drive's speed drop; comparing flow per revolution removes it. Assumes leakage
    at no load (near zero pressure) is negligible, so no-load flow per revolution stands for
    the true displacement; that makes the result slightly optimistic.
    """
    no_load = si(no_load_flow, Kind.FLOW, "no-load flow", positive=True) / _n(no_load_speed, "no-load speed")
    loaded = si(loaded_flow, Kind.FLOW, "loaded flow", non_negative=True) / _n(loaded_speed, "loaded speed")
    return percent(loaded / no_load)


@dataclass(frozen=True, slots=True)
class Leakage:
    """Internal leakage estimated from a case drain reading."""

    flow: Quantity
    fraction_of_theoretical: Quantity


def case_drain_leakage(
    case_drain_flow: Quantity,
    displacement: Quantity,
    speed: Quantity,
    other_case_flow: Quantity | None = None,
) -> Leakage:
    """Internal leakage estimated from case drain flow, and as a share of theoretical flow.

    Case drain is the leakage that escapes to the housing; leakage straight from the high to the
    low port never shows there, so this is a lower bound on the total. Oil deliberately routed
    through the case (loop flushing or case cooling) is not leakage: pass it as
    ``other_case_flow`` and it is taken off. Compare the share with the machine's own baseline
    at the same pressure and oil temperature, since leakage rises with both.
    """
    drain = si(case_drain_flow, Kind.FLOW, "case drain flow", non_negative=True)
    other = 0.0
    if other_case_flow is not None:
        other = si(other_case_flow, Kind.FLOW, "other case flow", non_negative=True)
    leak = max(drain - other, 0.0)
    return Leakage(out(leak, Kind.FLOW), percent(leak / (_v(displacement) * _n(speed))))


# --- motor output -------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class MotorOutput:
    """Torque and speed a hydraulic motor gives for a pressure difference and an inlet flow."""

    torque: Quantity
    speed: Quantity


def motor_torque(
    pressure_difference: Quantity, displacement: Quantity, hydromechanical_efficiency: Ratio = 1.0
) -> Quantity:
    """T = Δp · V / (2π) · ηhm. ``pressure_difference`` is inlet minus outlet; a gauge on the
    inlet alone overstates the torque by the return back pressure."""
    dp = si(pressure_difference, Kind.PRESSURE, "pressure difference")
    eta = fraction(hydromechanical_efficiency, "hydromechanical efficiency")
    return out(dp * _v(displacement) / _TWO_PI * eta, Kind.TORQUE)


def motor_speed(flow: Quantity, displacement: Quantity, volumetric_efficiency: Ratio = 1.0) -> Quantity:
    """n = Q · ηv / V: the oil that does not leak past, divided by what one revolution swallows."""
    q = si(flow, Kind.FLOW, "motor inlet flow", non_negative=True)
    eta = fraction(volumetric_efficiency, "volumetric efficiency")
    return out(q * eta / _v(displacement), Kind.SPEED)


def motor_output(
    pressure_difference: Quantity,
    flow: Quantity,
    displacement: Quantity,
    volumetric_efficiency: Ratio = 1.0,
    hydromechanical_efficiency: Ratio = 1.0,
) -> MotorOutput:
    """Torque and speed together for one displacement."""
    return MotorOutput(
        motor_torque(pressure_difference, displacement, hydromechanical_efficiency),
        motor_speed(flow, displacement, volumetric_efficiency),
    )


def two_speed_motor_output(
    pressure_difference: Quantity,
    flow: Quantity,
    full_displacement: Quantity,
    displacement_ratio: Ratio,
    volumetric_efficiency: Ratio = 1.0,
    hydromechanical_efficiency: Ratio = 1.0,
) -> MotorOutput:
    """A two-speed (or variable) motor shifted to a smaller displacement V · r: the same flow
    turns it 1/r times faster and the same pressure gives only r times the torque.

    Uses the same efficiencies at both displacements; real motors lose efficiency at small
    displacement (from memory), so the true high-range torque is somewhat lower. A machine
    that will not climb a grade in high range may simply be short of torque, not faulty.
    """
    reduced = _v(full_displacement) * fraction(displacement_ratio, "displacement ratio")
    dp = si(pressure_difference, Kind.PRESSURE, "pressure difference")
    q = si(flow, Kind.FLOW, "motor inlet flow", non_negative=True)
    eta_v = fraction(volumetric_efficiency, "volumetric efficiency")
    eta_hm = fraction(hydromechanical_efficiency, "hydromechanical efficiency")
    return MotorOutput(
        out(dp * reduced / _TWO_PI * eta_hm, Kind.TORQUE), out(q * eta_v / reduced, Kind.SPEED)
    )
