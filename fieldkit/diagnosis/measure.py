"""A reading as the engine sees it: its value in SI, its standard uncertainty, and whether it was
taken under valid test conditions.

The uncertainty comes from the gauge that took it (EN 837-1 class × span, read as a rectangular
distribution: u = a/√3, JCGM 100:2008 clause 4.3.7). A reading with no gauge recorded is given
an assumed class 2.5 gauge of twice the reading's size (common practice: pick a range about twice
the working value), and says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fieldkit.expr.dims import si_value
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading, Visit
from fieldkit.units import CANONICAL_UNIT, Q_, Kind, PressureReference, kind_of, to_canonical, to_gauge, unit

ASSUMED_CLASS = 2.5
_SQRT3 = math.sqrt(3.0)


@dataclass(slots=True)
class Measured:
    reading: Reading
    circuit: Circuit
    point: TestPoint
    kind: Kind
    canonical: float  # in the kind's canonical unit (bar, L/min, °C…)
    u_canonical: float  # standard uncertainty, same unit
    si: float  # SI base units, what expressions compute with
    u_si: float
    gauge: Gauge | None
    assumed_gauge: bool
    oil_temp_c: float | None
    invalid: str  # why the test conditions were not valid; "" when they were

    @property
    def role(self) -> Role:
        return self.point.role


def _si_per_canonical(kind: Kind) -> float:
    """SI base units per canonical unit for differences (uncertainties are differences)."""
    if kind is Kind.TEMPERATURE:
        return 1.0
    return si_value(Q_(1.0, unit(CANONICAL_UNIT[kind])))


_SCALE: dict[Kind, float] = {}


def si_scale(kind: Kind) -> float:
    if kind not in _SCALE:
        _SCALE[kind] = _si_per_canonical(kind)
    return _SCALE[kind]


def gauge_limit_of_error(gauge: Gauge) -> float:
    """EN 837-1 limit of error (class % of span) in the canonical unit of the gauge's kind."""
    kind = gauge.kind
    top = to_canonical(gauge.full_scale, kind)
    start = to_canonical(gauge.scale_start, kind) if gauge.scale_start is not None else 0.0
    return gauge.accuracy_class / 100.0 * (top - start)


def _uncertainty(value: float, kind: Kind, gauge: Gauge | None) -> tuple[float, bool]:
    if gauge is not None and gauge.kind is kind:
        return gauge_limit_of_error(gauge) / _SQRT3, False
    span = max(2.0 * abs(value), 1.0)
    return ASSUMED_CLASS / 100.0 * span / _SQRT3, True


def _oil_temperature_at(reading: Reading, oil_readings: list[Reading]) -> float | None:
    if reading.condition.oil_temperature is not None:
        return to_canonical(reading.condition.oil_temperature, Kind.TEMPERATURE)
    if not oil_readings:
        return None
    nearest = min(oil_readings, key=lambda r: abs((r.taken_at - reading.taken_at).total_seconds()))
    return to_canonical(nearest.value, Kind.TEMPERATURE)


def measure_visit(visit: Visit, profile: MachineProfile) -> tuple[list[Measured], list[str]]:
    """Every standing reading of the visit, ready for rules; plus notes on readings it had to skip."""
    points = {tp.id: (c, tp) for c, tp in profile.all_test_points()}
    current = visit.current_readings()
    notes: list[str] = []
    oil = [
        r for r in current if r.test_point in points and points[r.test_point][1].role is Role.OIL_TEMPERATURE
    ]
    window = profile.test_window
    oil_min = to_canonical(window.oil_min, Kind.TEMPERATURE)
    oil_max = to_canonical(window.oil_max, Kind.TEMPERATURE)
    rated = to_canonical(profile.rated_speed, Kind.SPEED)
    tol = window.speed_tolerance_pct / 100.0
    out: list[Measured] = []
    for r in current:
        if r.test_point not in points:
            notes.append(
                f"reading {r.id} is for test point '{r.test_point}', which profile '{profile.id}' does not have; skipped"
            )
            continue
        circuit, point = points[r.test_point]
        kind = point.kind
        if kind_of(r.value) is not kind:
            notes.append(
                f"reading {r.id} at {point.label} is a {kind_of(r.value).value}, not a {kind.value}; skipped"
            )
            continue
        q = r.value
        if kind is Kind.PRESSURE and r.reference is PressureReference.ABSOLUTE:
            q = to_gauge(q, r.reference, visit.barometric_pressure)
        canonical = to_canonical(q, kind)
        gauge = visit.gauge(r.gauge)
        u, assumed = _uncertainty(canonical, kind, gauge)
        oil_c = _oil_temperature_at(r, oil)
        invalid = ""
        if point.role not in (Role.OIL_TEMPERATURE, Role.PUMP_SPEED):
            if oil_c is not None and oil_c < oil_min:
                invalid = f"oil at {oil_c:.0f} °C, below the test window ({oil_min:.0f}–{oil_max:.0f} °C)"
            elif oil_c is not None and oil_c > oil_max:
                invalid = f"oil at {oil_c:.0f} °C, above the test window ({oil_min:.0f}–{oil_max:.0f} °C)"
            elif r.condition.speed is not None:
                speed = to_canonical(r.condition.speed, Kind.SPEED)
                if abs(speed - rated) > tol * rated:
                    invalid = f"speed {speed:.0f} rpm, not within {window.speed_tolerance_pct:g} % of rated {rated:.0f} rpm"
        out.append(
            Measured(
                reading=r,
                circuit=circuit,
                point=point,
                kind=kind,
                canonical=canonical,
                u_canonical=u,
                si=si_value(q),
                u_si=u * si_scale(kind),
                gauge=gauge,
                assumed_gauge=assumed,
                oil_temp_c=oil_c,
                invalid=invalid,
            )
        )
    out.sort(key=lambda m: m.reading.taken_at)
    return out, notes
