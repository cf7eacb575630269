"""Template reliefs follow the machine's figures, and a work port names the port relief it sees.

Hand-worked figures [calc] are written out beside each check."""

from __future__ import annotations

from pathlib import Path

import pytest

from fieldkit.errors import DataFileError
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.loading import Templates, load_templates, profile_from_raw
from fieldkit.model.machine_plan import template_machine
from fieldkit.resources import rules_dir
from fieldkit.units import Kind, to_canonical


@pytest.fixture(scope="module")
def templates() -> Templates:
    return load_templates(rules_dir() / "templates")


def _bank(templates: Templates, parameters: dict[str, str], **extra: object):
    raw = {
        "id": "bank",
        "name": "bank",
        "rated_speed": "2000 rpm",
        "rated_max_pressure": "250 bar",
        "circuits": [
            {"id": "c", "name": "bank", "template": "open_centre_sections", "parameters": parameters, **extra}
        ],
    }
    return profile_from_raw(raw, templates, "test bank")


def _bar(q) -> float:
    return to_canonical(q, Kind.PRESSURE)


def test_relief_settings_follow_the_makers_figures(templates):
    m = _bank(templates, {"main_relief_setting": "200 bar", "port_2b_relief_setting": "150 bar"})
    reliefs = {r.id: _bar(r.setting) for r in m.circuits[0].reliefs}
    assert reliefs["main"] == 200.0
    assert reliefs["port_2b"] == 150.0
    assert reliefs["port_1a"] == 200.0  # the template's typical 200 bar, no figure given


def test_a_port_range_is_the_lower_relief_plus_back_pressure(templates):
    m = _bank(templates, {"main_relief_setting": "200 bar", "port_2b_relief_setting": "150 bar"})
    _c, low_port = m.test_point("c.s2_b")
    _c, high_port = m.test_point("c.s1_a")
    stalled = Condition(function=FunctionState.STALLED)
    # [calc] port 2B: min(150, 200) = 150 bar; 150 − 5 = 145 bar to 150 + 7 (typical return back
    # pressure) + 5 = 162 bar.
    r = low_port.expected_for(stalled)
    assert (_bar(r.low), _bar(r.high)) == (145.0, 162.0)
    # [calc] port 1A: its typical 200 bar equals the main relief's 200 bar: min = 200 bar; 195 to 212 bar.
    r = high_port.expected_for(stalled)
    assert (_bar(r.low), _bar(r.high)) == (195.0, 212.0)
    assert "port relief setting, valve section 2, port B 150 bar" in low_port.expected_for(stalled).source


def test_a_port_relief_set_above_the_main_relief_is_capped_by_it(templates):
    # [calc] port 3A at 230 bar above a 180 bar main relief: min(230, 180) = 180 bar; 175 to 192 bar.
    m = _bank(templates, {"main_relief_setting": "180 bar", "port_3a_relief_setting": "230 bar"})
    r = m.test_point("c.s3_a")[1].expected_for(Condition(function=FunctionState.STALLED))
    assert (_bar(r.low), _bar(r.high)) == (175.0, 192.0)


def test_the_machine_from_the_template_alone_has_its_reliefs_and_layout(templates):
    m = template_machine(templates, "open_centre_sections")
    c = m.circuits[0]
    assert {r.id for r in c.reliefs} == {
        "main",
        "port_1a",
        "port_1b",
        "port_2a",
        "port_2b",
        "port_3a",
        "port_3b",
    }
    assert c.relief_layout is not None and c.relief_layout.relief_ids() == ["main"]
    assert {tp.relief for tp in c.test_points if tp.relief} == {r.id for r in c.reliefs} - {"main"}


def test_a_profile_listing_its_own_reliefs_replaces_the_templates(templates):
    m = template_machine(templates, "open_fixed_pump")
    assert [(r.id, _bar(r.setting)) for r in m.circuits[0].reliefs] == [("main", 180.0)]
    raw_reliefs = [{"id": "main", "setting": "160 bar"}, {"id": "check", "setting": "4 bar"}]
    raw = {
        "id": "own",
        "name": "own",
        "rated_speed": "2000 rpm",
        "rated_max_pressure": "250 bar",
        "circuits": [{"id": "c", "name": "c", "template": "open_fixed_pump", "reliefs": raw_reliefs}],
    }
    own = profile_from_raw(raw, templates, "own")
    assert [r.id for r in own.circuits[0].reliefs] == ["main", "check"]
    assert own.circuits[0].relief_layout is None


def test_a_work_port_naming_a_relief_the_circuit_lacks_is_refused_with_its_key(templates):
    with pytest.raises(DataFileError) as caught:
        _bank(templates, {}, reliefs=[{"id": "main", "setting": "180 bar"}])
    text = str(caught.value)
    assert "port_1a" in text and "do not list" in text
    assert caught.value.path == "test bank"
    assert caught.value.key == "circuits.0.reliefs"


def test_a_template_relief_setting_that_is_not_a_pressure_names_its_file_and_key(tmp_path: Path):
    folder = tmp_path / "templates"
    folder.mkdir()
    path = folder / "bad.toml"
    path.write_text(
        'id = "bad"\n'
        'kind = "open_fixed_pump"\n'
        'name = "bad"\n'
        "reliefs = [\n"
        '  { id = "main", setting = "main_relief_setting * 2 L/min" },\n'
        "]\n"
        "[parameters]\n"
        'main_relief_setting = { typical = "180 bar", source = "common practice" }\n'
        "[[test_points]]\n"
        'id = "stall"\n'
        'role = "stall_pressure"\n',
        encoding="utf-8",
    )
    with pytest.raises(DataFileError) as caught:
        load_templates(folder)
    err = caught.value
    assert err.path == str(path)
    assert err.key == "reliefs.0.setting"
    assert err.line == 4  # the line of the reliefs list, where the inline table sits
    assert "a relief setting is a pressure" in err.detail


def test_the_plan_says_which_ports_the_main_relief_caps(templates):
    from fieldkit.model.machine_plan import plan_lines

    # [calc] main 180 bar; port 2A at 150 bar is below it (reads its own), the others at the
    # typical 200 bar are above it (read the main relief); section 3 is omitted.
    m = _bank(
        templates,
        {"main_relief_setting": "180 bar", "port_2a_relief_setting": "150 bar"},
        omit_test_points=["s3_a", "s3_b"],
    )
    notes = [line for line in plan_lines(m) if line.startswith("  ! ")]
    assert notes == [
        "  ! port reliefs 1A, 1B, 2B are set at or above the main relief 180 bar: a stall at those "
        "ports reads the main relief, never their own"
    ]
