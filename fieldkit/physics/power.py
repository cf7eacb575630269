"""Hydraulic power, shaft power, and the heat a circuit makes when oil is throttled.

A pressure reading and a flow reading together say how much power the oil carries; where that
power is not turned into work (over a relief, across a throttle or a worn pump's leakage paths)
it heats the oil. These functions let the rule engine tell whether a temperature complaint is
explained by the readings.
"""

from __future__ import annotations

from fieldkit.physics.common import Ratio, fraction, in_unit, out, si
from fieldkit.physics.fluid import OIL_DENSITY, OIL_SPECIFIC_HEAT
from fieldkit.units import Q_, Kind, Quantity, unit

_CP_UNIT = "joule / kilogram / kelvin"
_CP_EXAMPLE = "2060 J/(kg·K)"


def hydraulic_power(pressure: Quantity, flow: Quantity) -> Quantity:
    """Power carried by the oil, P = p · Q (kW = bar · L/min / 600).

    ``pressure`` is the pressure rise across the pump or the drop across the consumer; a gauge
    reading stands for it when the return is near tank pressure.
    """
    return out(si(pressure, Kind.PRESSURE, "pressure") * si(flow, Kind.FLOW, "flow"), Kind.POWER)


def pump_input_power(pressure: Quantity, flow: Quantity, overall_efficiency: Ratio) -> Quantity:
    """Shaft power the prime mover must supply, P_in = p · Q / ηt.

    ``flow`` is the pump's actual (measured) outlet flow; ηt is the overall efficiency, which
    already includes the volumetric losses, so the two are not counted twice.
    """
    eta = fraction(overall_efficiency, "overall efficiency")
    return out(si(pressure, Kind.PRESSURE, "pressure") * si(flow, Kind.FLOW, "flow") / eta, Kind.POWER)


def motor_output_power(pressure_drop: Quantity, flow: Quantity, overall_efficiency: Ratio) -> Quantity:
    """Shaft power a hydraulic motor delivers, P_out = Δp · Q · ηt, with Q the flow fed to it."""
    eta = fraction(overall_efficiency, "overall efficiency")
    dp = si(pressure_drop, Kind.PRESSURE, "pressure drop")
    return out(dp * si(flow, Kind.FLOW, "flow") * eta, Kind.POWER)


def throttling_heat(pressure_drop: Quantity, flow: Quantity) -> Quantity:
    """Heat made when flow passes a relief, throttle or leakage path with no work done: all of
    Δp · Q turns into heat in the oil. A pump blowing its whole flow over the relief at full
    pressure heats the oil by its full hydraulic power."""
    return out(
        si(pressure_drop, Kind.PRESSURE, "pressure drop", non_negative=True)
        * si(flow, Kind.FLOW, "flow", non_negative=True),
        Kind.POWER,
    )


def oil_heating_rate(
    heat: Quantity,
    oil_volume: Quantity,
    density: Quantity = OIL_DENSITY,
    specific_heat: Quantity = OIL_SPECIFIC_HEAT,
) -> Quantity:
    """How fast the oil in a circuit warms, dT/dt = P / (ρ · V · cp), in K/min.

    Assumes no heat leaves (no cooler, tank walls and pipes ignored) and only the oil is heated,
    not the steel around it: the true rate is lower, so this is the upper bound a rule can use
    to say "a leak of this size cannot explain that much heating".
    """
    p = si(heat, Kind.POWER, "heat", non_negative=True)
    v = si(oil_volume, Kind.VOLUME, "oil volume", positive=True)
    rho = si(density, Kind.DENSITY, "oil density", positive=True)
    cp = in_unit(specific_heat, _CP_UNIT, "specific heat", _CP_EXAMPLE, positive=True)
    return Q_(p / (rho * v * cp) * 60.0, unit("kelvin / minute"))


def throttling_temperature_rise(
    pressure_drop: Quantity,
    density: Quantity = OIL_DENSITY,
    specific_heat: Quantity = OIL_SPECIFIC_HEAT,
) -> Quantity:
    """Temperature rise of the oil as it passes a throttle or relief, ΔT = Δp / (ρ · cp).

    Follows from the throttling heat shared by the same flow (Δp · Q = ρ · Q · cp · ΔT), so it
    does not depend on the flow. About 0.6 K per 10 bar for mineral oil. Assumes no heat leaves
    the oil on its way through, which holds for the short path across a valve.
    """
    dp = si(pressure_drop, Kind.PRESSURE, "pressure drop", non_negative=True)
    rho = si(density, Kind.DENSITY, "oil density", positive=True)
    cp = in_unit(specific_heat, _CP_UNIT, "specific heat", _CP_EXAMPLE, positive=True)
    return Q_(dp / (rho * cp), unit("kelvin"))
