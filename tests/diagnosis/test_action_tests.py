"""Action tests in the next test (issue 13, "Next test, as a technician would choose it").

The actions live in rules/actions.toml; these tests read that file as a technician would edit it,
check that a broken entry is refused with its file and line, and walk each action through a scene
on a demo machine (invented demo data) where it is the step a technician would take.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from diagnosis_helpers import RULES, VisitBuilder, knowledge, library

from fieldkit.diagnosis.actions import load_actions
from fieldkit.diagnosis.engine import Knowledge, diagnose
from fieldkit.diagnosis.results import Diagnosis
from fieldkit.errors import DataFileError
from fieldkit.model.condition import FunctionState

STALLED = FunctionState.STALLED
NEUTRAL = FunctionState.NEUTRAL
FULL_STROKE = FunctionState.FULL_STROKE

#: The five the issue names, and the two a closed loop's charge circuit needs.
EXPECTED = {
    "swap-cross-port-cartridges",
    "cap-cylinder-ports",
    "block-the-valve",
    "screw-in-the-relief",
    "loaded-flow-test",
    "block-flushing-outlet",
    "turn-in-charge-relief",
}


def _scene(machine: str, readings: list[tuple[str, float, FunctionState]]) -> Diagnosis:
    profile = library().get(machine)
    b = VisitBuilder(profile)
    for point, value, state in readings:
        b.add(point, value, state)
    return diagnose(b.build(), profile, knowledge())


def _offered(d: Diagnosis, action: str) -> list[str]:
    return [t.action for t in d.next_tests if t.action == action]


# --- the file ---------------------------------------------------------------------------------


def test_every_action_states_minutes_outcomes_and_a_source_for_each_likelihood() -> None:
    actions = knowledge().actions
    assert set(actions) == EXPECTED
    for a in actions.values():
        assert a.minutes > 0 and len(a.outcomes) >= 2
        for table in [a.otherwise, *a.likely.values()]:
            assert sum(table.p.values()) == pytest.approx(1.0, abs=0.005)
            assert "common practice" in table.source or "second-hand" in table.source
        assert all(o.meaning for o in a.outcomes)


def _copy_rules(tmp_path: Path, actions_text: str) -> Path:
    folder = tmp_path / "rules"
    shutil.copytree(RULES, folder)
    (folder / "actions.toml").write_text(actions_text, encoding="utf-8")
    return folder


_ONE = """[[action]]
id = "probe"
title = "Probe action"
kinds = ["cylinder"]
minutes = 10
point_role = "cylinder_drift"
outcomes = [
  { id = "yes", seen = "it stops", meaning = "the valve" },
  { id = "no", seen = "it goes on", meaning = "the cylinder" },
]
otherwise = { yes = 0.5, no = 0.5, source = "common practice" }
  [action.likely]
  LIKELY
"""


def test_an_action_naming_an_unknown_fault_is_refused_with_its_line(tmp_path: Path) -> None:
    folder = _copy_rules(
        tmp_path, _ONE.replace("LIKELY", 'no_such_fault = { yes = 0.9, no = 0.1, source = "x y z" }')
    )
    with pytest.raises(DataFileError) as err:
        Knowledge.load(folder)
    assert err.value.line == 13 and "no_such_fault" in str(err.value)
    assert str(err.value).startswith(f"{folder / 'actions.toml'}:13")


def test_likelihoods_that_do_not_add_up_are_refused_with_their_line(tmp_path: Path) -> None:
    folder = _copy_rules(
        tmp_path, _ONE.replace("LIKELY", 'pump_worn = { yes = 0.9, no = 0.3, source = "common practice" }')
    )
    with pytest.raises(DataFileError, match="add up to 1.2") as err:
        load_actions(folder, {"pump_worn"}, set())
    assert err.value.line == 13


def test_an_action_id_given_twice_is_refused_at_the_second_one(tmp_path: Path) -> None:
    one = _ONE.replace("LIKELY", 'pump_worn = { yes = 0.9, no = 0.1, source = "common practice" }')
    text = one + "\n" + one
    second = [n for n, line in enumerate(text.splitlines(), 1) if line == 'id = "probe"'][1]
    folder = _copy_rules(tmp_path, text)
    with pytest.raises(DataFileError, match="'probe' appears twice") as err:
        load_actions(folder, {"pump_worn"}, set())
    assert err.value.line == second


def test_a_missing_actions_file_means_no_action_tests(tmp_path: Path) -> None:
    assert load_actions(tmp_path, {"pump_worn"}, set()) == {}


# --- each action where a technician would reach for it ---------------------------------------


def test_swapping_the_cross_port_cartridges_comes_first_once_the_quick_readings_are_in() -> None:
    # Fellborer (demo), oil, speed and charge already read and normal (charge 27 bar in neutral,
    # its relief figure; 22 bar in stroke, its flushing relief). Side B stalls at 380 bar against
    # 402 bar expected (380 bar differential + 22 bar charge): its relief or the loop? Swapping
    # the two cartridges (common practice) settles it: the low reading follows a bad cartridge.
    d = _scene(
        "tarnhollow-fellborer",
        [
            ("travel.oil_temp", 50.0, NEUTRAL),
            ("travel.speed", 2200.0, NEUTRAL),
            ("travel.charge", 27.0, NEUTRAL),
            ("travel.charge_idle", 26.0, NEUTRAL),  # 1 bar under rated speed: no sag at idle
            ("travel.charge", 22.0, FULL_STROKE),
            ("travel.charge", 22.0, STALLED),
            ("travel.loop_a", 402.0, STALLED),
            ("travel.loop_b", 380.0, STALLED),
        ],
    )
    first = d.next_tests[0]
    assert first.action == "swap-cross-port-cartridges", [t.label for t in d.next_tests]
    assert first.minutes == 30 and first.gain_bits > 0
    assert "the odd reading moves to the other side" in first.outcomes
    assert "cartridge is at fault" in first.outcomes["the odd reading moves to the other side"]
    assert "If the odd reading moves to the other side: the cartridge is at fault" in first.why
    assert {"stall-duration", "relief-max-setting"} <= {c.id for c in d.cautions}


#: Loamshifter work circuit (demo), quick readings normal and every pressure at the stall 200 bar.
LOAMSHIFTER_LOW_STALL = [
    ("work.oil_temp", 50.0, NEUTRAL),
    ("work.speed", 2100.0, NEUTRAL),
    ("work.standby", 28.0, NEUTRAL),
    ("work.stall", 200.0, STALLED),
    ("work.pump_out", 200.0, STALLED),
    ("work.ls_signal", 200.0, STALLED),
]


def test_a_low_stall_on_a_load_sensing_pump_offers_turning_the_relief_in_then_blocking_the_valve() -> None:
    # Loamshifter work circuit (demo): cut-off 250 bar, main relief 270 bar above it. The tilt
    # stall, pump outlet and load-sense line all read 200 bar: relief low, compensator low, or
    # a signal leak? Turning the relief in a quarter turn (15 min) shows whether the relief
    # governs; blocking the valve (40 min) parts the pump from the valve bank (common practice).
    d = _scene("oskerfield-loamshifter", LOAMSHIFTER_LOW_STALL)
    actions = [t.action for t in d.next_tests if t.action]
    assert actions[:2] == ["screw-in-the-relief", "block-the-valve"], actions
    # The stall read again with the relief screwed in (the compensator alone, 20 min) is the
    # reading that splits the same pair; it sits between the two actions by time.
    assert "work.comp_alone" in [t.test_point for t in d.next_tests]
    screw = d.next_tests[0]
    assert screw.minutes == 15
    assert "the relief was governing" in screw.outcomes["the stall pressure rises with the relief"]
    assert "over-pressure" in {c.id for c in d.cautions}


def test_a_leaking_pump_with_no_flow_port_offers_a_loaded_flow_test() -> None:
    # Same stall readings, and the pump's case drain at 12 L/min (about 6 % of its rated
    # 204 L/min): a worn pump joins the list. The Loamshifter has no pump flow test point, so
    # the flow meter with a loading valve is the way to see the pump's delivery (common practice).
    d = _scene(
        "oskerfield-loamshifter",
        [
            *LOAMSHIFTER_LOW_STALL,
            ("work.pump_drain", 12.0, STALLED),
            # The compensator alone (relief screwed in) already read at its 250 bar cut-off: the
            # compensator is cleared, the relief and a worn pump remain.
            ("work.comp_alone", 250.0, STALLED),
        ],
    )
    assert _offered(d, "loaded-flow-test"), [t.label for t in d.next_tests]


def test_no_loaded_flow_test_is_offered_where_the_circuit_has_its_own_flow_point() -> None:
    # The Pebblerun's main circuit has a pump flow test point: the reading is offered instead.
    d = _scene("brindlecombe-pebblerun", [("main.stall", 150.0, STALLED)])
    assert not _offered(d, "loaded-flow-test")


def test_charge_low_in_stroke_only_offers_plugging_the_flushing_outlet() -> None:
    # Fellborer: charge 26.5 bar in neutral (relief 27) but 12 bar in stroke (flushing relief
    # 22 bar): the flushing valve or the charge pump. Plugging the flushing valve's outlet for a
    # moment (its catalogue confirm step; common practice) splits them.
    d = _scene(
        "tarnhollow-fellborer", [("travel.charge", 26.5, NEUTRAL), ("travel.charge", 12.0, FULL_STROKE)]
    )
    t = next(t for t in d.next_tests if t.action == "block-flushing-outlet")
    assert "flushing valve takes too much" in t.outcomes["charge in stroke comes back near its neutral value"]


def test_charge_low_in_neutral_offers_the_low_idle_reading_first() -> None:
    # Fellborer: charge 17 bar in neutral against a 27 bar relief: the relief or the pump. Charge
    # read again at low idle (4 min) splits them before any adjuster is touched: a short pump
    # sags further at idle, a low relief does not (common practice). Turning the charge relief in
    # (20 min) answers the same question more slowly, so the reading comes first.
    d = _scene("tarnhollow-fellborer", [("travel.charge", 17.0, NEUTRAL)])
    leaders = {f.id for f in d.faults[:2]}
    assert leaders == {"charge_relief_low", "charge_pump_worn"}
    assert d.next_tests[0].test_point == "travel.charge_idle", [t.label for t in d.next_tests]


def test_capping_the_ports_does_not_split_valve_from_piston_seal_so_the_rod_vent_comes_first() -> None:
    # Loamshifter lift arms drift 25 mm/min. A capped double-acting cylinder locks even when its
    # piston seal bypasses (second-hand: trade article, field notes), so capping the ports cannot
    # tell the load-holding valve from the piston seal; venting the rod port at full stroke can.
    a = knowledge().actions["cap-cylinder-ports"]
    stops = {f: a.likely[f].p["stops"] for f in ("load_holding_valve_leak", "cylinder_seal_bypass")}
    assert min(stops.values()) >= 0.7
    d = _scene("oskerfield-loamshifter", [("work.oil_temp", 50.0, NEUTRAL), ("lift.drift", 25.0, NEUTRAL)])
    points = [t.test_point for t in d.next_tests]
    assert "lift.drift_rod_vented" in points
    caps = [i for i, t in enumerate(d.next_tests) if t.action == "cap-cylinder-ports"]
    assert not caps or caps[0] > points.index("lift.drift_rod_vented")


def _fellborer_without_the_low_idle_point() -> object:
    profile = library().get("tarnhollow-fellborer")
    return profile.model_copy(
        update={
            "circuits": [
                c.model_copy(
                    update={"test_points": [t for t in c.test_points if t.id != "travel.charge_idle"]}
                )
                if c.id == "travel"
                else c
                for c in profile.circuits
            ]
        }
    )


def test_turning_the_charge_relief_in_is_offered_on_a_loop_without_a_low_idle_point() -> None:
    # A Fellborer whose travel loop has no charge-at-low-idle point: oil 50 °C, charge 17 bar in
    # neutral against its 27 bar relief, case 1 bar. The relief or the charge pump; with no idle
    # reading to take, turning the charge relief in (20 min) is the test that splits them: a
    # relief set low follows its adjuster, a short pump does not (common practice).
    profile = _fellborer_without_the_low_idle_point()
    b = VisitBuilder(profile)  # type: ignore[arg-type]
    for point, value, state in [
        ("travel.oil_temp", 50.0, NEUTRAL),
        ("travel.charge", 17.0, NEUTRAL),
        ("travel.case", 1.0, NEUTRAL),
    ]:
        b.add(point, value, state)
    d = diagnose(b.build(), profile, knowledge())  # type: ignore[arg-type]
    assert {f.id for f in d.faults[:2]} == {"charge_relief_low", "charge_pump_worn"}
    assert "turn-in-charge-relief" in [t.action for t in d.next_tests[:2]], [t.label for t in d.next_tests]


def test_turning_the_charge_relief_in_comes_first_once_charge_at_low_idle_is_read() -> None:
    # The Fellborer as it is: charge 17 bar in neutral, 14 bar at low idle (a little sag, not
    # enough to call), 15.5 bar in stroke, case 1 bar, oil 50 °C. The idle reading has been
    # taken; the relief leads and turning it in is the step that confirms it before it is reset
    # (common practice), ahead of readings elsewhere in the loop.
    d = _scene(
        "tarnhollow-fellborer",
        [
            ("travel.oil_temp", 50.0, NEUTRAL),
            ("travel.charge", 17.0, NEUTRAL),
            ("travel.charge_idle", 14.0, NEUTRAL),
            ("travel.charge", 15.5, FULL_STROKE),
            ("travel.case", 1.0, NEUTRAL),
        ],
    )
    assert d.faults[0].id == "charge_relief_low"
    assert d.next_tests[0].action == "turn-in-charge-relief", [t.label for t in d.next_tests]
    assert "relief was set low" in d.next_tests[0].outcomes["charge pressure rises with the relief"]
