"""Rules read every work port of a valve bank, each port on its own (model.roles.PER_POINT_ROLES):
a port relief that leaks shows at its port alone, a main relief set low at every port it caps.
Visits are simulated on the open-centre valve bank template with the test's own figures; the
expected answer is the fault the simulator injected, not anything the rules compute."""

from __future__ import annotations

import pytest

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Verdict
from fieldkit.model.loading import load_templates, profile_from_raw
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir
from fieldkit.simulate.simulator import Simulator

PORT_LABELS = [f"section {n} port {s}, stalled" for n in (1, 2, 3) for s in ("A", "B")]


@pytest.fixture(scope="module")
def sim() -> Simulator:
    raw = {
        "id": "test-valve-bank",
        "name": "Valve bank under test",
        "rated_speed": "2000 rpm",
        "rated_max_pressure": "250 bar",
        "circuits": [
            {
                "id": "c",
                "name": "valve bank",
                "template": "open_centre_sections",
                "parameters": {"main_relief_setting": "170 bar", "pump_displacement": "30 cc/rev"},
            }
        ],
    }
    profile: MachineProfile = profile_from_raw(raw, load_templates(rules_dir() / "templates"), "test")
    return Simulator(profile)


def _port_findings(d):
    return [f for f in d.findings if f.rule_id == "work-port-stall"]


def test_each_work_port_gets_its_own_finding_named_after_the_port(sim):
    s = sim.simulate(None, 1.0, seed=3)
    d = diagnose(s.visit, sim.profile)
    found = _port_findings(d)
    assert len(found) == 6
    for label in PORT_LABELS:
        assert sum(label in f.title for f in found) == 1, label
    # A sound machine: no port is called low or high (one near a limit may be left undecided).
    assert not [f.title for f in found if f.verdict in (Verdict.LOW, Verdict.HIGH)]


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_a_port_relief_leaking_is_found_at_its_port_and_ranked_first(sim, seed):
    s = sim.simulate("port_relief_low", 1.0, seed=seed)
    d = diagnose(s.visit, sim.profile)
    low = [f for f in _port_findings(d) if f.verdict is Verdict.LOW]
    assert len(low) == 1, [f.title for f in low]
    # The simulator's change names the relief it weakened ("port relief 'port_2b' opens at ...").
    rid = s.change.split("'")[1]
    n, side = rid[-2], rid[-1].upper()
    assert f"section {n} port {side}" in low[0].title
    assert d.faults[0].key == "port_relief_low@c"


def test_a_main_relief_set_low_shows_at_every_port_and_is_ranked_first(sim):
    s = sim.simulate("main_relief_low", 1.0, seed=4)
    d = diagnose(s.visit, sim.profile)
    assert all(f.verdict is Verdict.LOW for f in _port_findings(d))
    assert d.faults[0].key == "main_relief_low@c"


def test_a_rule_read_point_by_point_says_nothing_on_a_circuit_without_such_points():
    # The demo stacker's main circuit is a fixed pump with no per-port points: no port finding.
    from fieldkit.simulate.evaluate import sample_profiles

    profile = next(p for p in sample_profiles() if p.id == "brindlecombe-pebblerun")
    s = Simulator(profile).simulate(None, 1.0, seed=1)
    assert not _port_findings(diagnose(s.visit, profile))
