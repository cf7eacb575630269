"""The technician's instrument kit: kept once, picked per visit, carried by exports.

The instruments, serials and dates are invented test data."""

from __future__ import annotations

import datetime as dt
import sqlite3
from pathlib import Path

import pytest
from store_builders import visit

from fieldkit.cli import main
from fieldkit.errors import FieldkitError, StoreError
from fieldkit.model.kit import InstrumentKind, KitItem, calibration_warning, parse_span
from fieldkit.session import Workbench
from fieldkit.store.migrations import MIGRATIONS
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.transfer import export_visit_json
from fieldkit.units import Q_, unit


def _g60(**extra: object) -> KitItem:
    fields: dict[str, object] = {
        "id": "K60",
        "kind": "pressure_gauge",
        "full_scale": "60 bar",
        "accuracy_class": 1.0,
        "serial": "BV-7731",
        "calibration_due": dt.date(2024, 3, 1),
    }
    fields.update(extra)
    return KitItem.model_validate(fields)


@pytest.fixture
def bench(tmp_path: Path) -> Workbench:
    b = Workbench.open(tmp_path / "laptop.sqlite3")
    yield b
    b.close()


def test_compound_and_vacuum_spans_are_read_as_the_dial_is_marked() -> None:
    start, top = parse_span("-1..15 bar")
    assert (start, top) == (Q_(-1.0, unit("bar")), Q_(15.0, unit("bar")))
    start, top = parse_span("-30..0 inHg")
    assert start == Q_(-30.0, unit("inHg")) and top == Q_(0.0, unit("inHg"))
    assert parse_span("0..60 bar") == (None, Q_(60.0, unit("bar")))
    # The span of a compound -1..15 bar gauge is 16 bar, and its class applies to all of it.
    item = _g60(full_scale="15 bar", scale_start="-1 bar", accuracy_class=1.6)
    assert item.as_gauge().span == Q_(16.0, unit("bar"))


def test_an_instrument_must_measure_what_its_kind_says() -> None:
    with pytest.raises(ValueError, match="a thermometer measures temperature"):
        KitItem(id="T9", kind=InstrumentKind.THERMOMETER, full_scale="60 bar", accuracy_class=1.0)


def test_the_kit_is_kept_once_and_outlives_the_visits(bench: Workbench) -> None:
    bench.store.add_kit_item(_g60())
    first = bench.store.create_visit(visit(gauges=[]))
    second = bench.store.create_visit(visit(gauges=[], job_number="BPH-0418"))
    bench.pick_gauge(first.id, "K60")
    bench.pick_gauge(second.id, "K60")
    assert [k.id for k in bench.store.kit()] == ["K60"]
    with pytest.raises(StoreError, match="already has an instrument 'K60'"):
        bench.store.add_kit_item(_g60())


def test_a_gauge_past_its_calibration_date_is_warned_about_when_chosen(bench: Workbench) -> None:
    bench.store.add_kit_item(_g60(calibration_due=dt.date(2024, 3, 1)))
    bench.store.add_kit_item(_g60(id="K60b", calibration_due=dt.date(2025, 3, 1)))
    v = bench.store.create_visit(visit(gauges=[], date=dt.date(2024, 5, 14)))
    _visit, warning = bench.pick_gauge(v.id, "K60")
    assert "calibration was due on 2024-03-01" in warning
    _visit, warning = bench.pick_gauge(v.id, "K60b")
    assert warning == ""
    # The day of the visit decides, not today: the same gauge was in date for an older visit.
    assert calibration_warning(_g60(), dt.date(2024, 2, 29)) == ""


def test_a_retired_gauge_stays_readable_on_old_visits(bench: Workbench) -> None:
    bench.store.add_kit_item(_g60())
    old = bench.store.create_visit(visit(gauges=[]))
    bench.pick_gauge(old.id, "K60")
    bench.store.retire_kit_item("K60", on=dt.date(2024, 6, 1))
    assert bench.store.kit() == []
    assert [k.id for k in bench.store.kit(include_retired=True)] == ["K60"]
    kept = bench.store.get_visit(old.id).gauge("K60")
    assert kept is not None and kept.serial == "BV-7731" and kept.calibration_due == dt.date(2024, 3, 1)
    newer = bench.store.create_visit(visit(gauges=[], job_number="BPH-0501"))
    with pytest.raises(FieldkitError, match="retired on 2024-06-01"):
        bench.pick_gauge(newer.id, "K60")


def test_an_edited_calibration_date_leaves_old_visits_as_they_were(bench: Workbench) -> None:
    bench.store.add_kit_item(_g60())
    old = bench.store.create_visit(visit(gauges=[]))
    bench.pick_gauge(old.id, "K60")
    bench.store.edit_kit_item("K60", calibration_due=dt.date(2025, 3, 1))
    assert bench.store.kit_item("K60").calibration_due == dt.date(2025, 3, 1)
    assert bench.store.get_visit(old.id).gauge("K60").calibration_due == dt.date(2024, 3, 1)


def test_the_kit_travels_with_export_and_import(bench: Workbench, tmp_path: Path) -> None:
    bench.store.add_kit_item(_g60(full_scale="15 bar", scale_start="-1 bar", accuracy_class=1.6))
    bench.store.add_kit_item(_g60(id="UNUSED"))
    v = bench.store.create_visit(visit(gauges=[]))
    v, _ = bench.pick_gauge(v.id, "K60")
    path = tmp_path / "out.json"
    path.write_text(export_visit_json(v, None, bench.kit_for_export(v)), encoding="utf-8")

    office = Workbench.open(tmp_path / "office.sqlite3")
    try:
        stored, added = office.import_visit_file(path)
        assert added == ["K60"]  # only what the visit used travels
        assert office.store.kit() == bench.store.kit(include_retired=True)[:1]
        assert stored.gauge("K60") == v.gauge("K60")
        # Importing again (as a copy) adds nothing to the kit and keeps the office's record.
        _again, added = office.import_visit_file(path, as_new=True)
        assert added == []
    finally:
        office.close()


def test_a_store_made_before_the_kit_gains_an_empty_kit_and_keeps_its_visits(tmp_path: Path) -> None:
    path = tmp_path / "old.sqlite3"
    old = SqliteVisitStore(path, migrations=MIGRATIONS[:2])
    v = old.create_visit(visit())
    old.close()
    store = SqliteVisitStore(path)
    try:
        assert store.kit() == []
        assert store.get_visit(v.id).job_number == "BPH-0417"
    finally:
        store.close()


def test_kit_rows_are_retired_never_deleted(bench: Workbench) -> None:
    bench.store.add_kit_item(_g60())
    bench.close()
    conn = sqlite3.connect(bench.store.path)
    try:
        with pytest.raises(sqlite3.DatabaseError, match="retired, never deleted"):
            conn.execute("DELETE FROM kit_item")
    finally:
        conn.close()


def test_fieldkit_kit_commands_add_edit_retire_list_and_use(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    store = str(tmp_path / "cli.sqlite3")
    assert (
        main(
            [
                "--store",
                store,
                "kit",
                "add",
                "V1",
                "--kind",
                "pressure_gauge",
                "--span",
                "-1..0 bar",
                "--class",
                "1.6",
                "--serial",
                "VX-2",
                "--due",
                "2020-01-31",
            ]
        )
        == 0
    )
    assert "CALIBRATION OVERDUE" in capsys.readouterr().out
    assert main(["--store", store, "kit", "edit", "V1", "--due", "2099-01-31"]) == 0
    assert "OVERDUE" not in capsys.readouterr().out
    assert (
        main(
            [
                "--store",
                store,
                "kit",
                "add",
                "T1",
                "--kind",
                "thermometer",
                "--span",
                "0..60 bar",
                "--class",
                "1",
            ]
        )
        == 2
    )
    assert "a thermometer measures temperature" in capsys.readouterr().err
    assert main(["--store", store, "kit", "retire", "V1"]) == 0
    capsys.readouterr()
    assert main(["--store", store, "kit", "list"]) == 0
    assert "V1" not in capsys.readouterr().out
    assert main(["--store", store, "kit", "list", "--all"]) == 0
    out = capsys.readouterr().out
    assert "V1" in out and "-1 bar to 0" in out and "retired" in out
