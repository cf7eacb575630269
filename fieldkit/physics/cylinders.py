"""Double-acting cylinders: areas, force, speed, flows, regeneration, drift and intensification.

Sides are named as the trade does: the cap (full bore) side and the rod (annulus) side. A
cylinder extends when oil enters the cap side and retracts when it enters the rod side.
Friction and line losses are left out: forces are what the pressures alone give, speeds what
the flows alone give.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from enum import StrEnum

from fieldkit.physics.common import OutOfRangeError, out, shown, si
from fieldkit.units import Kind, Quantity


class Stroke(StrEnum):
    EXTEND = "extend"
    RETRACT = "retract"


class Side(StrEnum):
    CAP = "cap"
    ROD = "rod"


def _areas(bore: Quantity, rod: Quantity) -> tuple[float, float]:
    """Cap and annulus areas in m² after checking that the rod fits inside the bore."""
    d = si(bore, Kind.LENGTH, "bore", positive=True)
    r = si(rod, Kind.LENGTH, "rod diameter", positive=True)
    if r >= d:
        raise OutOfRangeError(f"rod diameter {shown(rod)} must be smaller than the bore {shown(bore)}")
    cap = math.pi / 4.0 * d * d
    return cap, cap - math.pi / 4.0 * r * r


def _stroke(stroke: Stroke | str) -> Stroke:
    try:
        return Stroke(stroke)
    except ValueError:
        raise OutOfRangeError(f"stroke must be 'extend' or 'retract'; got {stroke!r}") from None


def _side(side: Side | str) -> Side:
    try:
        return Side(side)
    except ValueError:
        raise OutOfRangeError(f"side must be 'cap' or 'rod'; got {side!r}") from None


def bore_area(bore: Quantity) -> Quantity:
    """Full piston area on the cap side, A = π · D² / 4."""
    d = si(bore, Kind.LENGTH, "bore", positive=True)
    return out(math.pi / 4.0 * d * d, Kind.AREA)


def annulus_area(bore: Quantity, rod: Quantity) -> Quantity:
    """Rod-side area, A = π · (D² − d²) / 4: the piston area less what the rod covers."""
    return out(_areas(bore, rod)[1], Kind.AREA)


def cylinder_force(
    pressure: Quantity,
    bore: Quantity,
    rod: Quantity,
    stroke: Stroke | str = Stroke.EXTEND,
    back_pressure: Quantity | None = None,
) -> Quantity:
    """Net force from the pressures, F = p · A_driven − p_back · A_other.

    ``pressure`` acts on the side being fed; ``back_pressure`` is what the meter-out side holds
    (return line, counterbalance valve) and subtracts from the push. A negative result means
    the back pressure wins.
    """
    cap, ann = _areas(bore, rod)
    p = si(pressure, Kind.PRESSURE, "pressure")
    back = 0.0 if back_pressure is None else si(back_pressure, Kind.PRESSURE, "back pressure")
    driven, other = (cap, ann) if _stroke(stroke) is Stroke.EXTEND else (ann, cap)
    return out(p * driven - back * other, Kind.FORCE)


def cylinder_speed(
    flow: Quantity, bore: Quantity, rod: Quantity, stroke: Stroke | str = Stroke.EXTEND
) -> Quantity:
    """Piston speed for the flow into the fed side, v = Q / A (leak-free seals assumed)."""
    cap, ann = _areas(bore, rod)
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    return out(q / (cap if _stroke(stroke) is Stroke.EXTEND else ann), Kind.VELOCITY)


def flow_for_speed(
    speed: Quantity, bore: Quantity, rod: Quantity, stroke: Stroke | str = Stroke.EXTEND
) -> Quantity:
    """Flow the fed side needs for a piston speed, Q = v · A."""
    cap, ann = _areas(bore, rod)
    v = si(speed, Kind.VELOCITY, "piston speed", non_negative=True)
    return out(v * (cap if _stroke(stroke) is Stroke.EXTEND else ann), Kind.FLOW)


def return_flow(
    flow: Quantity, bore: Quantity, rod: Quantity, stroke: Stroke | str = Stroke.EXTEND
) -> Quantity:
    """Flow leaving the other side, Q_out = Q_in · A_out / A_in.

    On retraction the cap side returns more than the pump delivers (by the area ratio), which
    is why a return filter or valve sized on pump flow can be overloaded on that stroke.
    """
    cap, ann = _areas(bore, rod)
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    ratio = ann / cap if _stroke(stroke) is Stroke.EXTEND else cap / ann
    return out(q * ratio, Kind.FLOW)


@dataclass(frozen=True, slots=True)
class Motion:
    """Speed and force of a cylinder stroke."""

    speed: Quantity
    force: Quantity


def regenerative_extension(pressure: Quantity, flow: Quantity, rod: Quantity) -> Motion:
    """Extension with the rod side joined to the cap side: v = Q / A_rod, F = p · A_rod.

    The rod-side oil joins the pump flow, so only the rod's own volume has to be supplied: the
    cylinder runs faster and pushes with only the rod's area. Assumes both sides at the same
    pressure (no loss in the regeneration path).
    """
    r = si(rod, Kind.LENGTH, "rod diameter", positive=True)
    a_rod = math.pi / 4.0 * r * r
    p = si(pressure, Kind.PRESSURE, "pressure")
    q = si(flow, Kind.FLOW, "flow", non_negative=True)
    return Motion(out(q / a_rod, Kind.VELOCITY), out(p * a_rod, Kind.FORCE))


def leakage_from_drift(
    drift_rate: Quantity, bore: Quantity, rod: Quantity, side: Side | str = Side.CAP
) -> Quantity:
    """Leakage that would let a loaded cylinder drift at the measured rate, Q_leak = v · A.

    ``side`` is the side holding the load and losing oil (the cap side of a boom held up, the
    rod side of a load hanging from the rod). With both ports blocked a double-acting cylinder
    locks even when its piston seal passes oil, so drift usually means oil leaves through the
    valve or load-holding valve; this gives that leak's size (trade article, second-hand).
    """
    cap, ann = _areas(bore, rod)
    v = si(drift_rate, Kind.VELOCITY, "drift rate", non_negative=True)
    return out(v * (cap if _side(side) is Side.CAP else ann), Kind.FLOW)


def intensified_rod_pressure(cap_pressure: Quantity, bore: Quantity, rod: Quantity) -> Quantity:
    """Rod-side pressure when the cap side is pressurised and the rod side is blocked:
    p_rod = p_cap · A_cap / A_annulus.

    HAZARD: the trapped rod side reaches a pressure above the system's relief setting (about
    twice it when the rod is 70 % of the bore), enough to burst hoses, fittings and gauges rated for system
    pressure. A gauge on the rod side during such a test must be rated for this value, not
    for the relief setting, and nobody stands near the rod-side lines. The same arithmetic is
    used on purpose to test piston seal bypass by intensification.
    """
    cap, ann = _areas(bore, rod)
    p = si(cap_pressure, Kind.PRESSURE, "cap-side pressure", non_negative=True)
    return out(p * cap / ann, Kind.PRESSURE)
