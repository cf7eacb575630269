"""Saving an edited profile keeps the person's comments: the edited table is merged into the text
it was read from. Each check reads the text back with the standard library's own TOML reader
(tomllib), independent of the writer under test."""

from __future__ import annotations

import tomllib

import pytest

from fieldkit.model.toml_edit import update_text

ORIGINAL = """\
# Press pump unit in bay 3 - our own notes
id = "pump-unit"
name = "Press pump unit"   # as on the plate
rated_speed = "1450 rpm"
rated_max_pressure = "210 bar"

# main circuit: relief re-set in 2024 after the hose burst
[[circuits]]
id = "main"
name = "Main"
template = "open_fixed_pump"

[circuits.parameters]
main_relief_setting = "180 bar"   # from the plate on the valve
return_back_pressure_max = "5 bar"

  [[circuits.test_points]]
  id = "stall"
  location = "coupling under the step"  # ask the operator which one

# the aux motor, fitted 2023
[[circuits]]
id = "aux"
name = "Aux"
template = "motor"
"""


def _edited() -> dict:
    raw = tomllib.loads(ORIGINAL)
    raw["circuits"][0]["parameters"]["main_relief_setting"] = "200 bar"
    raw["circuits"][0]["parameters"]["pump_displacement"] = "30 cc/rev"
    del raw["circuits"][0]["parameters"]["return_back_pressure_max"]
    return raw


def test_an_edited_profile_keeps_every_comment_and_holds_the_edit():
    raw = _edited()
    out = update_text(ORIGINAL, raw)
    assert tomllib.loads(out) == raw
    for comment in (
        "# Press pump unit in bay 3 - our own notes",
        "# as on the plate",
        "# main circuit: relief re-set in 2024 after the hose burst",
        "# from the plate on the valve",  # the changed value keeps its end-of-line comment
        "# ask the operator which one",
        "# the aux motor, fitted 2023",
    ):
        assert comment in out, comment
    assert 'main_relief_setting = "200 bar"' in out
    assert "return_back_pressure_max" not in out


def test_unchanged_lines_stay_exactly_as_written():
    out = update_text(ORIGINAL, _edited())
    assert 'name = "Press pump unit"   # as on the plate\n' in out
    assert '  location = "coupling under the step"  # ask the operator which one\n' in out


def test_circuits_are_matched_by_id_when_one_is_removed_and_another_added():
    raw = tomllib.loads(ORIGINAL)
    raw["circuits"] = [
        raw["circuits"][1],
        {"id": "lift", "name": "Lift", "template": "cylinder", "parameters": {"cylinder_bore": "80 mm"}},
    ]
    out = update_text(ORIGINAL, raw)
    assert tomllib.loads(out) == raw
    assert "# the aux motor, fitted 2023" in out
    assert "bay 3" in out  # the file's own header stays


def test_text_that_is_not_toml_is_refused_so_the_caller_writes_afresh():
    with pytest.raises(ValueError, match="not TOML"):
        update_text('id = "x"\n[[circuits]\n', {"id": "x"})
