"""The simulator's own fault table against the catalogue, and what it skips on each demo machine."""

from __future__ import annotations

import tomllib
from pathlib import Path

from fieldkit.resources import rules_dir
from fieldkit.simulate.faults import FAULTS, INJECTABLE


def catalogue_ids() -> set[str]:
    # The test may read the catalogue; the simulator itself never does (test_no_rules_access).
    data = tomllib.loads(Path(rules_dir() / "faults.toml").read_text(encoding="utf-8"))
    return {f["id"] for f in data["fault"]}


def test_injectable_faults_are_catalogue_faults():
    assert set(INJECTABLE) <= catalogue_ids()
    assert "no_fault" not in INJECTABLE  # the healthy machine is fault=None


def test_every_catalogued_fault_has_a_physical_model():
    # Not required by the catalogue, but a missing model would silently shrink the evaluation.
    assert catalogue_ids() - {"no_fault"} == set(INJECTABLE)


def test_every_fault_model_says_what_breaks():
    for model in FAULTS.values():
        assert len(model.description) > 60, model.id
        assert "s" in model.description or "severity" in model.description


def test_faults_skipped_on_each_demo_machine_say_why(simulators):
    skipped = {pid: sim.skipped() for pid, sim in simulators.items()}
    # A fixed gear pump machine has no closed loop, no load sensing, no cylinder or accumulator.
    assert "charge_pump_worn" in skipped["brindlecombe-pebblerun"]
    assert "no circuit of a kind" in skipped["brindlecombe-pebblerun"]["cylinder_seal_bypass"]
    # Relief faults that a pump cut-off below the relief hides, on the load-sensing loader.
    assert set(skipped["oskerfield-loamshifter"]) >= {"main_relief_high", "parallel_relief_governing"}
    # The drill rig's brake accumulator has no precharge point.
    assert "accumulator_precharge_lost" in skipped["tarnhollow-fellborer"]
    # Nothing is both injectable and skipped; together they cover the table.
    for pid, sim in simulators.items():
        assert set(sim.injectable()).isdisjoint(skipped[pid])
        assert set(sim.injectable()) | set(skipped[pid]) == set(FAULTS)
