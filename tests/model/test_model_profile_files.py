"""Profile and template TOML files people edit by hand: every mistake must name the file and the
line to look at, so a technician can fix it without reading a traceback."""

from __future__ import annotations

import shutil
import textwrap
from pathlib import Path
from typing import Any

import pytest

from fieldkit.errors import DataFileError
from fieldkit.model.loading import CircuitTemplate, load_profile, load_templates
from fieldkit.resources import rules_dir

GOOD_PROFILE = textwrap.dedent("""\
    # A small invented rig for tests.
    id = "test-rig"
    name = "Test rig"
    rated_speed = "2000 rpm"
    rated_max_pressure = "250 bar"

    [[circuits]]
    id = "travel"
    name = "Track drive"
    template = "closed_loop_drive"

    [circuits.parameters]
    charge_relief_setting = "24 bar"
    rated_flow = "90 L/min"

      [[circuits.test_points]]
      id = "charge"
      location = "pump end cover"

    [[circuits]]
    id = "boom"
    name = "Boom lift"
    kind = "open_fixed_pump"

      [[circuits.test_points]]
      id = "pump"
      role = "pump_outlet_pressure"
      max_pressure = "300 bar"
        [[circuits.test_points.expected]]
        low = "180 bar"
        high = "200 bar"
        source = "common practice"
    """)


@pytest.fixture(scope="module")
def templates() -> dict[str, tuple[CircuitTemplate, dict[str, Any]]]:
    return load_templates(rules_dir() / "templates")


def line_of(text: str, needle: str) -> int:
    """1-based line of the only line holding ``needle`` (so the tests never hard-code a line)."""
    hits = [n for n, line in enumerate(text.splitlines(), start=1) if needle in line]
    assert len(hits) == 1, f"{needle!r} is on lines {hits}"
    return hits[0]


def write(tmp_path: Path, text: str, name: str = "test-rig.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def load_error(path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]) -> DataFileError:
    with pytest.raises(DataFileError) as caught:
        load_profile(path, templates)
    return caught.value


def assert_points_at(error: DataFileError, path: Path, line: int) -> None:
    assert error.path == str(path)
    assert error.line == line
    assert str(error).startswith(f"{path}:{line}"), str(error)


def test_good_profile_loads_with_template_points_qualified(tmp_path: Path, templates: Any) -> None:
    profile = load_profile(write(tmp_path, GOOD_PROFILE), templates)
    ids = [tp.id for _c, tp in profile.all_test_points()]
    assert "travel.charge" in ids and "boom.pump" in ids
    _circuit, charge = profile.test_point("travel.charge")
    assert charge.location == "pump end cover"  # the profile's key replaced the template's
    assert profile.circuits[0].parameters["charge_relief_setting"].magnitude == 24.0


def test_misspelt_key_names_file_line_and_key(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('location = "pump end cover"', 'locaton = "pump end cover"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "locaton ="))
    assert error.key == "circuits.0.test_points.0.locaton"
    assert "unknown key" in str(error)


def test_misspelt_key_in_the_second_circuit_points_at_its_own_line(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('max_pressure = "300 bar"', 'max_presure = "300 bar"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "max_presure ="))
    assert error.key == "circuits.1.test_points.0.max_presure"


def test_missing_required_key_points_at_its_table(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('source = "common practice"', 'sorce = "common practice"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    # The range has no 'source': the first error points at the [[...expected]] header above it,
    # and the message goes on to name the misspelt key on its own line.
    assert_points_at(error, path, line_of(text, 'low = "180 bar"') - 1)
    assert error.key == "circuits.1.test_points.0.expected.0.source"
    assert (
        f"line {line_of(text, 'sorce =')}, circuits.1.test_points.0.expected.0.sorce: unknown key"
        in error.detail
    )


def test_wrong_unit_kind_for_a_top_level_value(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('rated_max_pressure = "250 bar"', 'rated_max_pressure = "250 L/min"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "rated_max_pressure ="))
    assert "'250 L/min' is a flow" in str(error) and "pressure" in error.detail


def test_wrong_unit_kind_for_a_test_point_limit(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('max_pressure = "300 bar"', 'max_pressure = "300 L/min"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, 'max_pressure = "300 L/min"'))
    assert error.key == "circuits.1.test_points.0.max_pressure"


def test_expected_range_of_the_wrong_kind_for_its_role(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('low = "180 bar"', 'low = "180 L/min"').replace(
        'high = "200 bar"', 'high = "200 L/min"'
    )
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert error.path == str(path)
    assert "pump_outlet_pressure needs a pressure" in str(error)
    assert error.line == line_of(text, 'low = "180 L/min"')  # the bound itself
    assert error.key is not None and error.key.endswith("expected.0.low")


def test_toml_syntax_error_names_the_line(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('location = "pump end cover"', 'location = "pump end cover')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "location ="))
    assert "TOML syntax" in str(error)


def test_unknown_template_names_the_line_and_the_known_templates(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace('template = "closed_loop_drive"', 'template = "closed_loop_driv"')
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "template ="))
    assert "unknown circuit template 'closed_loop_driv'" in str(error)
    assert "closed_loop_drive" in error.detail.split("known:")[1]


def test_unknown_parameter_names_the_file_and_the_known_names(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace("charge_relief_setting =", "charge_releif_setting =")
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert error.path == str(path)
    assert "unknown parameter 'charge_releif_setting'" in str(error)
    assert "charge_relief_setting" in error.detail


def test_unknown_parameter_points_at_its_own_line(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace("charge_relief_setting =", "charge_releif_setting =")
    path = write(tmp_path, text)
    assert_points_at(load_error(path, templates), path, line_of(text, "charge_releif_setting ="))


def test_omitting_a_test_point_the_template_lacks_is_refused(tmp_path: Path, templates: Any) -> None:
    text = GOOD_PROFILE.replace(
        'template = "closed_loop_drive"', 'template = "closed_loop_drive"\nomit_test_points = ["winch"]'
    )
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, "omit_test_points ="))
    assert "'winch'" in str(error)


def test_broken_template_names_its_own_file_and_line(tmp_path: Path) -> None:
    folder = tmp_path / "templates"
    shutil.copytree(rules_dir() / "templates", folder)
    path = folder / "closed_loop_drive.toml"
    text = path.read_text(encoding="utf-8").replace(
        'fitting = "test coupling"', 'fiting = "test coupling"', 1
    )
    path.write_text(text, encoding="utf-8")
    with pytest.raises(DataFileError) as caught:
        load_templates(folder)
    error = caught.value
    assert error.path == str(path)
    assert error.line == line_of(text, "fiting =")
    assert str(error).startswith(f"{path}:{error.line}")


def test_a_circuit_supplied_by_an_unknown_circuit_is_refused_with_the_names_it_knows(
    tmp_path: Path, templates: Any
) -> None:
    text = GOOD_PROFILE.replace('id = "boom"\n', 'id = "boom"\nsupplied_by = "travl"\n', 1)
    assert 'supplied_by = "travl"' in text
    path = write(tmp_path, text)
    error = load_error(path, templates)
    assert_points_at(error, path, line_of(text, 'supplied_by = "travl"'))
    assert error.key == "circuits.1.supplied_by"
    assert "supplied_by 'travl'" in str(error) and "travel, boom" in str(error)


def test_a_circuit_supplied_by_another_loads() -> None:
    from fieldkit.resources import rules_dir, samples_dir

    profile = load_profile(
        samples_dir() / "profiles" / "tarnhollow-fellborer.toml", load_templates(rules_dir() / "templates")
    )
    brake = next(c for c in profile.circuits if c.id == "brake")
    assert brake.supplied_by == "travel"
