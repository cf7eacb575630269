"""Every step of every bundled template and demo profile carries the cautions what it does calls for.

A step is one reading: a test point in its circuit, taken in one function state. These tests walk
all of them (every template as a bare circuit with its usual parts, every demo profile as merged)
and check the safety content the issue asks for, with the facts written out here:

- fluid injection can pierce skin from about 7 bar (UK HSE research report RR976, 2013;
  Eur J Trauma Emerg Surg 2019;45:507): every point that can see 7 bar or more;
- a step with the drive engaged or stalled can move the machine (common practice): the
  moving-machine caution, two people, and no instruction to stop the engine the step needs;
- accumulator gas: nitrogen only, oil side at zero (common practice; WorkSafeNB hazard alert,
  2014): every step on an accumulator.
"""

from __future__ import annotations

import re
from functools import lru_cache

import pytest
from diagnosis_helpers import RULES, knowledge, library

from fieldkit.diagnosis.catalogue import Caution
from fieldkit.diagnosis.cautions import cautions_for_step
from fieldkit.model.condition import FunctionState
from fieldkit.model.loading import load_templates, profile_from_raw
from fieldkit.model.parts import Part
from fieldkit.model.profile import Circuit, CircuitKind, TestPoint
from fieldkit.model.roles import Role
from fieldkit.units import Kind, kind_of, to_canonical

Step = tuple[str, Circuit, TestPoint, FunctionState]

#: Circuits whose function, engaged, moves the machine or what it drives (tracks, wheels, a motor's
#: load, a released travel brake).
DRIVE_KINDS = {CircuitKind.CLOSED_LOOP_DRIVE, CircuitKind.MOTOR, CircuitKind.BRAKE_RELEASE}
#: Readings taken with the engine stopped: a gas precharge (oil side at zero) and the drift tests
#: (the load held by the valves alone). Every other reading needs the engine running.
ENGINE_STOPPED_ROLES = {Role.ACCUMULATOR_PRECHARGE, Role.CYLINDER_DRIFT, Role.CYLINDER_SEAL_DRIFT}
#: An instruction to stop the engine (or the machine) during the step.
STOP_ENGINE = re.compile(
    r"\b(stop|switch off|shut (down|off))( the)? (engine|machine)\b|\bengine off\b", re.I
)


def _template_circuits() -> list[tuple[str, Circuit]]:
    """Each template as a machine with no maker's figures gets it: its points and typical ranges."""
    out = []
    templates = load_templates(RULES / "templates")
    for name, (tmpl, _raw) in templates.items():
        raw = {
            "id": f"bare-{name}".replace("_", "-"),
            "name": f"Bare {tmpl.name}",
            "rated_speed": "2000 rpm",
            "rated_max_pressure": "400 bar",
            "circuits": [{"id": "c", "name": tmpl.name, "template": name}],
        }
        profile = profile_from_raw(raw, templates, f"template {name}")
        out.append((f"template {name}", profile.circuits[0]))
    return out


@lru_cache(maxsize=1)
def all_steps() -> tuple[Step, ...]:
    circuits = _template_circuits()
    for profile in library().profiles():
        circuits += [(f"profile {profile.id}", c) for c in profile.circuits]
    return tuple(
        (f"{where}: {tp.id} ({state.short})", circuit, tp, state)
        for where, circuit in circuits
        for tp in circuit.test_points
        for state in FunctionState
    )


def _ids(step: Step) -> set[str]:
    _where, circuit, tp, state = step
    return {r.caution.id for r in cautions_for_step(knowledge().cautions, circuit, tp, state)}


def _cautions(step: Step) -> list[Caution]:
    _where, circuit, tp, state = step
    return [r.caution for r in cautions_for_step(knowledge().cautions, circuit, tp, state)]


def _highest_pressure_bar(tp: TestPoint) -> float | None:
    """The point's stated maximum, else the top of its highest expected pressure range."""
    if tp.max_pressure is not None:
        return to_canonical(tp.max_pressure, Kind.PRESSURE)
    bounds = [
        to_canonical(b, Kind.PRESSURE)
        for rng in tp.expected
        for b in (rng.low, rng.high)
        if b is not None and kind_of(b) is Kind.PRESSURE
    ]
    return max(bounds) if bounds else None


def _tells_to_stop_the_engine(c: Caution) -> bool:
    """Said in a sentence that is not about connecting test equipment (done before starting)."""
    sentences = re.split(r"(?<=[.;:])\s+", c.text)
    return c.stops_engine or any(STOP_ENGINE.search(s) and "connect" not in s.lower() for s in sentences)


def test_the_walk_covers_every_template_and_demo_profile() -> None:
    wheres = {s[0].split(":")[0] for s in all_steps()}
    templates = {f"template {n}" for n in load_templates(RULES / "templates")}
    profiles = {f"profile {p.id}" for p in library().profiles()}
    assert templates | profiles == wheres
    assert len(templates) >= 9 and len(profiles) >= 3


def test_every_step_rated_7_bar_or_more_carries_the_injection_caution() -> None:
    rated = [s for s in all_steps() if (_highest_pressure_bar(s[2]) or 0.0) >= 7.0]
    assert len(rated) > 100  # charge, brake, case and drain points as well as the loops
    missing = [s[0] for s in rated if "fluid-injection" not in _ids(s)]
    assert not missing, missing


def test_charge_and_brake_points_at_25_to_30_bar_carry_the_injection_caution() -> None:
    # The review found the caution missing at 25-30 bar charge and brake points.
    steps = [s for s in all_steps() if s[2].role in (Role.CHARGE_PRESSURE, Role.BRAKE_RELEASE_PRESSURE)]
    assert {s[2].role for s in steps} == {Role.CHARGE_PRESSURE, Role.BRAKE_RELEASE_PRESSURE}
    assert all("fluid-injection" in _ids(s) for s in steps)


def test_a_point_rated_below_7_bar_gets_no_injection_caution_from_its_rating() -> None:
    # A suction point rated 2 bar: the 7 bar threshold does not reach it.
    suction = [s for s in all_steps() if s[2].role is Role.SUCTION_PRESSURE]
    assert suction and all((_highest_pressure_bar(s[2]) or 0.0) < 7.0 for s in suction)
    assert not any("fluid-injection" in _ids(s) for s in suction)


def test_every_step_with_the_drive_engaged_carries_the_moving_machine_caution() -> None:
    engaged = [s for s in all_steps() if s[1].kind in DRIVE_KINDS and s[3] is not FunctionState.NEUTRAL]
    assert {s[1].kind for s in engaged} == DRIVE_KINDS
    missing = [s[0] for s in engaged if "moving-machine" not in _ids(s)]
    assert not missing, missing
    moving = knowledge().cautions["moving-machine"]
    assert moving.severity.value == "danger" and moving.two_people
    words = moving.text.lower()
    for must in (
        "two people",
        "in the seat",
        "second person",
        "barrier",
        "block the machine",
        "own brakes",
        "fixed anchor",
        "never a person",
        "under the machine",
        "tracks",
    ):
        assert must in words, must


def test_a_step_in_neutral_carries_no_moving_machine_caution() -> None:
    neutral = [s for s in all_steps() if s[3] is FunctionState.NEUTRAL]
    assert not any("moving-machine" in _ids(s) for s in neutral)


def test_no_step_that_needs_the_engine_running_tells_the_technician_to_stop_it() -> None:
    running = [s for s in all_steps() if s[2].role not in ENGINE_STOPPED_ROLES]
    bad = [(s[0], c.id) for s in running for c in _cautions(s) if _tells_to_stop_the_engine(c)]
    assert not bad, bad


def test_no_drive_engaged_step_sends_anyone_to_chock_the_tracks() -> None:
    engaged = [s for s in all_steps() if s[1].kind in DRIVE_KINDS and s[3] is not FunctionState.NEUTRAL]
    bad = [s[0] for s in engaged if "chock" in s[2].access.lower() or "chock" in s[2].location.lower()]
    assert not bad, bad


def test_a_point_under_the_machine_is_read_from_clear_while_the_engine_runs() -> None:
    under = [s for s in all_steps() if s[2].position.value != "clear"]
    assert under  # the travel motor drain and the brake release port
    for s in under:
        ids = _ids(s)
        assert "running-gear-point" in ids and "raised-machine" not in ids, s[0]
        assert "moving-machine" in ids or s[3] is FunctionState.NEUTRAL, s[0]
    assert knowledge().cautions["running-gear-point"].two_people


def test_working_under_a_stopped_machine_still_says_stop_the_engine() -> None:
    # A drift test is taken with the engine stopped: were its point under the machine, the
    # stopped-engine caution (brakes set, blocked, engine off) is the right one.
    _w, circuit, tp, state = next(s for s in all_steps() if s[2].role is Role.CYLINDER_DRIFT)
    under = tp.model_copy(update={"position": "under_machine"})
    ids = {r.caution.id for r in cautions_for_step(knowledge().cautions, circuit, under, state)}
    assert "raised-machine" in ids and "running-gear-point" not in ids


def test_every_accumulator_step_carries_the_gas_precharge_caution() -> None:
    steps = [
        s
        for s in all_steps()
        if s[1].kind is CircuitKind.ACCUMULATOR or s[2].role is Role.ACCUMULATOR_PRECHARGE
    ]
    assert (
        len({s[0].split(":")[0] for s in steps}) >= 2
    )  # the template and the Loamshifter's brake accumulator
    missing = [s[0] for s in steps if "gas-precharge" not in _ids(s)]
    assert not missing, missing
    words = knowledge().cautions["gas-precharge"].text.lower()
    for must in ("nitrogen only", "regulated charging kit", "never use oxygen", "air", "oil side at zero"):
        assert must in words, must


def test_a_stalled_function_carries_the_stall_caution() -> None:
    stalled = [s for s in all_steps() if s[3] is FunctionState.STALLED]
    assert all("stall-duration" in _ids(s) for s in stalled)


def test_a_raised_load_step_carries_the_raised_load_caution() -> None:
    drift = [s for s in all_steps() if s[2].role in (Role.CYLINDER_DRIFT, Role.CYLINDER_SEAL_DRIFT)]
    assert drift and all("raised-load" in _ids(s) for s in drift)


PART_CAUTIONS = [
    # a closed loop's travel brake: released (free to move) whenever the drive is engaged
    (
        CircuitKind.CLOSED_LOOP_DRIVE,
        Role.LOOP_A_PRESSURE,
        FunctionState.STALLED,
        Part.SPRING_APPLIED_BRAKE,
        "spring-brake",
    ),
    (
        CircuitKind.CYLINDER,
        Role.STALL_PRESSURE,
        FunctionState.STALLED,
        Part.COUNTERBALANCE_VALVE,
        "load-holding-valve",
    ),
    # the brake valve's supply point: stored-energy (which says all it says) is not on it
    (
        CircuitKind.BRAKE_RELEASE,
        Role.PILOT_PRESSURE,
        FunctionState.NEUTRAL,
        Part.ACCUMULATOR,
        "accumulator-fitted",
    ),
]


@pytest.mark.parametrize(
    ("kind", "role", "state", "part", "caution"), PART_CAUTIONS, ids=[p[4] for p in PART_CAUTIONS]
)
def test_a_part_caution_follows_what_the_circuit_has_fitted(
    kind: CircuitKind, role: Role, state: FunctionState, part: Part, caution: str
) -> None:
    _w, circuit, tp, _s = next(
        s for s in all_steps() if s[1].kind is kind and s[2].role is role and s[0].startswith("template")
    )
    stated = circuit.model_copy(update={"fitted_parts": [part]})
    without = circuit.model_copy(update={"fitted_parts": []})
    unstated = circuit.model_copy(update={"fitted_parts": None})

    def ids(c: Circuit) -> set[str]:
        return {r.caution.id for r in cautions_for_step(knowledge().cautions, c, tp, state)}

    assert caution in ids(stated)
    assert caution in ids(unstated)  # unstated means assume fitted: never dropped for want of a word
    assert caution not in ids(without)


def test_every_caution_names_a_source_and_the_general_caution_stays() -> None:
    cautions = knowledge().cautions
    assert all(len(c.source) >= 3 for c in cautions.values())
    general = [c for c in cautions.values() if c.always]
    assert [c.id for c in general] == ["general"]
    words = general[0].text.lower()
    assert "maker" in words and "local codes" in words and "licensed" in words


def test_a_point_naming_the_stopped_engine_caution_gets_the_running_one_on_a_running_step() -> None:
    # A profile may still name 'raised-machine' (engine stopped, key out) at a point read with the
    # engine running: the step shows the read-from-clear caution instead of contradicting itself.
    _w, circuit, tp, _state = next(s for s in all_steps() if s[2].role is Role.MOTOR_CASE_DRAIN_FLOW)
    named = tp.model_copy(update={"cautions": [*tp.cautions, "raised-machine"]})
    ids = {
        r.caution.id for r in cautions_for_step(knowledge().cautions, circuit, named, FunctionState.STALLED)
    }
    assert "raised-machine" not in ids and "running-gear-point" in ids
