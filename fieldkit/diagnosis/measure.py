"""A reading as the engine sees it: its value in SI, its standard uncertainty, and whether it was
taken under valid test conditions.

The uncertainty comes from the gauge that took it (EN 837-1 class × span, read as a rectangular
distribution: u = a/√3, JCGM 100:2008 clause 4.3.7). A reading with no gauge recorded is given a
stated default instrument for its kind (:func:`default_instrument`), shown as assumed: its error
does not shrink with the reading, so a near-zero reading never looks exact.

A needle at the end of its scale only says "at least this" (EN 837-1 gives no accuracy beyond
the scale): such a reading is *censored*, and every check that uses it treats it so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fieldkit.errors import FieldkitError
from fieldkit.expr.dims import si_value
from fieldkit.model.bounds import impossible
from fieldkit.model.gauge import Gauge
from fieldkit.model.profile import Circuit, MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.model.visit import Reading, Visit
from fieldkit.units import (
    CANONICAL_UNIT,
    Q_,
    Kind,
    PressureReference,
    Quantity,
    kind_of,
    to_canonical,
    to_gauge,
    unit,
)

ASSUMED_CLASS = 2.5
_SQRT3 = math.sqrt(3.0)

#: Standard full-scale values (canonical units) a default instrument is chosen from: the
#: 1 – 1.6 – 2.5 – 4 – 6 series (EN 837-1 ranges, from memory).
_PRESSURE_RANGES = (1.0, 1.6, 2.5, 4.0, 6.0, 10.0, 16.0, 25.0, 40.0, 60.0, 100.0, 160.0, 250.0, 400.0, 600.0)
_FLOW_RANGES = (10.0, 25.0, 60.0, 100.0, 160.0, 250.0, 400.0, 600.0)


@dataclass(frozen=True, slots=True)
class DefaultInstrument:
    """The instrument assumed for a reading with no gauge recorded (shown as assumed)."""

    start: float
    top: float
    accuracy_class: float
    label: str

    @property
    def limit_of_error(self) -> float:
        return self.accuracy_class / 100.0 * (self.top - self.start)


def _smallest(ranges: tuple[float, ...], need: float) -> float:
    return next((r for r in ranges if r >= need), ranges[-1])


def default_instrument(kind: Kind, value: float, point: TestPoint | None = None) -> DefaultInstrument:
    """What a technician would most likely have used, stated so the report can say so.

    * pressure: a class 1.6 gauge (common workshop class, common practice) of the smallest
      standard range that covers the point's highest pressure, or reads the value within 3/4 of
      its scale when the point states none (EN 837-2, from memory); a compound −1 bar start for
      a vacuum;
    * flow: a 2.5 % of full scale flow meter, smallest standard range reading the value within
      3/4 of its scale, never below 0–10 L/min (common practice);
    * temperature: ±2 K, a contact or dial thermometer (common practice);
    * speed: ±25 rpm, an optical tachometer read by hand (0.5 % of 5000 rpm, common practice);
    * anything else: class 2.5 of a scale twice the reading, at least one unit.
    """
    v = abs(value)
    if kind is Kind.PRESSURE:
        start = -1.0 if value < 0 else 0.0
        highest = to_canonical(point.max_pressure, Kind.PRESSURE) if point and point.max_pressure else None
        top = _smallest(_PRESSURE_RANGES, highest if highest is not None else v / 0.75)
        return DefaultInstrument(start, top, 1.6, f"{start:g}–{top:g} bar class 1.6 gauge")
    if kind is Kind.FLOW:
        top = _smallest(_FLOW_RANGES, v / 0.75)
        return DefaultInstrument(0.0, top, 2.5, f"0–{top:g} L/min flow meter, 2.5 % of full scale")
    if kind is Kind.TEMPERATURE:
        return DefaultInstrument(0.0, 200.0, 1.0, "thermometer ±2 K")
    if kind is Kind.SPEED:
        return DefaultInstrument(0.0, 5000.0, 0.5, "tachometer ±25 rpm")
    top = max(2.0 * v, 1.0)
    return DefaultInstrument(
        0.0, top, ASSUMED_CLASS, f"class {ASSUMED_CLASS:g} instrument of twice the reading"
    )


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
    #: Standard uncertainty of the oil temperature the reading was taken at (K).
    u_oil_temp: float = 0.0
    #: +1 when the needle sat at the top of its scale (the truth is at least the reading), −1 at
    #: the bottom of a compound scale (at most), 0 for an ordinary reading.
    censored: int = 0
    #: The instrument assumed when none was recorded; "" when the gauge is known.
    assumed_label: str = ""

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


def _uncertainty(
    value: float, kind: Kind, gauge: Gauge | None, point: TestPoint | None = None
) -> tuple[float, bool, str]:
    if gauge is not None and gauge.kind is kind:
        return gauge_limit_of_error(gauge) / _SQRT3, False, ""
    inst = default_instrument(kind, value, point)
    return inst.limit_of_error / _SQRT3, True, inst.label


def censoring(value: float, kind: Kind, gauge: Gauge | None) -> int:
    """+1 when the reading sits at or past its gauge's full scale, −1 at or below the start of
    a compound or vacuum scale, else 0."""
    if gauge is None or gauge.kind is not kind:
        return 0
    if value >= to_canonical(gauge.full_scale, kind):
        return 1
    if gauge.scale_start is not None and value <= to_canonical(gauge.scale_start, kind):
        return -1
    return 0


def _oil_temperature_at(
    reading: Reading, oil_readings: list[Reading], visit: Visit
) -> tuple[float | None, float]:
    """Oil temperature for a reading and its standard uncertainty: the temperature stated with
    the reading (assumed thermometer), else the nearest oil temperature reading (its gauge)."""
    if reading.condition.oil_temperature is not None:
        t = to_canonical(reading.condition.oil_temperature, Kind.TEMPERATURE)
        return t, default_instrument(Kind.TEMPERATURE, t).limit_of_error / _SQRT3
    if not oil_readings:
        return None, 0.0
    nearest = min(oil_readings, key=lambda r: abs((r.taken_at - reading.taken_at).total_seconds()))
    t = to_canonical(nearest.value, Kind.TEMPERATURE)
    u, _assumed, _label = _uncertainty(t, Kind.TEMPERATURE, visit.gauge(nearest.gauge))
    return t, u


def unusable(reading: Reading, kind: Kind, barometric: Quantity | None = None) -> str:
    """Why a stored reading cannot be computed with ("" when it can). An earlier version, a
    hand-edited file or an import may have stored a value no gauge shows (below a perfect
    vacuum, too large to compute with, or a condition so); such a reading is skipped with a note,
    never allowed to stop the diagnosis of the whole visit."""
    checks = [("value", reading.value, kind, reading.reference)]
    if reading.condition.speed is not None:
        checks.append(("speed in its condition", reading.condition.speed, Kind.SPEED, None))
    if reading.condition.oil_temperature is not None:
        checks.append(
            ("oil temperature in its condition", reading.condition.oil_temperature, Kind.TEMPERATURE, None)
        )
    for what, q, need, reference in checks:
        try:
            if kind_of(q) is not need:
                return f"its {what} is a {kind_of(q).value}, not a {need.value}"
            why = impossible(q, need, reference, barometric)
            if not why and not math.isfinite(si_value(q)):
                why = "it is not a finite number in SI units"
        except (FieldkitError, ArithmeticError, ValueError, TypeError) as exc:
            why = f"it cannot be converted ({exc})"
        if why:
            return f"its {what}: {why}" if what != "value" else why
    return ""


#: How a skipped reading is put right, in the UI and on the command line.
FIX_IT = "correct or delete it (readings trail ^r, or 'fieldkit reading correct|delete')"


def measure_visit(visit: Visit, profile: MachineProfile) -> tuple[list[Measured], list[str]]:
    """Every standing reading of the visit, ready for rules; plus notes on readings it had to skip."""
    points = {tp.id: (c, tp) for c, tp in profile.all_test_points()}
    current = visit.current_readings()
    notes: list[str] = []
    oil = [
        r
        for r in current
        if r.test_point in points
        and points[r.test_point][1].role is Role.OIL_TEMPERATURE
        and not unusable(r, Kind.TEMPERATURE, visit.barometric_pressure)
    ]
    window = profile.test_window
    oil_min = to_canonical(window.oil_min, Kind.TEMPERATURE)
    oil_max = to_canonical(window.oil_max, Kind.TEMPERATURE)
    rated = to_canonical(profile.rated_speed, Kind.SPEED)
    tol = window.speed_tolerance_pct / 100.0
    out: list[Measured] = []
    for r in visit.unreadable_readings():
        where = points[r.test_point][1].label if r.test_point in points else f"test point '{r.test_point}'"
        notes.append(
            f"reading {r.id} at {where} (stored as '{r.entered}') cannot be used: {r.unreadable}; skipped — "
            f"{FIX_IT}"
        )
    for r in current:
        if r.test_point not in points:
            notes.append(
                f"reading {r.id} is for test point '{r.test_point}', which profile '{profile.id}' does not "
                "have; skipped — delete it with 'fieldkit reading delete'"
            )
            continue
        circuit, point = points[r.test_point]
        kind = point.kind
        if kind_of(r.value) is not kind:
            notes.append(
                f"reading {r.id} at {point.label} is a {kind_of(r.value).value}, not a {kind.value}; skipped "
                f"— {FIX_IT}"
            )
            continue
        problem = unusable(r, kind, visit.barometric_pressure)
        if problem:
            notes.append(
                f"reading {r.id} at {point.label} (entered '{r.entered or r.value}') cannot be used: "
                f"{problem}; skipped — {FIX_IT}"
            )
            continue
        q = r.value
        if kind is Kind.PRESSURE and r.reference is PressureReference.ABSOLUTE:
            q = to_gauge(q, r.reference, visit.barometric_pressure)
        canonical = to_canonical(q, kind)
        gauge = visit.gauge(r.gauge)
        u, assumed, label = _uncertainty(canonical, kind, gauge, point)
        oil_c, u_oil = _oil_temperature_at(r, oil, visit)
        invalid = ""
        if point.role not in (Role.OIL_TEMPERATURE, Role.PUMP_SPEED):
            if oil_c is not None and oil_c < oil_min:
                invalid = f"oil at {oil_c:.0f} °C, below the test window ({oil_min:.0f}–{oil_max:.0f} °C)"
            elif oil_c is not None and oil_c > oil_max:
                invalid = f"oil at {oil_c:.0f} °C, above the test window ({oil_min:.0f}–{oil_max:.0f} °C)"
            elif r.condition.speed is not None:
                speed = to_canonical(r.condition.speed, Kind.SPEED)
                if abs(speed - rated) > tol * rated:
                    invalid = (
                        f"speed {speed:.0f} rpm, not within {window.speed_tolerance_pct:g} % of rated "
                        f"{rated:.0f} rpm"
                    )
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
                u_oil_temp=u_oil,
                censored=censoring(canonical, kind, gauge),
                assumed_label=label,
            )
        )
    out.sort(key=lambda m: m.reading.taken_at)
    return out, notes
