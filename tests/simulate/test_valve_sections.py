"""The open-centre valve bank with port reliefs (template ``open_centre_sections``): each work
port stalls at the lower of its own port relief and the main relief, and the faults of a valve
bank move the readings a technician would take.

Figures below are the test's own (invented), entered as a maker's figures would be: main relief
180 bar, section 1 port A relief 150 bar (below the main), every other port relief at the
template's typical 200 bar (above the main)."""

from __future__ import annotations

import pytest

from fieldkit.model.condition import FunctionState as S
from fieldkit.model.loading import load_templates, profile_from_raw
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir
from fieldkit.simulate.machine import build_machine
from fieldkit.simulate.physics_table import TABLE
from fieldkit.simulate.simulator import Simulator

SEED = 5
PORTS = ["s1_a", "s1_b", "s2_a", "s2_b", "s3_a", "s3_b"]


@pytest.fixture(scope="module")
def valve_bank() -> MachineProfile:
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
                "parameters": {
                    "main_relief_setting": "180 bar",
                    "port_1a_relief_setting": "150 bar",
                    "pump_displacement": "30 cc/rev",
                },
            }
        ],
    }
    return profile_from_raw(raw, load_templates(rules_dir() / "templates"), "test valve bank")


@pytest.fixture(scope="module")
def sim(valve_bank: MachineProfile) -> Simulator:
    return Simulator(valve_bank)


def test_a_port_relief_below_the_main_relief_governs_its_own_port(sim, true_at):
    # Field notes [calc]: in parallel the lowest setting governs. On the nominal machine (no
    # scatter) port 1A cracks at 150 bar, the main relief at 180 bar; both pass the same pump flow
    # into the same return line, so the two stall readings differ by 180 − 150 = 30 bar plus the
    # difference of their overrides: at most 1.5 % of 30 bar = 0.45 bar (the simulator's default
    # override share at rated flow, a stated figure of hydraulics.DEFAULT_OVERRIDE_SHARE).
    nominal = build_machine(sim.profile, None, TABLE)
    main_stall = true_at(sim, nominal, "c.stall", S.STALLED)
    port = true_at(sim, nominal, "c.s1_a", S.STALLED)
    assert 30.0 <= main_stall - port <= 30.45
    # And the port reads its own setting plus the return line: 150 bar up to 150 + 7 bar
    # (the template's highest return back pressure) + 0.015 · 150 override.
    assert 150.0 < port < 150.0 + 7.0 + 2.25


def test_a_port_relief_set_above_the_main_relief_is_never_seen_at_its_port(sim, true_at):
    # Field notes [calc]: the 200 bar port relief and the 180 bar main relief are in parallel
    # while that port is stalled; the main relief opens first, so the port reads the main stall.
    machine, _ = sim.machine(None, 1.0, SEED)
    main_stall = true_at(sim, machine, "c.stall", S.STALLED)
    for port in PORTS[1:]:
        assert true_at(sim, machine, f"c.{port}", S.STALLED) == pytest.approx(main_stall, abs=0.01), port


def test_a_leaking_port_relief_lowers_one_port_only(sim, true_at):
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, injected = sim.machine("port_relief_low", 1.0, SEED)
    drops = {
        p: true_at(sim, healthy, f"c.{p}", S.STALLED) - true_at(sim, faulty, f"c.{p}", S.STALLED)
        for p in PORTS
    }
    moved = [p for p, d in drops.items() if d > 5.0]
    assert len(moved) == 1, (drops, injected.change)
    assert all(abs(d) < 0.01 for p, d in drops.items() if p not in moved)
    # The main relief's own stall point does not move.
    assert true_at(sim, faulty, "c.stall", S.STALLED) == pytest.approx(
        true_at(sim, healthy, "c.stall", S.STALLED), abs=0.01
    )


def test_a_low_main_relief_lowers_every_port_it_caps(sim, true_at):
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine("main_relief_low", 1.0, SEED)
    # A 15 % drop of a ~180 bar relief (fault model) is ~27 bar at every port whose own relief
    # is above the main; port 1A (150 bar) was already below it and stays where it was unless
    # the main falls under 150 bar.
    for port in PORTS[1:]:
        drop = true_at(sim, healthy, f"c.{port}", S.STALLED) - true_at(sim, faulty, f"c.{port}", S.STALLED)
        assert drop > 20.0, port


def test_a_restricted_open_centre_raises_neutral_pressure_but_not_the_return(sim, true_at):
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine("open_centre_restricted", 1.0, SEED)
    # The template allows 10 bar in neutral (common practice: a few bar through the open centre).
    assert true_at(sim, healthy, "c.pump_out", S.NEUTRAL) < 10.0
    assert true_at(sim, faulty, "c.pump_out", S.NEUTRAL) > 10.0
    assert true_at(sim, faulty, "c.return", S.FULL_STROKE) == pytest.approx(
        true_at(sim, healthy, "c.return", S.FULL_STROKE), abs=0.01
    )


def test_a_leaking_spool_makes_the_load_drift_but_the_stall_holds(sim, true_at):
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine("section_spool_leak", 1.0, SEED)
    # The template's typical drift limit is 10 mm/min (from memory); a sound machine sits well under.
    assert true_at(sim, healthy, "c.drift", S.NEUTRAL) < 10.0
    assert true_at(sim, faulty, "c.drift", S.NEUTRAL) > 10.0
    for port in PORTS:
        assert true_at(sim, faulty, f"c.{port}", S.STALLED) == pytest.approx(
            true_at(sim, healthy, f"c.{port}", S.STALLED), abs=0.01
        )


def test_every_valve_bank_fault_can_be_injected_on_the_template(sim):
    injectable = set(sim.injectable())
    for fault in ("port_relief_low", "main_relief_low", "section_spool_leak", "open_centre_restricted"):
        assert fault in injectable, sim.skipped().get(fault)
