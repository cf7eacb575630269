"""Faults, rules and cautions for parts that are not fitted never appear."""

from __future__ import annotations

from diagnosis_helpers import knowledge, library, load_visit

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.ranking import hypotheses_for
from fieldkit.model.fitted import applies, part_fitted
from fieldkit.model.parts import Part
from fieldkit.model.profile import Circuit, MachineProfile
from fieldkit.resources import samples_dir


def without_parts(profile: MachineProfile, circuit_id: str, fitted: list[Part]) -> MachineProfile:
    circuits = [
        c.model_copy(update={"fitted_parts": fitted}) if c.id == circuit_id else c for c in profile.circuits
    ]
    return profile.model_copy(update={"circuits": circuits})


def test_a_leaking_load_holding_valve_ranks_first_where_one_is_fitted() -> None:
    # The check below must be able to fail: with the valve fitted, the demo scene ranks it first.
    visit = load_visit(samples_dir() / "visits" / "loamshifter-load-holding-valve-leak.json")
    d = diagnose(visit, library().get(visit.machine), knowledge())
    assert d.faults[0].id == "load_holding_valve_leak"


def test_a_fault_whose_part_is_absent_never_ranks() -> None:
    visit = load_visit(samples_dir() / "visits" / "loamshifter-load-holding-valve-leak.json")
    bare = without_parts(library().get(visit.machine), "lift", [])
    d = diagnose(visit, bare, knowledge())
    assert all(f.id != "load_holding_valve_leak" or f.circuit != "lift" for f in d.faults)


def test_no_flushing_valve_fault_on_a_loop_without_one() -> None:
    profile = library().get("tarnhollow-fellborer")
    faults = knowledge().faults
    before = {h.key for h in hypotheses_for(profile, faults)}
    assert "flushing_valve_fault@travel" in before
    bare = without_parts(profile, "travel", [Part.TWO_SPEED_MOTOR])
    after = {h.key for h in hypotheses_for(bare, faults)}
    assert "flushing_valve_fault@travel" not in after
    assert "charge_relief_low@travel" in after  # faults of parts every loop has stay


def test_an_accumulator_circuit_has_its_accumulator_whatever_else_is_ticked() -> None:
    profile = library().get("oskerfield-loamshifter")
    acc = next(c for c in profile.circuits if c.id == "brake_acc")
    bare = acc.model_copy(update={"fitted_parts": []})
    assert part_fitted(bare, Part.ACCUMULATOR)
    assert applies([Part.ACCUMULATOR], bare)


def test_unstated_parts_are_assumed_fitted_and_stated_ones_are_exact() -> None:
    c = Circuit(id="m", name="motor", kind="motor")
    assert applies([Part.COUNTERBALANCE_VALVE], c)
    stated = c.model_copy(update={"fitted_parts": [Part.SPRING_APPLIED_BRAKE]})
    assert applies([Part.SPRING_APPLIED_BRAKE], stated)
    assert not applies([Part.COUNTERBALANCE_VALVE], stated)
    assert applies([Part.COUNTERBALANCE_VALVE, Part.SPRING_APPLIED_BRAKE], stated)  # any one will do
    assert applies([], stated)
