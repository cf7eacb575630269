"""The simulator with two faults at once (``fieldkit evaluate --double``)."""

from __future__ import annotations

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.simulate.evaluate import fault_pairs, sample_profiles
from fieldkit.simulate.simulator import Simulator


def _pebblerun() -> Simulator:
    return Simulator(next(p for p in sample_profiles() if p.id == "brindlecombe-pebblerun"))


def _values(visit: object) -> dict[tuple[str, str], float]:
    return {
        (r.test_point, r.condition.function.value): float(r.value.magnitude)
        for r in visit.readings  # type: ignore[attr-defined]
    }


def test_two_faults_change_the_readings_of_both() -> None:
    # Same seed: same machine and gauge luck, so the difference is the faults' alone. A low main
    # relief pulls the main stall down; a worn belt motor raises the belt motor's drain.
    sim = _pebblerun()
    healthy = _values(sim.simulate(None, 1.0, 7).visit)
    relief = _values(sim.simulate("main_relief_low", 1.0, 7).visit)
    both = sim.simulate_two("main_relief_low", "motor_worn", 1.0, 7)
    two = _values(both.visit)
    assert {i.fault for i in both.injected} == {"main_relief_low", "motor_worn"}
    assert [i.circuit for i in both.injected] == ["main", "belt"]
    stall = ("main.stall", "stalled")
    drain = next(k for k in two if k[0] == "belt.motor_drain")
    assert two[stall] == pytest.approx(relief[stall]) and two[stall] < healthy[stall]
    assert two[drain] > healthy[drain] * 1.5
    assert both.visit.scenario is not None and both.visit.scenario.fault == "main_relief_low+motor_worn"


def test_the_same_fault_twice_is_refused() -> None:
    with pytest.raises(FieldkitError, match="two different faults"):
        _pebblerun().simulate_two("pump_worn", "pump_worn")


def test_pairs_leave_out_the_visit_faults_and_a_part_set_both_low_and_high() -> None:
    pairs = fault_pairs(["main_relief_low", "main_relief_high", "pump_worn", "gauge_error", "no_fault"])
    assert pairs == [("main_relief_low", "pump_worn"), ("main_relief_high", "pump_worn")]
