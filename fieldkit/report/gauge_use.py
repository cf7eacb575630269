"""How each pressure gauge suited its test point, as separate facts a job card can lay out briefly.

The diagnosis gives one sentence per reading (:func:`fieldkit.diagnosis.engine.gauge_advice`),
with every concern about the gauge joined together. A printed card needs them apart: a gauge too
small for its point (it can be overranged, and may burst) deserves a line of its own under the
reading, while a reading low on a big gauge's scale only needs its error shown as a share of the
reading. The tests follow :func:`fieldkit.physics.gauges.gauge_suitability` (EN 837-1 span and
class, the quarter-of-span rule of common practice) on the same measured values the diagnosis
used, and a test checks that the two always agree on which readings have which concern.
"""

from __future__ import annotations

from dataclasses import dataclass

from fieldkit.diagnosis.measure import Measured, measure_visit
from fieldkit.errors import FieldkitError
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.physics.gauges import (
    FLUCTUATING_FRACTION,
    LOW_READING_FRACTION,
    STEADY_FRACTION,
    smallest_gauge,
)
from fieldkit.units import Q_, DisplaySystem, Kind, format_value, to_canonical, unit


@dataclass(frozen=True, slots=True)
class GaugeUse:
    """What the card must say about the gauge behind one reading; all empty when it suited."""

    #: The point can reach the gauge's full scale: a sentence naming a gauge that suits.
    overrange: str = ""
    #: Read below a quarter of the span, where the gauge's error is a large share of the reading.
    low: bool = False
    #: Read above 3/4 of the scale, or 2/3 where the pressure fluctuates (EN 837-2).
    high_on_scale: bool = False


def gauge_uses(visit: Visit, profile: MachineProfile, system: DisplaySystem) -> dict[str, GaugeUse]:
    """Reading id → how its gauge suited the point, for readings taken on a pressure gauge."""
    measured, _notes = measure_visit(visit, profile)
    return {m.reading.id: use for m in measured if (use := _use(m, system)) is not None}


def _use(m: Measured, system: DisplaySystem) -> GaugeUse | None:
    g = m.gauge
    # The same readings the diagnosis judges (engine.gauge_advice): pressure on a pressure gauge.
    if g is None or m.kind is not Kind.PRESSURE or g.kind is not Kind.PRESSURE:
        return None
    top = to_canonical(g.full_scale, Kind.PRESSURE)
    start = to_canonical(g.scale_start, Kind.PRESSURE) if g.scale_start is not None else 0.0
    if top <= start:
        return None  # an odd gauge record: the diagnosis says so in its own words
    span = top - start
    work = m.canonical
    rated = m.point.highest_on_scale
    highest = to_canonical(rated, Kind.PRESSURE) if rated is not None else None
    peak = work if highest is None else max(work, highest)
    overrange = ""
    if work < start:
        overrange = (
            f"Gauge unsuited: the reading {_bar(work, system)} lies below the start of its scale "
            f"({_bar(start, system)}); use a vacuum or compound gauge that covers it."
        )
    elif peak >= top:
        reach = highest if highest is not None and peak > work else work
        overrange = (
            f"Gauge too small: the point can reach {_bar(reach, system)}, past its "
            f"{format_value(g.full_scale, system)} scale"
        )
        try:
            better = smallest_gauge(
                Q_(work, unit("bar")),
                Q_(highest, unit("bar")) if highest is not None else None,
                fluctuating=m.point.fluctuates(m.reading.condition.function),
            )
            overrange += f"; use a 0–{format_value(better, spelling='bar')} gauge."
        except FieldkitError:
            overrange += "."
    working_side = top if top > 0 else -start
    share = FLUCTUATING_FRACTION if m.point.fluctuates(m.reading.condition.function) else STEADY_FRACTION
    high = not overrange and abs(work) > share * working_side
    low = (
        bool(work) and abs(work) < LOW_READING_FRACTION * span
    )  # at zero a share means nothing: advice stays
    return GaugeUse(overrange, low, high)


def _bar(value: float, system: DisplaySystem) -> str:
    return format_value(Q_(value, unit("bar")), system, kind=Kind.PRESSURE)
