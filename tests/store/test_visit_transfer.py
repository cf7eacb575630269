"""Handing a visit over as a JSON file: exact round trip, clear refusals, safe file names."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from store_builders import profile, visit, visit_with_readings
from visit_strategies import visits

from fieldkit.errors import DataFileError
from fieldkit.model.visit import Visit
from fieldkit.store import transfer
from fieldkit.store.filenames import MAX_STEM_BYTES, MAX_STEM_CHARS, safe_file_name
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.store.transfer import (
    MAX_EXPORT_BYTES,
    export_file_name,
    export_visit_json,
    read_visit_json,
    write_export,
)


def _tree(root: Path) -> set[str]:
    return {str(p.relative_to(root)) for p in root.rglob("*")}


# --- round trip ------------------------------------------------------------------------------


def test_a_visit_and_its_profile_come_back_equal() -> None:
    original, machine = visit_with_readings(6, barometric_pressure="1008 mbar"), profile()
    got, got_profile = read_visit_json(export_visit_json(original, machine))
    assert got == original
    assert got_profile == machine


def test_the_export_is_our_envelope_with_values_as_typed_text() -> None:
    data = json.loads(export_visit_json(visit_with_readings(1)))
    assert list(data) == ["fieldkit_visit", "exported_at", "visit", "profile", "kit"]
    assert data["fieldkit_visit"] == 1 and data["profile"] is None
    assert data["exported_at"].endswith("Z")
    assert data["visit"]["readings"][0]["value"] == "22.5 bar"
    assert data["visit"]["gauges"][0]["full_scale"] == "60.0 bar"


@settings(max_examples=60, deadline=None)
@given(visits())
def test_any_logged_visit_survives_export_and_import(original: Visit) -> None:
    got, _ = read_visit_json(export_visit_json(original))
    assert got == original
    assert [r.value.units for r in got.readings] == [r.value.units for r in original.readings]


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(original=visits())
def test_any_logged_visit_comes_back_from_the_store(store: SqliteVisitStore, original: Visit) -> None:
    assert store.import_visit(original) == original
    assert store.get_visit(original.id) == original


def test_an_export_file_can_be_read_back_from_its_path(tmp_path: Path) -> None:
    original = visit_with_readings(3)
    written = write_export(export_visit_json(original, profile()), tmp_path, export_file_name(original))
    got, got_profile = read_visit_json(written)
    assert got == original and got_profile == profile()


# --- refusals --------------------------------------------------------------------------------


def test_a_file_cut_short_names_the_line_where_it_stops() -> None:
    text = export_visit_json(visit_with_readings(4))
    lines = text.splitlines(keepends=True)
    cut = "".join(lines[:30])
    with pytest.raises(DataFileError, match="not valid JSON") as caught:
        read_visit_json(cut, name="bph-0417.json")
    assert caught.value.line is not None and 29 <= caught.value.line <= 31
    assert str(caught.value).startswith(f"bph-0417.json:{caught.value.line}:")
    assert "column" in str(caught.value)


def test_a_stray_comma_is_reported_at_its_line_and_column() -> None:
    text = '{\n  "fieldkit_visit": 1,\n  "visit": {"job_number": "x",,}\n}\n'
    with pytest.raises(DataFileError, match=r"line 3, column 31") as caught:
        read_visit_json(text)
    assert caught.value.line == 3


def test_a_value_with_a_misspelt_unit_is_named_by_its_key_path() -> None:
    data = json.loads(export_visit_json(visit_with_readings(3)))
    data["visit"]["readings"][1]["value"] = "24.5 bra"
    with pytest.raises(DataFileError, match=r"'bra' is not a unit") as caught:
        read_visit_json(json.dumps(data))
    assert caught.value.key is not None and caught.value.key.startswith("visit.readings.1")


def test_an_unknown_key_is_refused_by_name() -> None:
    data = json.loads(export_visit_json(visit()))
    data["visit"]["tecnician"] = "R. Vellacott"
    with pytest.raises(DataFileError, match="unknown key") as caught:
        read_visit_json(json.dumps(data))
    assert caught.value.key == "visit.tecnician"


@pytest.mark.parametrize(
    ("text", "pattern"),
    [
        ("", "the file is empty"),
        ("[1, 2]", "not a fieldkit visit export"),
        ('{"visit": {}}', "not a fieldkit visit export"),
        ('{"fieldkit_visit": true}', "must be a whole number"),
        ('{"fieldkit_visit": 2, "visit": {}}', r"made by a newer fieldkit \(format 2"),
        ('{"fieldkit_visit": 1, "fieldkit_visit": 1}', "appears twice"),
        (
            '{"fieldkit_visit": 1, "exported_at": "2024-05-14T08:30:00Z", "visit": {"hour_meter": NaN}}',
            "not a number JSON allows",
        ),
        ("[" * 100_000, "nested far too deeply"),
    ],
    ids=[
        "empty",
        "a-list",
        "no-mark",
        "bool-version",
        "newer-format",
        "duplicate-key",
        "nan",
        "deep-nesting",
    ],
)
def test_files_that_are_not_a_readable_export_are_refused_plainly(text: str, pattern: str) -> None:
    with pytest.raises(DataFileError, match=pattern):
        read_visit_json(text)


def test_a_visit_written_by_a_newer_fieldkit_says_so() -> None:
    data = json.loads(export_visit_json(visit()))
    data["visit"]["schema_version"] = 7
    with pytest.raises(DataFileError, match="written by a newer fieldkit"):
        read_visit_json(json.dumps(data))


def test_an_oversized_export_is_refused_before_reading(tmp_path: Path) -> None:
    huge = tmp_path / "huge.json"
    with huge.open("wb") as fh:
        fh.truncate(MAX_EXPORT_BYTES + 1)  # sparse: no disk space used
    with pytest.raises(DataFileError, match="at most 20,000,000"):
        read_visit_json(huge)
    with pytest.raises(DataFileError, match="over 20,000,000 bytes"):
        read_visit_json(" " * (MAX_EXPORT_BYTES + 1))


def test_a_plain_string_is_json_text_never_a_file_name(tmp_path: Path) -> None:
    path = write_export(export_visit_json(visit()), tmp_path, "x")
    with pytest.raises(DataFileError, match="not valid JSON"):
        read_visit_json(str(path))


def test_a_file_that_is_not_utf8_is_refused(tmp_path: Path) -> None:
    bad = tmp_path / "latin1.json"
    bad.write_bytes('{"fieldkit_visit": 1, "visit": {"customer": "Müller"}}'.encode("latin-1"))
    with pytest.raises(DataFileError, match="not UTF-8"):
        read_visit_json(bad)


# --- writing the file ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "name",
    [
        "../../etc/passwd",
        "/abs/olute",
        "a/b",
        "a\\b",
        "..",
        ".",
        "CON",
        "con.json",
        "LPT1",
        "nul.txt",
        "job\x00number",
        "line\nbreak",
        "tab\there",
        "   ",
        "",
        "J/2024/17",
        "\u202e.exe",
        "／etc／passwd",
        "~/.bashrc",
        "C:\\Windows\\system32",
        "x" * 500,
        "é" * 400,
    ],
)
def test_a_hostile_name_still_writes_one_plain_file_in_the_chosen_folder(tmp_path: Path, name: str) -> None:
    folder = tmp_path / "exports"
    folder.mkdir()
    outside_before = _tree(tmp_path) - _tree(folder)
    written = write_export("{}", folder, name)
    assert written.parent == folder
    assert written.read_text(encoding="utf-8") == "{}"
    assert _tree(folder) == {written.name}
    assert _tree(tmp_path) - {f"exports/{written.name}"} - {"exports"} == outside_before - {"exports"}
    stem = written.name.removesuffix(".json")
    assert "/" not in written.name and "\\" not in written.name and "\x00" not in written.name
    assert ".." not in written.name and not written.name.startswith(".")
    assert all(ch.isprintable() for ch in written.name)
    assert stem.split(".")[0].upper() not in {"CON", "PRN", "AUX", "NUL", "LPT1", "COM1"}
    assert len(stem) <= MAX_STEM_CHARS and len(stem.encode("utf-8")) <= MAX_STEM_BYTES


def test_an_export_name_comes_from_job_number_machine_and_date() -> None:
    v = visit(job_number="BPH/0417")
    assert export_file_name(v) == "BPH_0417 demo-crawler-7 2024-05-14.json"
    assert safe_file_name("Demo crawler 7 (invented) #2") == "Demo crawler 7 (invented) #2.json"


def test_an_earlier_export_is_never_overwritten_unless_asked(tmp_path: Path) -> None:
    first = write_export("one", tmp_path, "BPH-0417")
    second = write_export("two", tmp_path, "BPH-0417.json")
    assert (first.name, second.name) == ("BPH-0417.json", "BPH-0417 (2).json")
    assert first.read_text(encoding="utf-8") == "one"
    again = write_export("three", tmp_path, "BPH-0417", overwrite=True)
    assert again == first and first.read_text(encoding="utf-8") == "three"


def test_a_failed_write_leaves_the_old_file_and_no_scraps(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    target = write_export("old", tmp_path, "BPH-0417")

    def disk_full(_fd: int) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(transfer.os, "fsync", disk_full)
    with pytest.raises(DataFileError, match="No space left on device"):
        write_export("new", tmp_path, "BPH-0417", overwrite=True)
    assert target.read_text(encoding="utf-8") == "old"
    assert _tree(tmp_path) == {"BPH-0417.json"}


def test_an_export_needs_an_existing_folder(tmp_path: Path) -> None:
    with pytest.raises(DataFileError, match="no such folder"):
        write_export("{}", tmp_path / "missing", "BPH-0417")
    assert not (tmp_path / "missing").exists()


def test_exporting_to_a_file_instead_of_a_folder_is_refused(tmp_path: Path) -> None:
    afile = tmp_path / "notes.txt"
    afile.write_text("keep me", encoding="utf-8")
    with pytest.raises(DataFileError, match="no such folder"):
        write_export("{}", afile, "BPH-0417")
    assert afile.read_text(encoding="utf-8") == "keep me"
    assert os.listdir(tmp_path) == ["notes.txt"]
