"""A service visit as the technician records it: exact JSON round trips, readings that keep
their reference, corrections that hide what they replace, and strict keys."""

from __future__ import annotations

import json
from datetime import UTC, datetime, timedelta, timezone
from pathlib import Path

import pytest
from pydantic import ValidationError

from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.visit import Reading, Visit
from fieldkit.resources import samples_dir
from fieldkit.units import Q_, PressureReference, unit

SAMPLE_VISITS = sorted((samples_dir() / "visits").glob("*.json"))
ON_SITE = timezone(timedelta(hours=2))  # a technician's laptop clock in summer time


def at(hour: int, minute: int = 0) -> datetime:
    return datetime(2025, 4, 8, hour, minute, tzinfo=ON_SITE)


def awkward_visit() -> Visit:
    """A visit whose values are hard to write exactly: thousands commas, thirds, °F, inHg, tiny flows."""
    return Visit(
        id="rt-001",
        job_number="RT-001",
        machine="tarnhollow-fellborer",
        technician="Test Fitter",
        barometric_pressure="29.92 inHg",
        gauges=[
            Gauge(id="G600", full_scale="600 bar", accuracy_class=1.0),
            Gauge(id="C3", full_scale="3 bar", scale_start="-1 bar", accuracy_class=1.6),
        ],
        readings=[
            Reading(
                id="r1",
                test_point="travel.loop_a",
                value="3,500 psi",
                entered="3,500 psi",
                gauge="G600",
                condition=Condition(
                    function=FunctionState.STALLED, speed="2200 rpm", oil_temperature="131 F"
                ),
                taken_at=at(9, 15),
            ),
            Reading(
                id="r2",
                test_point="travel.charge",
                value=Q_(1 / 3, unit("bar")),
                reference=PressureReference.GAUGE,
                taken_at=at(9, 20),
            ),
            Reading(
                id="r3",
                test_point="travel.charge_inlet",
                value="0.75 bar abs",
                gauge="C3",
                taken_at=at(9, 25),
            ),
            Reading(
                id="r4",
                test_point="travel.pump_drain",
                value=Q_(0.1 + 0.2, unit("gallon / minute")),
                taken_at=at(9, 30),
                note='meter [FM20] read twice; "steady"',
            ),
            Reading(
                id="r5", test_point="travel.loop_a", value="241.3 bar", replaces="r1", taken_at=at(9, 40)
            ),
            Reading(
                id="r6",
                test_point="travel.oil_temp",
                value=Q_(-160 / 9, unit("degC")),  # 0 °F
                taken_at=at(9, 45),
                deleted_at=at(9, 50),
            ),
        ],
        notes="Ünïcode notes, a tab\tand a newline\nare kept.",
    )


@pytest.mark.parametrize("path", SAMPLE_VISITS, ids=[p.name for p in SAMPLE_VISITS])
def test_sample_visit_json_round_trip_is_exact(path: Path) -> None:
    visit = Visit.model_validate_json(path.read_text(encoding="utf-8"))
    text = visit.model_dump_json()
    again = Visit.model_validate_json(text)
    assert again == visit
    assert again.model_dump_json() == text


def test_awkward_values_survive_a_json_round_trip_to_the_last_bit() -> None:
    visit = awkward_visit()
    again = Visit.model_validate_json(visit.model_dump_json())
    assert again == visit
    for before, after in zip(visit.readings, again.readings, strict=True):
        # Equality in pint converts units; a round trip must also keep the unit the gauge showed.
        assert after.value.units == before.value.units
        assert after.value.magnitude == before.value.magnitude
        assert after.reference is before.reference
    assert again.barometric_pressure.units == unit("inch_Hg")


def test_reading_times_are_kept_in_utc() -> None:
    reading = awkward_visit().readings[0]
    assert reading.taken_at == datetime(2025, 4, 8, 7, 15, tzinfo=UTC)
    assert reading.taken_at.utcoffset() == timedelta(0)


def test_reading_time_without_a_time_zone_is_refused() -> None:
    with pytest.raises(ValidationError, match="time zone"):
        Reading(test_point="travel.charge", value="24 bar", taken_at=datetime(2025, 4, 8, 9, 15))


def test_pressure_reading_built_in_code_without_a_reference_round_trips() -> None:
    reading = Reading(id="r1", test_point="travel.charge", value=Q_(24.0, unit("bar")), taken_at=at(9))
    assert Reading.model_validate_json(reading.model_dump_json()) == reading


# --- pressure reference ----------------------------------------------------------------------


def test_reading_typed_as_bar_abs_keeps_its_absolute_reference() -> None:
    reading = Reading(test_point="travel.charge_inlet", value="0.75 bar abs")
    assert reading.reference is PressureReference.ABSOLUTE
    assert reading.value.magnitude == 0.75
    assert Reading.model_validate_json(reading.model_dump_json()).reference is PressureReference.ABSOLUTE


def test_reading_typed_as_psia_keeps_its_absolute_reference() -> None:
    assert (
        Reading(test_point="travel.charge_inlet", value="11.2 psia").reference is PressureReference.ABSOLUTE
    )


def test_plain_pressure_text_is_a_gauge_reading_and_a_flow_has_no_reference() -> None:
    assert Reading(test_point="travel.charge", value="24 bar").reference is PressureReference.GAUGE
    assert Reading(test_point="travel.pump_drain", value="3.1 L/min").reference is None


def test_absolute_text_with_a_gauge_reference_is_a_contradiction() -> None:
    with pytest.raises(ValidationError, match="value says absolute but reference says gauge"):
        Reading(test_point="travel.charge_inlet", value="0.75 bar abs", reference="gauge")


def test_reading_value_without_a_unit_is_refused() -> None:
    with pytest.raises(ValidationError, match="unit"):
        Reading(test_point="travel.charge", value=24)


# --- strict keys ------------------------------------------------------------------------------


def test_reading_with_an_unknown_key_names_the_key() -> None:
    with pytest.raises(ValidationError) as caught:
        Reading(test_point="travel.charge", value="24 bar", colour="red")
    assert "colour" in str(caught.value)
    assert caught.value.errors()[0]["type"] == "extra_forbidden"


def test_visit_json_with_a_misspelt_key_names_the_key() -> None:
    data = json.loads(awkward_visit().model_dump_json())
    data["job_nubmer"] = data.pop("job_number")
    with pytest.raises(ValidationError) as caught:
        Visit.model_validate_json(json.dumps(data))
    locations = {".".join(map(str, e["loc"])) for e in caught.value.errors()}
    assert "job_nubmer" in locations and "job_number" in locations
    assert "job_nubmer" in str(caught.value)


def test_misspelt_key_inside_a_reading_names_its_path() -> None:
    data = json.loads(awkward_visit().model_dump_json())
    data["readings"][2]["gague"] = "C3"
    with pytest.raises(ValidationError) as caught:
        Visit.model_validate_json(json.dumps(data))
    assert [tuple(e["loc"]) for e in caught.value.errors()] == [("readings", 2, "gague")]


# --- corrections and deletions ---------------------------------------------------------------


def test_current_readings_hide_deleted_and_replaced_readings() -> None:
    visit = awkward_visit()
    assert [r.id for r in visit.current_readings()] == ["r2", "r3", "r4", "r5"]
    assert [r.id for r in visit.readings] == ["r1", "r2", "r3", "r4", "r5", "r6"]  # nothing is thrown away


def test_a_correction_of_a_correction_leaves_only_the_last() -> None:
    visit = Visit(
        job_number="RT-002",
        machine="tarnhollow-fellborer",
        readings=[
            Reading(id="a", test_point="travel.charge", value="2,5 bar", taken_at=at(10)),
            Reading(id="b", test_point="travel.charge", value="25 bar", replaces="a", taken_at=at(10, 1)),
            Reading(id="c", test_point="travel.charge", value="24.5 bar", replaces="b", taken_at=at(10, 2)),
        ],
    )
    assert [r.id for r in visit.current_readings()] == ["c"]


def test_a_correction_must_replace_a_reading_of_the_same_visit() -> None:
    with pytest.raises(ValidationError, match="replaces 'ghost'"):
        Visit(
            job_number="RT-003",
            machine="tarnhollow-fellborer",
            readings=[Reading(id="a", test_point="travel.charge", value="24 bar", replaces="ghost")],
        )


def test_a_reading_must_name_a_gauge_of_the_visit() -> None:
    with pytest.raises(ValidationError, match="names gauge 'G999'"):
        Visit(
            job_number="RT-004",
            machine="tarnhollow-fellborer",
            readings=[Reading(id="a", test_point="travel.charge", value="24 bar", gauge="G999")],
        )
