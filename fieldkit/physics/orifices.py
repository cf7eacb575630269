"""Orifices and restrictions: flow for a pressure drop and back.

Orifices set flows in pilot lines, dampers and bleed-offs; a blocked or missing one changes a
circuit's behaviour in ways a gauge can show. Filters and lines are treated as restrictions
known by one measured point (the element's data sheet or the machine's baseline).
"""

from __future__ import annotations

import math

from fieldkit.physics.common import OutOfRangeError, Ratio, fraction, out, si
from fieldkit.physics.fluid import OIL_DENSITY
from fieldkit.units import Kind, Quantity

#: Discharge coefficient of a sharp-edged orifice, π / (π + 2) ≈ 0.61
#: (Rabie, Fluid Power Engineering, McGraw-Hill 2009, p. 27).
SHARP_EDGED_CD = 0.61
#: Turbulent flow: Δp grows with Q² (orifice-like). Laminar flow (fine filter media, long thin
#: lines with thick oil) would be 1. 2 is the default because it is the cautious choice when
#: scaling up from a lower-flow point (common practice).
TURBULENT_EXPONENT = 2.0
LAMINAR_EXPONENT = 1.0


def _area(diameter: Quantity) -> float:
    d = si(diameter, Kind.LENGTH, "orifice diameter", positive=True)
    return math.pi / 4.0 * d * d


def orifice_flow(
    diameter: Quantity,
    pressure_drop: Quantity,
    discharge_coefficient: Ratio = SHARP_EDGED_CD,
    density: Quantity = OIL_DENSITY,
) -> Quantity:
    """Q = Cd · A · √(2 Δp / ρ): the orifice equation for turbulent flow through a short hole.

    Valid when the flow through the hole is turbulent (high pressure drop, short hole); at low
    Δp with thick oil the real flow is lower and depends on viscosity.
    """
    dp = si(pressure_drop, Kind.PRESSURE, "pressure drop", non_negative=True)
    rho = si(density, Kind.DENSITY, "oil density", positive=True)
    cd = fraction(discharge_coefficient, "discharge coefficient")
    return out(cd * _area(diameter) * math.sqrt(2.0 * dp / rho), Kind.FLOW)


def orifice_pressure_drop(
    flow: Quantity,
    diameter: Quantity,
    discharge_coefficient: Ratio = SHARP_EDGED_CD,
    density: Quantity = OIL_DENSITY,
) -> Quantity:
    """Δp = (ρ / 2) · (Q / (Cd · A))²: the orifice equation solved for the pressure drop."""
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    rho = si(density, Kind.DENSITY, "oil density", positive=True)
    cd = fraction(discharge_coefficient, "discharge coefficient")
    velocity = q / (cd * _area(diameter))
    return out(rho / 2.0 * velocity * velocity, Kind.PRESSURE)


def orifice_diameter(
    flow: Quantity,
    pressure_drop: Quantity,
    discharge_coefficient: Ratio = SHARP_EDGED_CD,
    density: Quantity = OIL_DENSITY,
) -> Quantity:
    """Hole diameter that passes a flow at a pressure drop:
    A = Q / (Cd · √(2 Δp / ρ)), d = √(4 A / π).

    Useful to tell whether a measured bleed flow fits the orifice the drawing shows or a
    drilled-out or half-blocked one."""
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    dp = si(pressure_drop, Kind.PRESSURE, "pressure drop", positive=True)
    rho = si(density, Kind.DENSITY, "oil density", positive=True)
    cd = fraction(discharge_coefficient, "discharge coefficient")
    area = q / (cd * math.sqrt(2.0 * dp / rho))
    return out(math.sqrt(4.0 * area / math.pi), Kind.LENGTH)


def restriction_pressure_drop(
    flow: Quantity,
    known_flow: Quantity,
    known_pressure_drop: Quantity,
    exponent: float = TURBULENT_EXPONENT,
) -> Quantity:
    """Pressure drop across a filter, line or valve at a flow, scaled from one known point:
    Δp = Δp_known · (Q / Q_known)^n.

    n = 2 for turbulent flow (the default), 1 for laminar; real elements lie between. Assumes
    the same oil viscosity as at the known point: a cold-oil filter Δp is not a blocked filter.
    """
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    q_known = si(known_flow, Kind.FLOW, "known flow", positive=True)
    dp_known = si(known_pressure_drop, Kind.PRESSURE, "known pressure drop", non_negative=True)
    if isinstance(exponent, bool) or not isinstance(exponent, (int, float)) or not 0.5 <= exponent <= 3.0:
        raise OutOfRangeError(
            f"flow exponent must be a number from 0.5 to 3 (1 laminar, 2 turbulent); got {exponent!r}"
        )
    return out(dp_known * (q / q_known) ** exponent, Kind.PRESSURE)
