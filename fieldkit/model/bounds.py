"""What a reading can physically be, and what is possible but unlikely enough to ask about.

A value no instrument can show (an absolute pressure below a perfect vacuum, a temperature
below absolute zero, a negative flow or speed, a number too large to compute with) is refused
with the reason. A value that is possible but implausible for the point (more than twice its
highest pressure or expected range, or above 2000 bar anywhere) is asked about before it is
saved: a slip of the finger must not become a finding on a job card.

The same test serves the engine: a stored reading that fails it (an earlier version, an import
or a hand-edited file may have stored one) is skipped with a note, never allowed to stop the
diagnosis of the whole visit.
"""

from __future__ import annotations

import math

import pint

from fieldkit.units import STANDARD_ATMOSPHERE, Kind, PressureReference, Quantity, format_value, to_canonical

#: Absolute zero, −273.15 °C (SI Brochure, 9th ed., 2.3.1: 0 K = −273.15 °C).
ABSOLUTE_ZERO_C = -273.15
#: Above this, in the kind's canonical unit (bar, L/min, °C, rpm, mm/min…), a number is no
#: reading at all: no gauge, meter or thermometer in hydraulics shows a billion of its unit,
#: and arithmetic on such numbers (uncertainties, sums) overflows.
LARGEST = 1e9
#: Above this gauge pressure a reading is asked about on any point: mobile and industrial
#: hydraulics work below about 700 bar, high-pressure tooling below about 1500 bar (common practice).
HIGHEST_PLAUSIBLE_BAR = 2000.0
#: Above this an oil temperature is asked about: mineral hydraulic oil is degraded quickly well
#: below it (field notes: seals and hoses degrade above about 82 °C; common practice).
HOTTEST_PLAUSIBLE_C = 150.0
#: A reading above this multiple of the point's highest pressure (or of the top of its expected
#: range) is asked about (issue 10's rule: twice the point's maximum).
PLAUSIBLE_FACTOR = 2.0


def impossible(
    q: Quantity,
    kind: Kind,
    reference: PressureReference | None = None,
    barometric: Quantity | None = None,
) -> str:
    """Why this value cannot be a reading ("" when it can)."""
    try:
        value = to_canonical(q, kind)
    except (pint.DimensionalityError, ValueError, TypeError) as exc:
        return f"it cannot be read as a {kind.value} ({exc})"
    if not math.isfinite(value) or not math.isfinite(float(q.magnitude)):
        return "it is not a finite number"
    if abs(value) > LARGEST:
        return f"{_shown(q, kind)} is far beyond anything a gauge or meter shows"
    if kind is Kind.PRESSURE:
        atmosphere = to_canonical(barometric if barometric is not None else STANDARD_ATMOSPHERE, kind)
        if reference is PressureReference.ABSOLUTE and value < 0:
            return (
                f"an absolute pressure cannot be below zero (0 bar abs is a perfect vacuum); "
                f"{_shown(q, kind)} abs is impossible"
            )
        if reference in (PressureReference.GAUGE, None) and value < -atmosphere:
            return (
                f"a gauge pressure cannot be below −{atmosphere:.3f} bar (a perfect vacuum at "
                f"{'the recorded' if barometric is not None else 'standard'} atmospheric pressure); "
                f"{_shown(q, kind)} is impossible"
            )
    if kind is Kind.TEMPERATURE and value < ABSOLUTE_ZERO_C:
        return f"{_shown(q, kind)} is below absolute zero (−273.15 °C)"
    if kind is Kind.FLOW and value < 0:
        return (
            f"a flow cannot be negative ({_shown(q, kind)}); a meter reading backwards is fitted "
            "the wrong way round: turn it and read again"
        )
    if kind is Kind.SPEED and value < 0:
        return f"a speed is counted without a sign ({_shown(q, kind)}); type it without the minus"
    return ""


def implausible(
    q: Quantity,
    kind: Kind,
    reference: PressureReference | None,
    highest: list[Quantity],
    barometric: Quantity | None = None,
) -> str:
    """Why a possible value is unlikely enough at this point to ask before saving ("" if not).

    ``highest`` are the point's own ceilings: its highest pressure and the tops of its ranges."""
    value = to_canonical(q, kind)
    if kind is Kind.PRESSURE and reference is PressureReference.ABSOLUTE:
        atmosphere = to_canonical(barometric if barometric is not None else STANDARD_ATMOSPHERE, kind)
        value -= atmosphere
    if kind is Kind.PRESSURE and value > HIGHEST_PLAUSIBLE_BAR:
        return (
            f"{_shown(q, kind)} is above {HIGHEST_PLAUSIBLE_BAR:g} bar, "
            "more than any hydraulic test point sees"
        )
    if kind is Kind.TEMPERATURE and value > HOTTEST_PLAUSIBLE_C:
        return f"{_shown(q, kind)} is hotter than hydraulic oil runs (above {HOTTEST_PLAUSIBLE_C:g} °C)"
    tops = [to_canonical(h, kind) for h in highest]
    tops = [t for t in tops if t > 0]
    if tops and kind is not Kind.TEMPERATURE:
        top = max(tops)
        if abs(value) > PLAUSIBLE_FACTOR * top:
            return (
                f"{_shown(q, kind)} is more than {PLAUSIBLE_FACTOR:g} × the most this point should see "
                f"({format_value(max(highest, key=lambda h: to_canonical(h, kind)))})"
            )
    return ""


def _shown(q: Quantity, kind: Kind) -> str:
    try:
        return format_value(q, kind=kind)
    except Exception:  # a value that cannot even be formatted is still named plainly
        return f"{q.magnitude!r} {q.units:~P}"
