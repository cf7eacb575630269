"""Over-pressure: a reading that says a relief did not open, or a point saw more than its rating.

A reading is over-pressure when it is above the point's stated rating (``max_pressure``), or
above the relief setting that governs the point by more than the gauge's limit of error plus a
margin. The margin keeps an ordinary relief set a little high (a fault, ranked by the rules) apart
from a relief that failed to open (a danger: stop the test, do not repeat it).

The governing setting comes from the circuit: its relief layout (series settings add, in parallel
the lowest opens first, each at full flow with its override), and the setting parameters the
profile gives, plus the back pressure where the relief discharges: the return line, the pump case
for a charge relief, and the low side (charge pressure) for a cross-port relief stated as a
differential (the circuit's ``cross_port_relief_convention``).
"""

from __future__ import annotations

from dataclasses import dataclass

from fieldkit.model.profile import Circuit, ReliefLayout, TestPoint
from fieldkit.model.roles import ROLES, Role
from fieldkit.units import Kind, format_value, to_canonical

#: Margin above the governing relief setting, as a share of it, beyond the gauge's error.
#: common practice: a relief's full-flow pressure sits a few per cent above its cracking setting;
#: well beyond that the valve did not open. 440 bar on a 400 bar relief (issue 17) is over it.
MARGIN_SHARE = 0.05

#: Setting parameters that cap the pressure at high-pressure points (the highest one governs).
HIGH_SIDE_SETTINGS = ("high_pressure_relief_setting", "main_relief_setting", "compensator_setting")
#: Low-pressure points capped by their own relief.
OWN_RELIEF = {
    Role.CHARGE_PRESSURE: "charge_relief_setting",
    Role.CHARGE_PRESSURE_LOW_IDLE: "charge_relief_setting",
    Role.PILOT_PRESSURE: "pilot_relief_setting",
}


def _differential_loop(circuit: Circuit, point: TestPoint) -> bool:
    """A closed loop's port whose cross-port relief is stated as a differential: it holds the
    setting above the low side, which sits at charge pressure (field notes, independent audit)."""
    return (
        circuit.kind.value == "closed_loop_drive"
        and circuit.cross_port_relief_convention == "differential"
        and point.role in (Role.LOOP_A_PRESSURE, Role.LOOP_B_PRESSURE)
    )


def back_pressure_role(circuit: Circuit, point: TestPoint) -> Role | None:
    """Where the relief governing this point discharges, as a reading: its pressure adds to the
    setting one for one (field notes, relief valves). A charge relief dumps into the pump case;
    a differential cross-port relief into the low side at charge pressure; main reliefs into the
    return line."""
    if point.role in (Role.CHARGE_PRESSURE, Role.CHARGE_PRESSURE_LOW_IDLE):
        return Role.CASE_PRESSURE
    if _differential_loop(circuit, point):
        return Role.CHARGE_PRESSURE
    if ROLES[point.role].high_pressure and point.kind is Kind.PRESSURE:
        return Role.RETURN_PRESSURE
    return None


def assumed_back_pressure(circuit: Circuit, point: TestPoint) -> float:
    """The back pressure to assume (bar) when none was read: the charge relief setting under a
    differential cross-port relief (the low side cannot sit above it), else none."""
    if _differential_loop(circuit, point):
        q = circuit.parameters.get("charge_relief_setting")
        if q is not None:
            return to_canonical(q, Kind.PRESSURE)
    return 0.0


@dataclass(frozen=True, slots=True)
class Limit:
    """The pressure a healthy circuit cannot exceed at a point, in bar, and what it is."""

    bar: float
    what: str


@dataclass(frozen=True, slots=True)
class OverPressure:
    value_bar: float
    limit: Limit
    allowance_bar: float  # gauge error plus margin; 0 for the point's rating
    message: str


def _layout_bar(layout: ReliefLayout, settings: dict[str, float]) -> float:
    values = [settings[m] if isinstance(m, str) else _layout_bar(m, settings) for m in layout.members()]
    return sum(values) if layout.series else min(values)


def relief_limit(circuit: Circuit, point: TestPoint) -> Limit | None:
    """The governing relief setting at this point, or None when the profile gives none."""
    if point.kind is not Kind.PRESSURE:
        return None
    candidates: list[Limit] = []
    if ROLES[point.role].high_pressure:
        full = {
            r.id: to_canonical(r.setting, Kind.PRESSURE)
            + (to_canonical(r.override, Kind.PRESSURE) if r.override is not None else 0.0)
            for r in circuit.reliefs
        }
        if circuit.relief_layout is not None:
            candidates.append(
                Limit(_layout_bar(circuit.relief_layout, full), "setting of the circuit's reliefs")
            )
        elif full:
            rid = max(full, key=full.__getitem__)
            candidates.append(Limit(full[rid], f"setting of relief '{rid}'"))
        names: tuple[str, ...] = HIGH_SIDE_SETTINGS
    else:
        names = (OWN_RELIEF[point.role],) if point.role in OWN_RELIEF else ()
    for name in names:
        q = circuit.parameters.get(name)
        if q is not None:
            candidates.append(Limit(to_canonical(q, Kind.PRESSURE), name.replace("_", " ")))
    return max(candidates, key=lambda c: c.bar) if candidates else None


def check_over_pressure(
    value_bar: float,
    gauge_error_bar: float,
    circuit: Circuit,
    point: TestPoint,
    back_pressure_bar: float = 0.0,
) -> OverPressure | None:
    """Whether a pressure reading (gauge, bar) is over-pressure at this point; None when not.
    ``back_pressure_bar`` is what was read where the governing relief discharges (it adds)."""
    if point.kind is not Kind.PRESSURE:
        return None
    shown = format_value
    if point.max_pressure is not None:
        rating = to_canonical(point.max_pressure, Kind.PRESSURE)
        if value_bar > rating:
            return OverPressure(
                value_bar,
                Limit(rating, "the point's rating"),
                0.0,
                f"{point.label} read {value_bar:.4g} bar, above the point's rating of "
                f"{shown(point.max_pressure)}.",
            )
    relief = relief_limit(circuit, point)
    if relief is None:
        return None
    limit = relief
    said = f"{relief.what} ({relief.bar:.4g} bar)"
    if back_pressure_bar > 0:
        limit = Limit(relief.bar + back_pressure_bar, f"{relief.what} plus back pressure")
        said += f" plus {back_pressure_bar:.3g} bar where it discharges, {limit.bar:.4g} bar,"
    allowance = gauge_error_bar + MARGIN_SHARE * limit.bar
    if value_bar > limit.bar + allowance:
        return OverPressure(
            value_bar,
            limit,
            allowance,
            f"{point.label} read {value_bar:.4g} bar, above the {said} by more than the gauge's "
            f"error and a {MARGIN_SHARE:.0%} margin ({allowance:.2g} bar together).",
        )
    return None
