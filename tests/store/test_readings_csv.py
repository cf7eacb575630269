"""Readings from a logger's CSV: every wrong row reported at once, nothing half-imported."""

from __future__ import annotations

import datetime as dt
from datetime import UTC, timedelta, timezone
from pathlib import Path

import pytest
from store_builders import CASE_DRAIN, CHARGE, LOOP_A, profile, raw_rows, visit

from fieldkit.errors import DataFileError
from fieldkit.model.profile import MachineProfile, TestPoint
from fieldkit.model.visit import FunctionState
from fieldkit.store.csv_import import (
    MAX_CELL_CHARS,
    MAX_CSV_BYTES,
    MAX_ROWS,
    kinds_by_test_point,
    parse_readings_csv,
    points_by_id,
    read_readings_csv,
)
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.units import Q_, Kind, PressureReference

POINTS = {CHARGE: Kind.PRESSURE, CASE_DRAIN: Kind.FLOW, LOOP_A: Kind.PRESSURE}


def _error(text: str, **options: object) -> DataFileError:
    with pytest.raises(DataFileError) as caught:
        parse_readings_csv(text, test_points=POINTS, **options)  # type: ignore[arg-type]
    return caught.value


def test_a_logger_file_with_every_column_reads_as_it_was_meant() -> None:
    text = (
        "time,test_point,value,unit,function,speed,oil_temperature,gauge,note\n"
        "2024-05-14T08:30:00Z,drive.charge,24.5,bar,neutral,1800 rpm,52 °C,g60,warm idle\n"
        '2024-05-14T10:31:00+02:00,drive.case_drain,3.2,L/min,full stroke,2200 rpm,55 °C,,"drain, after '
        'warm-up"\n'
    )
    first, second = parse_readings_csv(text, test_points=POINTS, gauges={"g60"})
    assert (first.test_point, first.value, first.reference, first.gauge) == (
        CHARGE,
        Q_(24.5, "bar"),
        PressureReference.GAUGE,
        "g60",
    )
    assert first.condition.function is FunctionState.NEUTRAL
    assert (first.condition.speed, first.condition.oil_temperature) == (Q_(1800.0, "rpm"), Q_(52.0, "degC"))
    assert first.taken_at == dt.datetime(2024, 5, 14, 8, 30, tzinfo=UTC) and first.note == "warm idle"
    assert second.taken_at == dt.datetime(2024, 5, 14, 8, 31, tzinfo=UTC)  # +02:00 turned into UTC
    assert second.condition.function is FunctionState.FULL_STROKE and second.gauge is None
    assert second.value == Q_(3.2, "L/min") and second.note == "drain, after warm-up"


def test_the_unit_may_sit_in_the_header_the_unit_column_or_the_cell() -> None:
    header = parse_readings_csv("time,test_point,value [bar]\n2024-05-14T08:30:00Z,drive.charge,24.5\n")
    column = parse_readings_csv("time,test_point,value,unit\n2024-05-14T08:30:00Z,drive.charge,24.5,bar\n")
    cell = parse_readings_csv("time,test_point,value\n2024-05-14T08:30:00Z,drive.charge,24.5 bar\n")
    assert header[0].value == column[0].value == cell[0].value == Q_(24.5, "bar")
    absolute = parse_readings_csv("time,test_point,value\n2024-05-14T08:30:00Z,drive.charge,0.82 bar abs\n")
    assert absolute[0].reference is PressureReference.ABSOLUTE


def test_a_semicolon_file_reads_commas_as_decimal_points() -> None:
    text = (
        "Time;Test point;Value [bar];Oil temperature [°C]\n2024-05-14T08:30:00Z;drive.charge;24,5;52,5\n"
        "2024-05-14T08:31:00Z;drive.charge;2,500;53\n"
    )
    first, second = parse_readings_csv(text, test_points=POINTS)
    assert first.value == Q_(24.5, "bar") and first.condition.oil_temperature == Q_(52.5, "degC")
    assert second.value == Q_(2.5, "bar")  # never 25 bar or 2500 bar


def test_a_comma_inside_a_quoted_value_follows_the_decimal_comma_setting() -> None:
    text = 'time,test_point,value\n2024-05-14T08:30:00Z,drive.loop_a,"2,500 psi"\n'
    assert parse_readings_csv(text)[0].value == Q_(2500.0, "psi")
    assert parse_readings_csv(text, decimal_comma=True)[0].value == Q_(2.5, "psi")


def test_a_tab_separated_file_is_read_too() -> None:
    readings = parse_readings_csv("time\ttest_point\tvalue\n2024-05-14T08:30:00Z\tdrive.charge\t24.5 bar\n")
    assert readings[0].value == Q_(24.5, "bar")


def test_the_unit_given_twice_or_not_at_all_is_a_row_error() -> None:
    err = _error(
        "time,test_point,value [bar]\n"
        "2024-05-14T08:30:00Z,drive.charge,24.5 bar\n"
        "2024-05-14T08:31:00Z,drive.charge,24.5\n"
    )
    assert "line 2: value '24.5 bar' has its unit given in the header and in the cell" in str(err)
    assert "line 3" not in str(err)
    err = _error(
        "time,test_point,value,unit\n"
        "2024-05-14T08:30:00Z,drive.charge,24.5,\n"
        "2024-05-14T08:31:00Z,drive.charge,24.5 psi,bar\n"
    )
    assert "line 2: value '24.5' has no unit" in str(err)
    assert "line 3: value '24.5 psi' has its unit given in the unit column and in the cell" in str(err)


def test_every_wrong_row_is_listed_with_its_line_and_nothing_is_returned() -> None:
    text = (
        "time,test_point,value,function,gauge\n"
        "2024-05-14T08:30:00Z,drive.charge,24.5 bar,neutral,g60\n"  # line 2: fine
        "2024-05-14T08:31:00Z,drive.chrage,24.5 bar,neutral,\n"  # line 3: unknown test point
        "2024-05-14T08:32:00Z,drive.charge,62 L/min,neutral,\n"  # line 4: a flow on a pressure point
        "2024-05-14T08:33:00Z,drive.case_drain,lots,neutral,\n"  # line 5: not a number
        "14/05/2024 08:34,drive.charge,24 bar,neutral,\n"  # line 6: not ISO 8601
        "2024-05-14T08:35:00,drive.charge,24 bar,neutral,\n"  # line 7: no time zone
        "2024-05-14T08:36:00Z,drive.charge,24 bar,idling,\n"  # line 8: unknown function
        "2024-05-14T08:37:00Z,drive.charge,24 bra,neutral,\n"  # line 9: unknown unit
        "2024-05-14T08:38:00Z,drive.charge,24 bar,neutral,g600\n"  # line 10: unknown gauge
    )
    with pytest.raises(DataFileError) as caught:
        parse_readings_csv(text, test_points=POINTS, gauges={"g60"}, name="logger-0514.csv")
    err = caught.value
    message = str(err)
    assert message.startswith("logger-0514.csv:3: 8 rows are wrong, so nothing was imported")
    assert err.line == 3
    for line, words in [
        (3, "unknown test point 'drive.chrage'"),
        (4, "'62 L/min' is a flow; test point drive.charge needs a pressure"),
        (5, "value 'lots' is not a number"),
        (6, "time '14/05/2024 08:34' is not an ISO 8601 time"),
        (7, "time '2024-05-14T08:35:00' has no time zone"),
        (8, "function 'idling' is not one of neutral, full_stroke, stalled, under_load"),
        (9, "'bra' is not a unit"),
        (10, "gauge 'g600' is not one of this visit's gauges (g60)"),
    ]:
        assert f"line {line}: {words}" in message, (line, message)
    assert "line 2:" not in message


def test_a_long_list_of_wrong_rows_stops_at_twenty_and_counts_the_rest() -> None:
    rows = "".join(f"2024-05-14T08:30:00Z,drive.charge,{i} L/min\n" for i in range(35))
    message = str(_error("time,test_point,value\n" + rows))
    assert message.count("\n  line ") == 20
    assert "line 21:" in message and "line 22:" not in message
    assert "… and 15 more wrong rows" in message


def test_a_time_without_zone_is_taken_in_the_zone_the_caller_names() -> None:
    text = "time,test_point,value\n2024-05-14 10:30:00,drive.charge,24.5 bar\n"
    summer = timezone(timedelta(hours=2))
    assert parse_readings_csv(text, naive_tz=summer)[0].taken_at == dt.datetime(
        2024, 5, 14, 8, 30, tzinfo=UTC
    )
    assert "has no time of day" in str(_error("time,test_point,value\n2024-05-14,drive.charge,24.5 bar\n"))


def test_speed_and_temperature_must_be_of_their_own_kind() -> None:
    err = _error(
        "time,test_point,value,speed,oil_temperature\n"
        "2024-05-14T08:30:00Z,drive.charge,24 bar,52 °C,1800 rpm\n"
    )
    assert "'52 °C' is a temperature; speed needs a rotational speed" in str(err)
    assert "'1800 rpm' is a rotational speed; oil temperature needs a temperature" in str(err)


def test_an_unquoted_decimal_comma_in_a_comma_file_is_explained() -> None:
    err = _error("time,test_point,value\n2024-05-14T08:30:00Z,drive.charge,24,5 bar\n")
    assert "4 cells but the header names 3 (a decimal comma in a comma-separated file must be quoted)" in str(
        err
    )


@pytest.mark.parametrize(
    ("header", "words"),
    [
        ("time,test_point", "lacks the column value"),
        ("time,test_point,value,reading", "column 4 is called 'reading'"),
        ("time,test_point,value,value", "'value' appears twice"),
        ("time,test_point,value [bra]", "'bra' is not a unit"),
        ("time,test_point,value [L/min],speed [°C]", "is a temperature; this needs a rotational speed"),
        ("time,test_point,value [bar],unit", "unit column; keep one"),
        ("time,test_point,value,gauge [bar]", "cannot carry a unit"),
    ],
)
def test_a_wrong_header_is_refused_at_line_one(header: str, words: str) -> None:
    err = _error(header + "\n2024-05-14T08:30:00Z,drive.charge,24\n")
    assert err.line == 1 and words in str(err)


def test_a_quoted_note_over_several_lines_keeps_later_line_numbers_right() -> None:
    text = (
        "time,test_point,value,note\n"
        '2024-05-14T08:30:00Z,drive.charge,24 bar,"first line\nsecond line"\n'
        "2024-05-14T08:31:00Z,drive.charge,24 bra,\n"
    )
    err = _error(text)
    assert "line 4: 'bra' is not a unit" in str(err)
    assert err.line == 4


def test_empty_lines_and_a_byte_order_mark_are_harmless() -> None:
    text = "\ufefftime,test_point,value\n\n2024-05-14T08:30:00Z,drive.charge,24.5 bar\n\n"
    assert len(parse_readings_csv(text)) == 1


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("", "must be a header"),
        ("time,test_point,value\n", "has a header but no readings"),
        ('time,test_point,value\n2024-05-14T08:30:00Z,drive.charge,"24.5 bar\n', "cannot be read"),
    ],
)
def test_an_empty_or_broken_file_says_what_is_wrong(text: str, words: str) -> None:
    assert words in str(_error(text))


def test_control_characters_in_a_cell_are_refused() -> None:
    err = _error("time,test_point,value\n2024-05-14T08:30:00Z,drive.\x00charge,24.5 bar\n")
    assert "line 2: the test_point cell holds control characters" in str(err)


def test_the_size_row_and_cell_limits_hold() -> None:
    with pytest.raises(DataFileError, match="over 5,000,000 bytes"):
        parse_readings_csv("time,test_point,value\n" + "x" * MAX_CSV_BYTES)
    many = "time,test_point,value\n" + "t,p,1\n" * (MAX_ROWS + 1)
    with pytest.raises(DataFileError, match="more than 50,000 readings") as caught:
        parse_readings_csv(many)
    assert caught.value.line == MAX_ROWS + 2
    long_note = (
        "time,test_point,value,note\n2024-05-14T08:30:00Z,drive.charge,24 bar,"
        + "n" * (MAX_CELL_CHARS + 1)
        + "\n"
    )
    assert "the note cell is 4,001 characters" in str(_error(long_note))


def test_a_file_is_read_from_disk_with_its_name_in_messages(tmp_path: Path) -> None:
    good = tmp_path / "logger.csv"
    good.write_text("time;test_point;value\n2024-05-14T08:30:00Z;drive.charge;24,5 bar\n", encoding="utf-8")
    assert read_readings_csv(good, test_points=kinds_by_test_point(profile()))[0].value == Q_(24.5, "bar")
    bad = tmp_path / "latin1.csv"
    bad.write_bytes(
        "time;test_point;value;note\n2024-05-14T08:30:00Z;drive.charge;24 bar;Öl\n".encode("latin-1")
    )
    with pytest.raises(DataFileError, match=r"latin1.csv: not UTF-8 text"):
        read_readings_csv(bad)


def test_the_test_points_of_a_profile_give_their_kinds() -> None:
    assert kinds_by_test_point(profile()) == POINTS


def test_an_imported_csv_goes_into_a_visit_whole(tmp_path: Path) -> None:
    text = "time,test_point,value,gauge\n" + "".join(
        f"2024-05-14T08:{i:02d}:00Z,drive.charge,2{i % 10}.5 bar,g60\n" for i in range(30)
    )
    with SqliteVisitStore(tmp_path / "visits.sqlite3") as store:
        v = store.create_visit(visit())
        readings = parse_readings_csv(text, test_points=POINTS, gauges={g.id for g in v.gauges})
        store.add_readings(v.id, readings)
        assert store.get_visit(v.id).readings == readings
    assert raw_rows(tmp_path / "visits.sqlite3") == (1, 30)


def _meter_profile() -> MachineProfile:
    """Invented: a case drain read on a small meter (at most 4 L/min) and charge at 20–28 bar."""
    return MachineProfile.model_validate(
        {
            "id": "demo-crawler-7",
            "name": "Demo crawler 7 (invented)",
            "rated_speed": "2200 rpm",
            "rated_max_pressure": "350 bar",
            "circuits": [
                {
                    "id": "drive",
                    "name": "Travel drive",
                    "kind": "closed_loop_drive",
                    "parameters": {"charge_relief_setting": "24 bar", "pump_displacement": "71 cc/rev"},
                    "test_points": [
                        {
                            "id": "charge",
                            "role": "charge_pressure",
                            "expected": [
                                {"low": "20 bar", "high": "28 bar", "source": "invented demo figure"}
                            ],
                        },
                        {
                            "id": "case_drain",
                            "role": "pump_case_drain_flow",
                            "expected": [{"high": "4 L/min", "source": "invented demo figure"}],
                        },
                    ],
                }
            ],
        }
    )


def test_a_value_without_unit_is_told_an_example_from_its_own_point() -> None:
    """Issue 10 item 9: no 'e.g. 62 L/min' for a meter that reads up to 4 L/min. Hand values:
    a point expected at most 4 L/min suggests half-way to zero, 2 L/min; one expected 20–28 bar
    suggests the middle, 24 bar (the rule of fieldkit/model/example.py, worked by hand)."""
    points = points_by_id(_meter_profile())
    err = _error_with(
        "time,test_point,value\n2024-05-14T08:30:00Z,drive.case_drain,2.4\n2024-05-14T08:31:00Z,drive.charge,24.5\n",
        points,
    )
    assert "line 2: value '2.4' has no unit: put it in the header ('value [L/min]'), a unit column, " in str(
        err
    )
    assert "or the cell ('2 L/min')" in str(err)
    assert "line 3: value '24.5' has no unit" in str(err) and "or the cell ('24 bar')" in str(err)
    assert "62 L/min" not in str(err) and "22 bar" not in str(err)
    # told only the kinds of the points (no ranges): the kind's usual example is all there is
    loose = _error("time,test_point,value\n2024-05-14T08:30:00Z,drive.case_drain,2.4\n")
    assert "or the cell ('62 L/min')" in str(loose)


def _error_with(text: str, points: dict[str, TestPoint]) -> DataFileError:
    with pytest.raises(DataFileError) as caught:
        parse_readings_csv(text, test_points=points)
    return caught.value
