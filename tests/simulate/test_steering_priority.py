"""Steering behind a priority valve has its own ranges and its own faults: the CF line's standby,
the steering relief (below the pump's cut-off) and the priority flow.

Figures are the test's own (invented), entered as a maker's would be; expected values are worked
by hand [calc] or come from the template's stated typical values."""

from __future__ import annotations

import pytest

from fieldkit.diagnosis.engine import diagnose
from fieldkit.model.condition import Condition
from fieldkit.model.condition import FunctionState as S
from fieldkit.model.loading import load_templates, profile_from_raw
from fieldkit.model.machine_plan import template_machine
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir
from fieldkit.simulate.machine import build_machine
from fieldkit.simulate.physics_table import TABLE
from fieldkit.simulate.simulator import Simulator
from fieldkit.units import Kind, to_canonical

SEED = 7


def _steering(**figures: str) -> MachineProfile:
    raw = {
        "id": "test-steering",
        "name": "Steering under test",
        "rated_speed": "2000 rpm",
        "rated_max_pressure": "280 bar",
        "circuits": [{"id": "c", "name": "steering", "template": "steering_priority", "parameters": figures}],
    }
    return profile_from_raw(raw, load_templates(rules_dir() / "templates"), "test steering")


def _range(profile: MachineProfile, point: str, state: S) -> tuple[float | None, float | None]:
    tp = profile.test_point(point)[1]
    r = tp.expected_for(Condition(function=state))
    assert r is not None
    conv = [to_canonical(b, tp.kind) if b is not None else None for b in (r.low, r.high)]
    return conv[0], conv[1]


def test_steering_ranges_follow_the_steering_figures():
    p = _steering(
        steering_relief_setting="190 bar", steering_standby_setting="8 bar", priority_flow="60 L/min"
    )
    # [calc] 190 ± 6 bar; 8 − 2 to 8 + 3 bar; 60 L/min × 90 % = 54 to × 110 % = 66 L/min.
    assert _range(p, "c.steer_relief", S.STALLED) == (184.0, 196.0)
    assert _range(p, "c.steer_standby", S.NEUTRAL) == (6.0, 11.0)
    low, high = _range(p, "c.steer_flow", S.UNDER_LOAD)
    assert (low, high) == (pytest.approx(54.0), pytest.approx(66.0))


def test_with_no_figures_the_typical_steering_values_are_marked_from_memory():
    m = template_machine(load_templates(rules_dir() / "templates"), "steering_priority")
    tp = m.test_point("c.steer_relief")[1]
    assert tp.expected[0].typical == "from memory"
    assert to_canonical(tp.expected[0].low, Kind.PRESSURE) == 169.0  # 175 bar typical − 6 bar
    # No honest typical priority flow: the flow point is kept, its range left out.
    assert m.test_point("c.steer_flow")[1].expected == []


def test_held_at_its_stop_the_steering_reads_its_relief_not_the_pump_cut_off(true_at):
    p = _steering(steering_relief_setting="170 bar", compensator_setting="240 bar")
    sim = Simulator(p)
    nominal = build_machine(p, None, TABLE)
    # [calc] the steering relief (170 bar) is below the cut-off (240 bar): the lower governs.
    assert true_at(sim, nominal, "c.steer_relief", S.STALLED) == pytest.approx(170.0)
    # A work function stalled elsewhere still reads the pump's cut-off.
    assert true_at(sim, nominal, "c.stall", S.STALLED) == pytest.approx(240.0)


def test_a_steering_relief_set_above_the_cut_off_is_never_seen(true_at):
    # [calc] set at 260 bar above a 240 bar cut-off it never opens: the lower setting governs, so
    # the stop reads the 240 bar cut-off (below its own 254-266 bar range, and far above where a
    # steering relief belongs).
    p = _steering(steering_relief_setting="260 bar", compensator_setting="240 bar")
    sim = Simulator(p)
    nominal = build_machine(p, None, TABLE)
    assert true_at(sim, nominal, "c.steer_relief", S.STALLED) == pytest.approx(240.0)


def test_a_steering_relief_turned_in_reads_the_cut_off_at_full_severity(true_at):
    p = _steering(steering_relief_setting="170 bar", compensator_setting="240 bar")
    sim = Simulator(p)
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine("steering_relief_high", 1.0, SEED)
    assert true_at(sim, faulty, "c.steer_relief", S.STALLED) == pytest.approx(
        true_at(sim, healthy, "c.stall", S.STALLED), abs=0.01
    )
    assert true_at(sim, faulty, "c.steer_relief", S.STALLED) > 170.0 + 6.0 + 20.0


def test_a_sticking_priority_valve_starves_the_steering_but_not_the_pump(true_at):
    p = _steering(steering_standby_setting="8 bar", priority_flow="40 L/min", pump_displacement="60 cc/rev")
    sim = Simulator(p)
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine("priority_valve_sticking", 1.0, SEED)
    assert true_at(sim, faulty, "c.steer_standby", S.NEUTRAL) < 6.0  # below 8 − 2 bar
    assert true_at(sim, faulty, "c.steer_flow", S.UNDER_LOAD) < 36.0  # below 40 × 90 %
    assert true_at(sim, faulty, "c.standby", S.NEUTRAL) == pytest.approx(
        true_at(sim, healthy, "c.standby", S.NEUTRAL), abs=0.01
    )


@pytest.mark.parametrize("fault", ["steering_relief_low", "steering_relief_high", "priority_valve_sticking"])
def test_each_steering_fault_is_named_first_on_a_simulated_visit(fault):
    p = _steering(steering_relief_setting="170 bar", priority_flow="40 L/min", pump_displacement="60 cc/rev")
    s = Simulator(p).simulate(fault, 1.0, seed=SEED)
    assert diagnose(s.visit, p).faults[0].key == f"{fault}@c"


def test_a_machine_without_a_priority_valve_has_no_steering_fault():
    raw_parts: list[str] = ["cooler"]
    raw = {
        "id": "no-steering",
        "name": "no steering",
        "rated_speed": "2000 rpm",
        "rated_max_pressure": "280 bar",
        "circuits": [{"id": "c", "name": "c", "template": "steering_priority", "fitted_parts": raw_parts}],
    }
    p = profile_from_raw(raw, load_templates(rules_dir() / "templates"), "no steering")
    s = Simulator(p).simulate(None, 1.0, seed=SEED)
    keys = {f.key for f in diagnose(s.visit, p).faults}
    assert "pump_worn@c" in keys  # the ranking lists the circuit's other faults
    # The steering's points sit on the priority valve: without it they are not in the plan.
    assert not {tp.id for _c, tp in p.all_test_points()} & {
        "c.steer_standby",
        "c.steer_relief",
        "c.steer_flow",
    }
    assert not {
        k
        for k in keys
        if k.split("@")[0] in {"steering_relief_low", "steering_relief_high", "priority_valve_sticking"}
    }


def test_the_plan_warns_of_a_steering_relief_figure_at_or_above_the_cut_off():
    from fieldkit.model.machine_plan import relief_notes

    # [calc] 240 bar ≥ 240 bar: at the cut-off counts (it could never open first); 230 bar does not.
    at = _steering(steering_relief_setting="240 bar", compensator_setting="240 bar")
    below = _steering(steering_relief_setting="230 bar", compensator_setting="240 bar")
    assert any("at or above the pump's cut-off" in n for n in relief_notes(at.circuits[0]))
    assert relief_notes(below.circuits[0]) == []
