"""Hypothesis strategies for visits as a technician might log them (values, units, conditions,
notes in any script), used by the round-trip tests of the store and the JSON export."""

from __future__ import annotations

import datetime as dt
from datetime import UTC

from hypothesis import strategies as st
from store_builders import CASE_DRAIN, CHARGE, LOOP_A, MACHINE, gauge

from fieldkit.model.visit import Condition, FunctionState, Reading, Visit
from fieldkit.units import Q_, PressureReference, unit

# Units a gauge or meter reads in, as pint expressions (our spellings map onto these).
PRESSURE_UNITS = ("bar", "psi", "megapascal", "kilopascal", "millibar")
FLOW_UNITS = ("liter / minute", "gallon / minute")

# Magnitudes a gauge can show. Outside about 1e-4…1e15 a float's shortest text uses an exponent,
# which the quantity text format does not write; no reading in this trade gets there.
magnitudes = st.one_of(
    st.floats(min_value=0.001, max_value=1e6, allow_nan=False, allow_infinity=False),
    st.integers(min_value=0, max_value=100_000).map(float),
)
plain_text = st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc")), max_size=60).map(str.strip)
moments = st.datetimes(
    min_value=dt.datetime(2000, 1, 1), max_value=dt.datetime(2099, 12, 31), timezones=st.just(UTC)
)


@st.composite
def readings(draw: st.DrawFn) -> Reading:
    point = draw(st.sampled_from((CHARGE, CASE_DRAIN, LOOP_A)))
    if point == CASE_DRAIN:
        value, reference = Q_(draw(magnitudes), unit(draw(st.sampled_from(FLOW_UNITS)))), None
    else:
        sign = draw(st.sampled_from((1.0, -1.0))) if point == CHARGE else 1.0
        value = Q_(sign * draw(magnitudes), unit(draw(st.sampled_from(PRESSURE_UNITS))))
        reference = draw(st.sampled_from(tuple(PressureReference)))
    condition = Condition(
        function=draw(st.sampled_from(tuple(FunctionState))),
        speed=draw(st.none() | magnitudes.map(lambda m: Q_(m, unit("revolution / minute")))),
        oil_temperature=draw(
            st.none()
            | st.builds(
                lambda m, s: Q_(s * m, unit("degC")),
                st.floats(min_value=0.001, max_value=150),
                st.sampled_from((1.0, -1.0)),
            )
        ),
    )
    return Reading(
        test_point=point,
        value=value,
        reference=reference,
        condition=condition,
        gauge=draw(st.none() | st.just("g60")),
        taken_at=draw(moments),
        note=draw(plain_text),
    )


@st.composite
def visits(draw: st.DrawFn, max_readings: int = 12) -> Visit:
    logged = draw(st.lists(readings(), max_size=max_readings))
    # Some readings corrected (pointing at an earlier one) or deleted, as on a real visit.
    final: list[Reading] = []
    for i, r in enumerate(logged):
        update: dict[str, object] = {}
        if i and draw(st.booleans()):
            update["replaces"] = final[draw(st.integers(0, i - 1))].id
        if draw(st.integers(0, 5)) == 0:
            update["deleted_at"] = draw(moments)
        final.append(Reading.model_validate({**r.model_dump(), **update}) if update else r)
    return Visit(
        job_number=draw(st.text(alphabet="ABCDEFGHJKLMNPQRSTUVWXYZ0123456789-/", min_size=1, max_size=20)),
        customer=draw(plain_text),
        machine=MACHINE,
        technician=draw(plain_text),
        hour_meter=draw(st.none() | st.floats(min_value=0, max_value=100_000)),
        barometric_pressure=draw(
            st.none() | st.floats(min_value=900, max_value=1100).map(lambda m: Q_(m, unit("millibar")))
        ),
        gauges=[gauge()],
        readings=final,
        notes=draw(plain_text),
    )
