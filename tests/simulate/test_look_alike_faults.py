"""Look-alike faults that read the same on the usual points, told apart by the point added for it.

Healthy and faulty machines of one seed are the same machine, so a difference between them is
the fault's alone; values are what a perfect gauge reads.
"""

from __future__ import annotations

import pytest

from fieldkit.model.condition import FunctionState as S

SEED = 5
RIG = "tarnhollow-fellborer"


def _pair(sim, fault, severity=1.0):
    healthy, _ = sim.machine(None, 1.0, SEED)
    faulty, _ = sim.machine(fault, severity, SEED)
    return healthy, faulty


def test_a_blocked_return_lifts_the_cooler_inlet_as_much_as_the_case(simulators, true_at):
    # Field notes (relief valves, common practice): back pressure downstream adds one for one to
    # everything upstream of it, so the case and the cooler inlet rise by the same amount.
    sim = simulators[RIG]
    healthy, faulty = _pair(sim, "return_back_pressure")
    case_rise = true_at(sim, faulty, "travel.case", S.NEUTRAL) - true_at(
        sim, healthy, "travel.case", S.NEUTRAL
    )
    cooler_rise = true_at(sim, faulty, "travel.cooler_in", S.NEUTRAL) - true_at(
        sim, healthy, "travel.cooler_in", S.NEUTRAL
    )
    assert case_rise > 1.0
    assert cooler_rise == pytest.approx(case_rise, abs=0.01)


def test_a_kinked_case_drain_hose_lifts_the_case_but_not_the_cooler_inlet(simulators, true_at):
    # Common practice: a restriction lifts the pressure upstream of it only; the cooler inlet
    # lies downstream of the drain hose.
    sim = simulators[RIG]
    healthy, faulty = _pair(sim, "case_drain_restricted")
    assert (
        true_at(sim, faulty, "travel.case", S.NEUTRAL) > true_at(sim, healthy, "travel.case", S.NEUTRAL) + 1.0
    )
    assert true_at(sim, faulty, "travel.cooler_in", S.NEUTRAL) == pytest.approx(
        true_at(sim, healthy, "travel.cooler_in", S.NEUTRAL), abs=1e-9
    )


def test_a_sound_charge_pump_holds_its_relief_at_low_idle(simulators, true_at):
    # Common practice: at low idle a sound charge pump still delivers more than the loop loses
    # in neutral, so charge stays within a few bar of its reading at rated speed.
    sim = simulators[RIG]
    healthy, _ = sim.machine(None, 1.0, SEED)
    rated = true_at(sim, healthy, "travel.charge", S.NEUTRAL)
    idle = true_at(sim, healthy, "travel.charge_idle", S.NEUTRAL)
    assert 0.0 <= rated - idle < 3.0


def test_a_worn_charge_pump_sags_at_low_idle_and_a_low_charge_relief_does_not(simulators, true_at):
    # [calc] Fellborer: charge pump 8 cc/rev at 2200 rpm gives 17.6 L/min; the simulator's worn
    # pump (severity 1) slips 13 × 8 % of that at its 27 bar relief, i.e. about 104 % of its
    # delivery at rated speed. At low idle (900 rpm, 41 % of rated) it fills 0.9 × 7.2 ≈ 6.5 L/min
    # against ≈ 0.68 L/min per bar of slip, so it settles near 6.5 / 0.68 ≈ 9.6 bar above case:
    # well under half its relief. A charge relief set low reads low at both speeds alike.
    sim = simulators[RIG]
    _, worn = _pair(sim, "charge_pump_worn")
    idle = true_at(sim, worn, "travel.charge_idle", S.NEUTRAL)
    case = true_at(sim, worn, "travel.case", S.NEUTRAL)
    assert idle - case == pytest.approx(9.6, rel=0.25)
    _, low_relief = _pair(sim, "charge_relief_low")
    rated = true_at(sim, low_relief, "travel.charge", S.NEUTRAL)
    assert rated < 27.0 * 0.8
    assert 0.0 <= rated - true_at(sim, low_relief, "travel.charge_idle", S.NEUTRAL) < 3.0


LOADER = "oskerfield-loamshifter"


def test_a_low_main_relief_leaves_the_compensator_alone_reading_untouched(simulators, true_at):
    # Common practice: a relief below the pump's cut-off takes the stall (the lowest setting
    # governs, field notes); with the relief out of play the pump still settles at its cut-off.
    # Loamshifter: cut-off 250 bar, relief 270 bar; severity 1 opens the relief 15 % low (≈ 230 bar).
    sim = simulators[LOADER]
    healthy, faulty = _pair(sim, "main_relief_low")
    assert (
        true_at(sim, faulty, "work.stall", S.STALLED) < true_at(sim, healthy, "work.stall", S.STALLED) - 10.0
    )
    assert true_at(sim, faulty, "work.comp_alone", S.STALLED) == pytest.approx(
        true_at(sim, healthy, "work.comp_alone", S.STALLED), abs=1e-9
    )


def test_a_misset_compensator_moves_the_compensator_alone_reading_with_it(simulators, true_at):
    # [calc] The simulator's misset compensator is 12 % × severity off its 250 bar figure, up or
    # down: at severity 1 about 30 bar, and the reading with the relief out of play follows it.
    sim = simulators[LOADER]
    healthy, faulty = _pair(sim, "compensator_misset")
    shift = true_at(sim, faulty, "work.comp_alone", S.STALLED) - true_at(
        sim, healthy, "work.comp_alone", S.STALLED
    )
    assert abs(shift) == pytest.approx(0.12 * 250, rel=0.1)
