"""Each demo machine states the parts it has, and nothing for a part it lacks ever shows.

The parts each circuit lacks are written out here by hand from the demo story (invented demo
data: the Fellborer's brakes are released from charge with no accumulator; the Loamshifter's work
circuit carries no steering priority valve and its holding valves sit on the lift cylinders; the
Pebblerun's belt motor is a single-speed motor turning one way). They are not read from the
profiles, so a profile that drops its list, or a filter that stops filtering, fails here.
"""

from __future__ import annotations

import pytest
from diagnosis_helpers import VISITS, knowledge, library, load_visit

from fieldkit.diagnosis.cautions import cautions_for_step
from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.ranking import hypotheses_for
from fieldkit.model.condition import FunctionState
from fieldkit.model.machine_plan import plan_lines
from fieldkit.model.parts import Part

#: machine → circuit → parts that circuit does not have (the demo story, see the module docstring).
ABSENT: dict[str, dict[str, set[Part]]] = {
    "tarnhollow-fellborer": {"brake": {Part.ACCUMULATOR}},
    "oskerfield-loamshifter": {
        "work": {Part.PRIORITY_VALVE, Part.LOAD_HOLDING_VALVE, Part.COUNTERBALANCE_VALVE},
        "lift": {Part.COUNTERBALANCE_VALVE},
    },
    "brindlecombe-pebblerun": {
        "main": {Part.LOAD_HOLDING_VALVE, Part.COUNTERBALANCE_VALVE},
        "belt": {
            Part.SPRING_APPLIED_BRAKE,
            Part.COUNTERBALANCE_VALVE,
            Part.TWO_SPEED_MOTOR,
            Part.CROSS_PORT_RELIEFS,
        },
    },
}

#: Faults of parts absent somewhere above, and the (fault, circuit) pairs that must never rank.
BANNED: dict[str, set[str]] = {
    "tarnhollow-fellborer": {"accumulator_precharge_lost@brake"},
    "oskerfield-loamshifter": {
        "steering_relief_low@work",
        "steering_relief_high@work",
        "priority_valve_sticking@work",
        "load_holding_valve_leak@work",
    },
    "brindlecombe-pebblerun": {"load_holding_valve_leak@main", "brake_not_releasing@belt"},
}

#: A sample visit per machine, with the fault its story diagnoses (kept from the sample files).
STORY = {
    "tarnhollow-fellborer": ("fellborer-charge-pump-worn.json", "charge_pump_worn"),
    "oskerfield-loamshifter": ("loamshifter-load-holding-valve-leak.json", "load_holding_valve_leak"),
    "brindlecombe-pebblerun": ("pebblerun-main-relief-low.json", "main_relief_low"),
}

MACHINES = sorted(ABSENT)


@pytest.mark.parametrize("machine", MACHINES)
def test_every_demo_circuit_states_its_parts(machine: str) -> None:
    profile = library().get(machine)
    for c in profile.circuits:
        assert c.fitted_parts is not None, f"{machine}: circuit {c.id} does not say which parts it has"
        for part in ABSENT[machine].get(c.id, set()):
            assert part not in c.fitted_parts, f"{machine}.{c.id} claims a {part.value}"


@pytest.mark.parametrize("machine", MACHINES)
def test_no_fault_of_a_missing_part_is_a_possible_cause(machine: str) -> None:
    keys = {h.key for h in hypotheses_for(library().get(machine), knowledge().faults)}
    assert not keys & BANNED[machine]


def test_the_faults_of_parts_that_are_fitted_stay_possible() -> None:
    # The filter must not throw out too much: parts the story has keep their faults.
    fell = {h.key for h in hypotheses_for(library().get("tarnhollow-fellborer"), knowledge().faults)}
    assert {"flushing_valve_fault@travel", "hp_relief_low@travel", "brake_not_releasing@brake"} <= fell
    loam = {h.key for h in hypotheses_for(library().get("oskerfield-loamshifter"), knowledge().faults)}
    assert {"load_holding_valve_leak@lift", "accumulator_precharge_lost@brake_acc"} <= loam


@pytest.mark.parametrize("machine", MACHINES)
def test_the_sample_visit_ranks_nothing_of_a_missing_part_and_keeps_its_story(machine: str) -> None:
    name, cause = STORY[machine]
    visit = load_visit(VISITS / name).diagnosis_view()  # the readings before the repair
    d = diagnose(visit, library().get(machine), knowledge())
    assert d.faults[0].id == cause
    ranked = {f"{f.id}@{f.circuit}" for f in d.faults}
    assert not ranked & BANNED[machine]
    rules = {r.spec.id: r.spec for r in knowledge().rules}
    for finding in d.findings:
        needs = set(rules[finding.rule_id].needs) if finding.rule_id in rules else set()
        absent = ABSENT[machine].get(finding.circuit or "", set())
        assert not (needs and needs <= absent), f"{finding.key} speaks for a part {machine} lacks"


@pytest.mark.parametrize("machine", MACHINES)
def test_the_plan_lists_no_point_of_a_missing_part(machine: str) -> None:
    profile = library().get(machine)
    for c in profile.circuits:
        absent = ABSENT[machine].get(c.id, set())
        for tp in c.test_points:
            assert tp.part is None or tp.part not in absent, f"{machine}: {tp.id} is on a missing part"
    lines = plan_lines(profile)
    assert any(line.strip().startswith("parts fitted:") for line in lines)


#: circuit → cautions about parts it lacks (cautions.toml: accumulator-fitted, spring-brake,
#: load-holding-valve), which no step on it may show.
NO_CAUTION = {
    ("tarnhollow-fellborer", "brake"): {"accumulator-fitted"},
    ("oskerfield-loamshifter", "work"): {"accumulator-fitted"},
    ("brindlecombe-pebblerun", "belt"): {"spring-brake", "load-holding-valve"},
}


def _raised(machine: str, circuit_id: str) -> set[str]:
    profile = library().get(machine)
    circuit = next(c for c in profile.circuits if c.id == circuit_id)
    return {
        r.caution.id
        for tp in circuit.test_points
        for state in FunctionState
        for r in cautions_for_step(knowledge().cautions, circuit, tp, state, include_general=True)
    }


@pytest.mark.parametrize(("machine", "circuit"), sorted(NO_CAUTION))
def test_no_caution_of_a_missing_part_shows(machine: str, circuit: str) -> None:
    assert not _raised(machine, circuit) & NO_CAUTION[(machine, circuit)]


def test_the_cautions_of_parts_that_are_fitted_still_show() -> None:
    # The same walk must be able to fail: where the part is fitted its caution shows.
    assert "spring-brake" in _raised("tarnhollow-fellborer", "travel")
    assert "spring-brake" in _raised("tarnhollow-fellborer", "brake")
    assert "load-holding-valve" in _raised("oskerfield-loamshifter", "lift")
