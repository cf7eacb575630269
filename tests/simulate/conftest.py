"""Shared fixtures for the simulator tests: the bundled demo machines, each ready to simulate."""

from __future__ import annotations

import pytest

from fieldkit.model.condition import FunctionState
from fieldkit.model.profile import MachineProfile
from fieldkit.simulate.evaluate import sample_profiles
from fieldkit.simulate.machine import Machine
from fieldkit.simulate.simulator import Simulator


@pytest.fixture(scope="session")
def profiles() -> dict[str, MachineProfile]:
    return {p.id: p for p in sample_profiles()}


@pytest.fixture(scope="session")
def simulators(profiles: dict[str, MachineProfile]) -> dict[str, Simulator]:
    return {pid: Simulator(p) for pid, p in profiles.items()}


def _true_at(
    sim: Simulator, machine: Machine, point_id: str, state: FunctionState, oil_c: float | None = None
) -> float:
    """What a perfect gauge reads at a point in a state on this machine, with the oil at
    ``oil_c`` (the machine's reference temperature unless given), so readings compared in a
    test share one viscosity."""
    circuit, tp = sim.profile.test_point(point_id)
    env = machine.env(machine.reference_c if oil_c is None else oil_c)
    value = machine.true_value(circuit.id, tp, state, env)
    assert value is not None, f"no value for {point_id} {state.value}"
    return value


@pytest.fixture(scope="session")
def true_at():
    return _true_at
