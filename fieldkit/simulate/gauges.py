"""The gauges a technician tees in at each point, and the error each one puts on a reading.

A technician picks a gauge from what the point should read on a sound machine: a standard range
about 1.5–2 times the working value (field notes: choose a range about twice the working
pressure, common practice) with the steady value within 3/4 of the scale (EN 837-2, from memory).
The error a reading carries is drawn uniformly within ± the limit of error of the gauge's class
(EN 837-1: class % of the span), the same rectangular model :mod:`fieldkit.physics.gauges` uses to
turn a class into a standard uncertainty. Readings are then written to a resolution well inside
that limit (a fifth of it), as a person reads between the marks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache

from fieldkit.model.gauge import Gauge
from fieldkit.model.roles import Role
from fieldkit.physics.gauges import STANDARD_RANGES_BAR, STEADY_FRACTION
from fieldkit.physics.gauges import limit_of_error as en837_limit_of_error
from fieldkit.units import Q_, Kind, to_canonical

#: Full-scale over working value the simulated technician aims for: the middle of 1.5–2.
TARGET_RATIO = 1.75
#: The smallest pressure gauge in the simulated kit (a technician's case rarely holds less).
SMALLEST_PRESSURE_GAUGE_BAR = 6.0
#: Turbine flow meter sizes in the simulated kit, L/min (simulator's own choice of kit).
FLOW_RANGES_LPM: tuple[float, ...] = (10, 20, 40, 60, 100, 150, 250, 400, 600)
#: A flow meter reads up to its full scale; the kit keeps the working flow below 90 % of it.
FLOW_WORKING_FRACTION = 0.9
#: Drift is timed with a tape and a stopwatch, not a gauge: the simulator's own estimate of that
#: reading's error, ±(0.3 mm/min + 3 % of the reading).
DRIFT_ERROR_FIXED = 0.3
DRIFT_ERROR_SHARE = 0.03
DRIFT_STEP = 0.5
#: Share of the scale past which a technician sees the needle near its stop and changes gauge.
NEAR_STOP = 0.9


def _nice_step(x: float) -> float:
    """The largest 1-2-5 step not above x: the resolution a person reads a scale to."""
    if x <= 0:
        return 0.0
    exp = math.floor(math.log10(x))
    for mantissa in (5.0, 2.0, 1.0):
        step = mantissa * 10.0**exp
        if step <= x * (1 + 1e-9):
            return step
    return 10.0 ** (exp - 1) * 5.0


def _pick(ranges: tuple[float, ...], working: float, fraction: float, smallest: float) -> float:
    """The standard range whose ratio to the working value is nearest the target, among those
    that keep the working value within ``fraction`` of the scale."""
    fits = [r for r in ranges if working <= fraction * r and r >= smallest]
    if not fits:
        return max(ranges)
    return min(fits, key=lambda r: abs(r / max(working, 1e-9) - TARGET_RATIO))


def _label(kind: Kind, start: float | None, top: float, accuracy: float, what: str) -> str:
    unit = {Kind.PRESSURE: "bar", Kind.FLOW: "L/min", Kind.TEMPERATURE: "°C", Kind.SPEED: "rpm"}[kind]
    low = f"{start:g}" if start is not None else "0"
    return f"{what} {low} to {top:g} {unit}, class {accuracy:g}"


COMPOUND = Gauge(
    id="C3",
    label=_label(Kind.PRESSURE, -1.0, 3.0, 1.6, "compound gauge"),
    full_scale=Q_(3.0, "bar"),
    scale_start=Q_(-1.0, "bar"),
    accuracy_class=1.6,
)


@cache
def _pressure_gauge(top: float) -> Gauge:
    accuracy = 1.0 if top >= 40 else 1.6
    return Gauge(
        id=f"P{top:g}",
        label=_label(Kind.PRESSURE, None, top, accuracy, "gauge"),
        full_scale=Q_(float(top), "bar"),
        accuracy_class=accuracy,
    )


@cache
def _flow_meter(top: float) -> Gauge:
    accuracy = 1.0 if top >= 100 else 2.0
    return Gauge(
        id=f"F{top:g}",
        label=_label(Kind.FLOW, None, top, accuracy, "turbine flow meter"),
        full_scale=Q_(float(top), "liter / minute"),
        accuracy_class=accuracy,
        standard="flow meter, % of full scale",
    )


def pressure_gauge(working_bar: float) -> Gauge:
    """A Bourdon gauge for a working pressure: a compound −1…3 bar gauge for a vacuum, otherwise
    the standard range nearest 1.75 × the working value. Class 1 from 40 bar up, 1.6 below
    (the usual classes of workshop test gauges, common practice). The kit holds one of each,
    shared by every visit (treat them as read-only)."""
    if working_bar < 0:
        return COMPOUND
    return _pressure_gauge(
        _pick(STANDARD_RANGES_BAR, abs(working_bar), STEADY_FRACTION, SMALLEST_PRESSURE_GAUGE_BAR)
    )


def flow_meter(working_lpm: float) -> Gauge:
    return _flow_meter(_pick(FLOW_RANGES_LPM, working_lpm, FLOW_WORKING_FRACTION, min(FLOW_RANGES_LPM)))


THERMOMETER = Gauge(
    id="TH",
    label="contact thermometer -20 to 150 °C, 1 % of span",
    full_scale=Q_(150.0, "degC"),
    scale_start=Q_(-20.0, "degC"),
    accuracy_class=1.0,
    standard="thermometer, % of span",
)
TACHOMETER = Gauge(
    id="TACH",
    label="optical tachometer 0 to 10000 rpm, 0.1 % of full scale",
    full_scale=Q_(10000.0, "revolution / minute"),
    accuracy_class=0.1,
    standard="tachometer, % of full scale",
)


def gauge_for(kind: Kind, role: Role, working: float) -> Gauge | None:
    """The instrument for a reading of this kind; None where the reading is timed or measured by
    hand (drift)."""
    if kind is Kind.PRESSURE:
        return pressure_gauge(working)
    if kind is Kind.FLOW:
        return flow_meter(working)
    if kind is Kind.TEMPERATURE:
        return THERMOMETER
    if kind is Kind.SPEED:
        return TACHOMETER
    return None


def smaller_gauge(true_bar: float) -> Gauge | None:
    """A pressure gauge one standard range or more below the true pressure, the slip that
    overranges a gauge; None when no standard range is below it."""
    below = [r for r in STANDARD_RANGES_BAR if r < true_bar and r >= SMALLEST_PRESSURE_GAUGE_BAR]
    if not below:
        return None
    return _pressure_gauge(max(below))


@dataclass(frozen=True, slots=True)
class Scale:
    """What the simulator needs of a gauge, in canonical units, worked out once per gauge."""

    limit: float
    bottom: float
    top: float
    step: float


_SCALES: dict[tuple[str, float, float | None, float], Scale] = {}


def scale(gauge: Gauge) -> Scale:
    key = (
        gauge.id,
        float(gauge.full_scale.magnitude),
        None if gauge.scale_start is None else float(gauge.scale_start.magnitude),
        gauge.accuracy_class,
    )
    found = _SCALES.get(key)
    if found is None:
        if gauge.kind is Kind.PRESSURE:
            limit = en837_limit_of_error(gauge.accuracy_class, gauge.full_scale, gauge.scale_start).m_as(
                "bar"
            )
        else:
            span = to_canonical(gauge.full_scale, gauge.kind) - (
                to_canonical(gauge.scale_start, gauge.kind) if gauge.scale_start is not None else 0.0
            )
            limit = gauge.accuracy_class / 100.0 * span
        top = to_canonical(gauge.full_scale, gauge.kind)
        bottom = to_canonical(gauge.scale_start, gauge.kind) if gauge.scale_start is not None else 0.0
        found = _SCALES[key] = Scale(limit, bottom, top, _nice_step(limit / 5.0))
    return found


def limit_of_error(gauge: Gauge) -> float:
    """The gauge's limit of error in the canonical unit of its kind: EN 837-1 for pressure
    gauges (via the physics core), class % of span for the other instruments."""
    return scale(gauge).limit


def top_of_scale(gauge: Gauge) -> float:
    return scale(gauge).top


def read(true: float, gauge: Gauge | None, u: float) -> float:
    """What the technician writes down for a true value: plus an error uniform within ± the
    limit of error (``u`` a uniform draw in [0, 1) places it), rounded to a fifth of that
    limit, and never past either end of the scale (a needle stops at its pin)."""
    if gauge is None:
        limit = DRIFT_ERROR_FIXED + DRIFT_ERROR_SHARE * abs(true)
        value = max(0.0, true + limit * (2.0 * u - 1.0))
        return round(round(value / DRIFT_STEP) * DRIFT_STEP, 6)
    sc = scale(gauge)
    value = true + sc.limit * (2.0 * u - 1.0)
    if gauge.kind is not Kind.TEMPERATURE:
        value = min(max(value, sc.bottom), sc.top)
    if sc.step > 0:
        value = round(value / sc.step) * sc.step
    return round(value, 6)


def resolution(gauge: Gauge | None) -> float:
    """The step readings on this instrument are written to."""
    return DRIFT_STEP if gauge is None else scale(gauge).step


__all__ = [
    "COMPOUND",
    "FLOW_RANGES_LPM",
    "TACHOMETER",
    "THERMOMETER",
    "Scale",
    "flow_meter",
    "gauge_for",
    "limit_of_error",
    "pressure_gauge",
    "read",
    "resolution",
    "scale",
    "smaller_gauge",
    "top_of_scale",
]
