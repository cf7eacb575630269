"""Pressure gauges: how far a reading can be trusted, and whether a gauge suits a test point.

A reading is only evidence when its uncertainty is known. EN 837-1 gives a Bourdon gauge's
limit of error by accuracy class; treating that limit as the half-width of a rectangular
distribution (JCGM 100:2008, the GUM) gives a standard uncertainty, and a normal model of the
reading then says how likely the true pressure is beyond a rule's limit. The rule engine calls
a verdict "inconclusive" when that probability is neither small nor large.
"""

from __future__ import annotations

import math

from fieldkit.physics.common import Check, Level, OutOfRangeError, out, shown, si
from fieldkit.units import Q_, Kind, Quantity, unit

#: EN 837-1 accuracy classes: limit of error in % of span, anywhere on the scale.
ACCURACY_CLASSES: tuple[float, ...] = (0.1, 0.25, 0.6, 1.0, 1.6, 2.5, 4.0)

#: Common full-scale values in bar, the 1 – 1.6 – 2.5 – 4 – 6 series (from memory).
STANDARD_RANGES_BAR: tuple[float, ...] = (1, 1.6, 2.5, 4, 6, 10, 16, 25, 40, 60, 100, 160, 250, 400, 600)

#: Steady pressure at most 3/4 of full scale, fluctuating at most 2/3 (EN 837-2, from memory).
STEADY_FRACTION = 0.75
FLUCTUATING_FRACTION = 2.0 / 3.0
#: Below a quarter of the span the class error is a large share of the reading (common practice).
LOW_READING_FRACTION = 0.25

_SQRT3 = math.sqrt(3.0)
_SQRT2 = math.sqrt(2.0)


def _span(full_scale: Quantity, scale_start: Quantity | None) -> tuple[float, float]:
    top = si(full_scale, Kind.PRESSURE, "gauge full scale")
    start = 0.0 if scale_start is None else si(scale_start, Kind.PRESSURE, "gauge scale start")
    if top <= start:
        raise OutOfRangeError(
            f"gauge full scale {shown(full_scale)} must be above its scale start {shown(scale_start)}"
        )
    return top, top - start


def _class(accuracy_class: float) -> float:
    if accuracy_class not in ACCURACY_CLASSES:
        raise OutOfRangeError(
            f"accuracy class {accuracy_class!r} is not an EN 837-1 class; use one of "
            + ", ".join(f"{c:g}" for c in ACCURACY_CLASSES)
        )
    return float(accuracy_class)


def _percent_of_span(accuracy_class: float) -> float:
    """An accuracy figure as % of span from any standard (EN 837-1 class, ASME grade…)."""
    if (
        isinstance(accuracy_class, bool)
        or not isinstance(accuracy_class, (int, float))
        or not 0 < accuracy_class <= 10
    ):
        raise OutOfRangeError(
            f"accuracy class must be a percentage of span above 0 and at most 10; got {accuracy_class!r}"
        )
    return float(accuracy_class)


def limit_of_error(
    accuracy_class: float, full_scale: Quantity, scale_start: Quantity | None = None
) -> Quantity:
    """EN 837-1 limit of error: class % of the span (full scale − scale start).

    The span, not the reading, sets the error, so a compound gauge (−1 to +9 bar) has a span
    of 10 bar and a low reading on a big gauge carries a large relative error.
    """
    _, span = _span(full_scale, scale_start)
    return out(_class(accuracy_class) / 100.0 * span, Kind.PRESSURE)


def standard_uncertainty(limit: Quantity) -> Quantity:
    """u = a / √3: a limit of error ±a read as a rectangular distribution, every value
    within it equally likely (JCGM 100:2008, GUM 4.3.7), since the class says nothing more."""
    return out(si(limit, Kind.PRESSURE, "limit of error", non_negative=True) / _SQRT3, Kind.PRESSURE)


def combined_uncertainty(*uncertainties: Quantity) -> Quantity:
    """Combined standard uncertainty of a sum or difference of independent readings,
    u = √(Σ uᵢ²) (GUM 5.1.2 with sensitivity coefficients ±1, no correlation): e.g. a pressure
    difference read on two gauges."""
    if not uncertainties:
        raise OutOfRangeError("combined uncertainty needs at least one standard uncertainty")
    total = 0.0
    for i, u in enumerate(uncertainties, start=1):
        value = si(u, Kind.PRESSURE, f"standard uncertainty {i}", non_negative=True)
        total += value * value
    return out(math.sqrt(total), Kind.PRESSURE)


def probability_beyond(
    reading: Quantity, limit: Quantity, standard_uncertainty: Quantity, above: bool = True
) -> float:
    """Probability that the true pressure lies beyond ``limit`` (above it, or below with
    ``above=False``), given the reading and its standard uncertainty.

    Model: the true value is normally distributed about the reading with standard deviation
    u, so P(true > limit) = ½ · erfc((limit − reading) / (u · √2)). The normal model is a
    convenience: it treats u as the whole story (no bias, no drift since calibration). With
    u = 0 the answer is 0 or 1.
    """
    x = si(reading, Kind.PRESSURE, "reading")
    lim = si(limit, Kind.PRESSURE, "limit")
    u = si(standard_uncertainty, Kind.PRESSURE, "standard uncertainty", non_negative=True)
    distance = (lim - x) if above else (x - lim)
    if u == 0.0:
        return 1.0 if distance < 0 else 0.0
    return 0.5 * math.erfc(distance / (u * _SQRT2))


def _working_and_peak(working_pressure: Quantity, highest_pressure: Quantity | None) -> tuple[float, float]:
    """Working and highest gauge pressure in Pa; the highest is never below the working pressure."""
    work = si(working_pressure, Kind.PRESSURE, "working pressure")
    if highest_pressure is None:
        return work, work
    return work, max(work, si(highest_pressure, Kind.PRESSURE, "highest pressure"))


def smallest_gauge(
    working_pressure: Quantity,
    highest_pressure: Quantity | None = None,
    ranges_bar: tuple[float, ...] = STANDARD_RANGES_BAR,
    fluctuating: bool = False,
) -> Quantity:
    """The smallest standard 0–X bar gauge that reads ``working_pressure`` within 3/4 of its
    scale (2/3 if it fluctuates) and whose full scale exceeds ``highest_pressure``: the
    smallest suitable range gives the smallest absolute error."""
    work, peak = _working_and_peak(working_pressure, highest_pressure)
    if work < 0:
        raise OutOfRangeError(f"{shown(working_pressure)} is a vacuum: it needs a vacuum or compound gauge")
    share = FLUCTUATING_FRACTION if fluctuating else STEADY_FRACTION
    for top_bar in sorted(ranges_bar):
        top = top_bar * 1e5
        if work <= share * top and peak < top:
            return Q_(float(top_bar), unit("bar"))
    raise OutOfRangeError(f"no standard gauge up to {max(ranges_bar):g} bar suits {shown(working_pressure)}")


def gauge_suitability(
    full_scale: Quantity,
    working_pressure: Quantity,
    highest_pressure: Quantity | None = None,
    scale_start: Quantity | None = None,
    accuracy_class: float | None = None,
    fluctuating: bool = False,
) -> Check:
    """Whether a gauge suits a test point.

    * ERROR if the point can reach the full scale (or, on a vacuum or compound gauge, go
      below the scale start): the gauge is overranged, reads nothing useful and may be
      damaged or burst.
    * WARNING if the steady working pressure is above 3/4 of full scale (2/3 if it fluctuates;
      EN 837-2, from memory): the movement wears and the reading drifts. On a vacuum gauge
      the same share applies to the vacuum side of the scale.
    * WARNING if the reading is below 1/4 of the span (common practice): the class error,
      a share of the span, becomes a large share of the reading.

    ``accuracy_class`` (% of span, from EN 837-1 or the gauge's own standard) only adds the
    size of that error to the message.
    """
    top, span = _span(full_scale, scale_start)
    start = top - span
    class_error = None if accuracy_class is None else _percent_of_span(accuracy_class) / 100.0 * span
    work, peak = _working_and_peak(working_pressure, highest_pressure)
    found: list[Check] = []
    gauge = f"the {shown(full_scale)} gauge"
    overranged = peak >= top or work < start
    if overranged:
        reach = highest_pressure if highest_pressure is not None and peak > work else working_pressure
        try:
            better = smallest_gauge(working_pressure, highest_pressure, fluctuating=fluctuating)
            advice = f"; use a 0–{shown(better)} gauge"
        except OutOfRangeError:
            advice = ""
        found.append(
            Check(
                Level.ERROR,
                f"the point can reach {shown(reach)}, beyond the scale of "
                f"{gauge}: it would be overranged{advice}",
            )
        )
    share = FLUCTUATING_FRACTION if fluctuating else STEADY_FRACTION
    working_side = top if top > 0 else -start  # how far the scale reaches on the side being read
    if not overranged and abs(work) > share * working_side:
        found.append(
            Check(
                Level.WARNING,
                f"working pressure {shown(working_pressure)} is beyond "
                f"{'2/3' if fluctuating else '3/4'} of {gauge}'s scale "
                f"({shown(Q_(share * top, unit('Pa')).to(unit('bar')))}; EN 837-2 keeps "
                f"{'a fluctuating' if fluctuating else 'a steady'} pressure within "
                f"{'2/3' if fluctuating else '3/4'} of the span): choose a larger range",
            )
        )
    if abs(work) < LOW_READING_FRACTION * span:
        detail = ""
        if class_error is not None and work != 0:
            share_of_reading = 100.0 * class_error / abs(work)
            detail = f" (±{class_error / 1e5:.3g} bar, {share_of_reading:.0f} % of the reading)"
        advice = "" if overranged else "; a smaller range reads it better"
        found.append(
            Check(
                Level.WARNING,
                f"working pressure {shown(working_pressure)} is below a quarter of "
                f"{gauge}'s span: the relative error is large{detail}{advice}",
            )
        )
    return Check.combine(found, f"{gauge} suits a working pressure of {shown(working_pressure)}")
