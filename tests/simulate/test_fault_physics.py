"""Each injected fault moves the readings the way the physics says. Healthy and faulty machines
of one seed are the same machine, so the difference between them is the fault's alone; values
are what a perfect gauge would read (gauge error is tested elsewhere)."""

from __future__ import annotations

import math

import pytest

from fieldkit.model.condition import FunctionState as S
from fieldkit.simulate.hydraulics import DEFAULT_OVERRIDE_SHARE
from fieldkit.simulate.open_circuits import main_relief_id
from fieldkit.units import STANDARD_ATMOSPHERE, Kind, to_canonical

SEED = 11
ATM = STANDARD_ATMOSPHERE.m_as("bar")


def pair(sim, fault, severity=1.0, seed=SEED):
    healthy, _ = sim.machine(None, 1.0, seed)
    faulty, injected = sim.machine(fault, severity, seed)
    return healthy, faulty, injected


# --- reliefs --------------------------------------------------------------------------------


def test_lower_main_relief_lowers_the_stall_reading_by_the_setting_difference(simulators, true_at):
    # Field notes [calc]: in parallel the lowest setting governs, so the stall reading follows the
    # main relief one for one (the luff port relief above it stays shut). At the lower pressure the
    # gear pump leaks a little less, so a little more oil crosses the relief and its override eats
    # a few tenths of a bar of the drop.
    sim = simulators["brindlecombe-pebblerun"]
    healthy, faulty, _ = pair(sim, "main_relief_low")
    rid = main_relief_id(healthy.circuits["main"])
    drop = healthy.circuits["main"].reliefs[rid].setting - faulty.circuits["main"].reliefs[rid].setting
    assert drop == pytest.approx(0.15 * 180, rel=0.03)
    stall_drop = true_at(sim, healthy, "main.stall", S.STALLED) - true_at(
        sim, faulty, "main.stall", S.STALLED
    )
    assert drop - 0.3 < stall_drop < drop


def _override(sim, machine, true_at, *reliefs: str) -> float:
    """What the stall reads above the cracking pressures of the reliefs in its path and the return line."""
    main = machine.circuits["main"]
    cracking = sum(main.reliefs[r].setting for r in reliefs)
    return (
        true_at(sim, machine, "main.stall", S.STALLED)
        - cracking
        - true_at(sim, machine, "main.return", S.STALLED)
    )


def test_series_return_check_and_return_line_add_to_the_stall_reading(simulators, true_at):
    # Field notes [calc]: in series the settings add; back pressure on an internally drained
    # relief adds one for one: stall = main relief + return check + return line, plus the override
    # of the valves for the flow they pass. The profile states no override, so the simulator's own
    # 1.5 % of the setting at rated flow applies: at most 0.015 · (180 + 4) = 2.76 bar (a bit more
    # on a machine whose main relief was drawn high).
    sim = simulators["brindlecombe-pebblerun"]
    healthy, _ = sim.machine(None, 1.0, SEED)
    over = _override(sim, healthy, true_at, "main", "return_check")
    assert 0.5 < over < DEFAULT_OVERRIDE_SHARE * 184 * 1.03


def test_a_pump_that_delivers_less_stalls_lower_over_a_relief_with_override(simulators, true_at):
    # Relief override is a rise with the flow passing (bar per L/min): a worn gear pump pushes less oil
    # over the relief, so its stall reading sits closer to the cracking pressure, in proportion to the
    # flow it still delivers.
    sim = simulators["brindlecombe-pebblerun"]
    healthy, worn, _ = pair(sim, "pump_worn")
    ratio = _override(sim, worn, true_at, "main", "return_check") / _override(
        sim, healthy, true_at, "main", "return_check"
    )
    assert 0.5 < ratio < 0.97


def test_return_back_pressure_adds_one_for_one_to_an_internally_drained_relief(simulators, true_at):
    # Field notes (from memory / common practice): back pressure on the outlet of an internally
    # drained relief adds to its opening pressure about one for one.
    sim = simulators["brindlecombe-pebblerun"]
    healthy, faulty, _ = pair(sim, "return_back_pressure")
    rise_return = true_at(sim, faulty, "main.return", S.STALLED) - true_at(
        sim, healthy, "main.return", S.STALLED
    )
    rise_stall = true_at(sim, faulty, "main.stall", S.STALLED) - true_at(
        sim, healthy, "main.stall", S.STALLED
    )
    assert rise_return > 3.0  # past the maker's 3 bar at severity 1
    # One for one, less a hair: at the higher pressure the pump leaks a little more, so a little less
    # oil crosses the relief and its override falls by some hundredths of a bar.
    assert rise_stall == pytest.approx(rise_return, abs=0.05)
    # Everything returning through the same line feels it: the belt motor's outlet too.
    assert (
        true_at(sim, faulty, "belt.port_b", S.FULL_STROKE)
        > true_at(sim, healthy, "belt.port_b", S.FULL_STROKE) + 2.0
    )


def test_a_lower_relief_joined_in_parallel_governs_the_stall(simulators, true_at):
    # Field notes [calc]: in parallel the lowest setting governs; the series return check and
    # return line still add on top of it, with the override of the 110 bar valve for the whole flow
    # (at most 1.5 % of 110 + 4 bar = 1.71 bar; the main relief 70 bar higher stays shut).
    sim = simulators["brindlecombe-pebblerun"]
    healthy, faulty, injected = pair(sim, "parallel_relief_governing")
    main = faulty.circuits["main"]
    assert injected.circuit == "main" and main.parallel_extra == ["aux"]
    over = _override(sim, faulty, true_at, "aux", "return_check")
    assert 0.3 < over < DEFAULT_OVERRIDE_SHARE * 114 * 1.03
    assert true_at(sim, healthy, "main.stall", S.STALLED) - true_at(sim, faulty, "main.stall", S.STALLED) > 60


def test_a_relief_set_above_the_pump_cut_off_cannot_show(simulators):
    # Common practice: a load-sensing pump destrokes at its cut-off, so a relief above it never
    # opens and setting it higher changes no reading; the simulator says so and skips it.
    sim = simulators["oskerfield-loamshifter"]
    assert sim.targets("main_relief_high") == []
    assert "limit of error" in sim.skipped()["main_relief_high"]


def test_hp_relief_low_lowers_one_loop_side_only(simulators, true_at):
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, injected = pair(sim, "hp_relief_low")
    side = "loop_a" if "loop A" in injected.change else "loop_b"
    other = "loop_b" if side == "loop_a" else "loop_a"

    # The cross-port relief is a differential valve over the low side: the gauge reads charge +
    # differential + override, so the 15 % drop shows on the differential (the override for the
    # same stall flow moves by hundredths). The other side is unchanged but for the charge under it.
    def above_charge(model: object, point: str) -> float:
        return true_at(sim, model, point, S.STALLED) - true_at(sim, model, "travel.charge", S.STALLED)

    key = "hp_a" if side == "loop_a" else "hp_b"
    lost = above_charge(healthy, f"travel.{side}") - above_charge(faulty, f"travel.{side}")
    assert lost == pytest.approx(0.15 * healthy.circuits["travel"].p[key], abs=0.1)
    assert true_at(sim, faulty, f"travel.{other}", S.STALLED) == pytest.approx(
        true_at(sim, healthy, f"travel.{other}", S.STALLED), abs=0.05
    )


# --- closed loop charge circuit ---------------------------------------------------------------


def test_charge_reads_the_charge_relief_in_neutral_and_the_flushing_relief_in_stroke(simulators, true_at):
    # physics.closed_loop.expected_charge_pressure (common practice, from memory): charge relief
    # in neutral, the lower flushing relief in stroke, both plus case pressure; the simulator
    # adds a small override for the oil passing (at most 0.5 bar here).
    sim = simulators["tarnhollow-fellborer"]
    m, _ = sim.machine(None, 1.0, SEED)
    p = m.circuits["travel"].p
    neutral = true_at(sim, m, "travel.charge", S.NEUTRAL) - true_at(sim, m, "travel.case", S.NEUTRAL)
    assert 0.0 <= neutral - p["charge_relief"] <= 0.5
    stroke = true_at(sim, m, "travel.charge", S.FULL_STROKE)
    assert 0.0 <= stroke - p["flushing_relief"] - 0.3 <= 1.5  # case in stroke: its static part and leakage


def test_flushing_fault_pulls_charge_down_in_stroke_but_not_in_neutral(simulators, true_at):
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "flushing_valve_fault")
    assert true_at(sim, faulty, "travel.charge", S.NEUTRAL) == pytest.approx(
        true_at(sim, healthy, "travel.charge", S.NEUTRAL)
    )
    drop = true_at(sim, healthy, "travel.charge", S.FULL_STROKE) - true_at(
        sim, faulty, "travel.charge", S.FULL_STROKE
    )
    assert drop == pytest.approx(0.45 * healthy.circuits["travel"].p["flushing_relief"], rel=0.05)
    # The brakes are released from the charge gallery: they lose the same pressure.
    release_drop = true_at(sim, healthy, "brake.release", S.FULL_STROKE) - true_at(
        sim, faulty, "brake.release", S.FULL_STROKE
    )
    assert release_drop == pytest.approx(drop, rel=0.01)


def test_low_charge_relief_lowers_neutral_charge_and_keeps_net_charge_referenced_to_case(simulators, true_at):
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "charge_relief_low")
    drop = true_at(sim, healthy, "travel.charge", S.NEUTRAL) - true_at(
        sim, faulty, "travel.charge", S.NEUTRAL
    )
    assert drop == pytest.approx(0.35 * healthy.circuits["travel"].p["charge_relief"], abs=0.5)


def test_restricted_case_drain_raises_case_pressure_not_drain_flow(simulators, true_at):
    # Catalogue and common practice: a restricted drain shows as high case pressure with normal
    # drain flow. The charge relief vents into the case, so the charge gauge rises with it
    # (physics.closed_loop: reliefs work against the case).
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "case_drain_restricted")
    assert true_at(sim, faulty, "travel.pump_drain", S.STALLED) == pytest.approx(
        true_at(sim, healthy, "travel.pump_drain", S.STALLED)
    )
    rise = true_at(sim, faulty, "travel.case", S.NEUTRAL) - true_at(sim, healthy, "travel.case", S.NEUTRAL)
    assert rise > 2.0
    charge_rise = true_at(sim, faulty, "travel.charge", S.NEUTRAL) - true_at(
        sim, healthy, "travel.charge", S.NEUTRAL
    )
    assert charge_rise == pytest.approx(rise, abs=1e-6)


def test_restricted_charge_inlet_pulls_a_deep_vacuum(simulators, true_at):
    # Field notes (from memory): gear pump inlet no more than ~0.17 bar vacuum.
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "charge_suction_restricted")
    assert true_at(sim, healthy, "travel.charge_inlet", S.FULL_STROKE) > -0.17
    assert true_at(sim, faulty, "travel.charge_inlet", S.FULL_STROKE) < -0.3


# --- leakage ------------------------------------------------------------------------------------


def test_worn_pump_raises_case_drain_by_its_extra_leakage_at_the_stall(simulators, true_at):
    # Field notes: worn piston pumps leak above ~5 % of max flow (from memory); the fault adds
    # 10 %·s of theoretical flow at the stall pressure stated in the profile and the reference
    # temperature. Read at the reference temperature; the gap law passes flow ∝ Δp across the gap, so
    # a machine whose reliefs were drawn a little off its figure sees the extra in that proportion.
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "pump_worn")
    p = healthy.circuits["travel"].p
    extra = true_at(sim, faulty, "travel.pump_drain", S.STALLED) - true_at(
        sim, healthy, "travel.pump_drain", S.STALLED
    )
    assert extra == pytest.approx(0.10 * p["qth"], rel=0.03)


def test_leakage_readings_follow_the_dynamic_viscosity_of_the_simulators_own_oil(simulators):
    # Laminar gap law: at the same pressure difference leakage ∝ 1/μ. The drill rig runs VG46; the
    # simulator's Vogel–Cameron curve for it has B = 859.10 (worked by hand in test_hydraulics.py), so
    # [calc] μ(45 °C)/μ(65 °C) = e^(859.10 · (1/140 − 1/160)) = e^(859.10 · 0.00089286) = e^0.76705 = 2.1534.
    # (The engine's ASTM D341 kinematic ratio for its own VG46 figures is about 2.12: the two models
    # are different on purpose.)
    sim = simulators["tarnhollow-fellborer"]
    profile = sim.profile
    machine, _ = sim.machine(None, 1.0, SEED)
    _c, tp = profile.test_point("travel.motor_drain")
    cool = machine.true_value("travel", tp, S.STALLED, machine.env(45.0))
    warm = machine.true_value("travel", tp, S.STALLED, machine.env(65.0))
    assert warm / cool == pytest.approx(2.1534, abs=0.0005)


def test_worn_gear_pump_delivers_less_under_load(simulators, true_at):
    # Field notes: Q = V · n · ηv. The fault adds leakage of 10 % of V · n at the flow test
    # pressure (at the reference oil temperature; 50 cc/rev × 1800 rpm = 90 L/min → 9 L/min).
    sim = simulators["brindlecombe-pebblerun"]
    healthy, faulty, _ = pair(sim, "pump_worn")
    loss = true_at(sim, healthy, "main.pump_flow", S.UNDER_LOAD) - true_at(
        sim, faulty, "main.pump_flow", S.UNDER_LOAD
    )
    assert healthy.circuits["main"].p["qth"] == pytest.approx(90.0)
    assert loss == pytest.approx(9.0, rel=1e-6)


def test_suction_restriction_starves_the_pump(simulators, true_at):
    sim = simulators["brindlecombe-pebblerun"]
    healthy, faulty, _ = pair(sim, "suction_cavitation")
    assert true_at(sim, faulty, "main.suction", S.FULL_STROKE) < -0.3
    assert true_at(sim, faulty, "main.pump_flow", S.UNDER_LOAD) < 0.95 * true_at(
        sim, healthy, "main.pump_flow", S.UNDER_LOAD
    )


# --- load sensing ---------------------------------------------------------------------------


def test_ls_spring_moves_standby_and_margin_together(simulators, true_at):
    # Margin = pump outlet - LS signal (definition; field notes); one spring sets standby and margin.
    sim = simulators["oskerfield-loamshifter"]
    healthy, faulty, _ = pair(sim, "ls_setting_wrong")

    def margin(m):
        return true_at(sim, m, "work.pump_out", S.FULL_STROKE) - true_at(
            sim, m, "work.ls_signal", S.FULL_STROKE
        )

    shift_standby = true_at(sim, faulty, "work.standby", S.NEUTRAL) - true_at(
        sim, healthy, "work.standby", S.NEUTRAL
    )
    assert abs(shift_standby) == pytest.approx(0.45 * healthy.circuits["work"].p["margin"], rel=1e-6)
    assert margin(faulty) - margin(healthy) == pytest.approx(shift_standby, rel=1e-6)


def test_leaking_ls_signal_trails_the_work_port_at_stall(simulators, true_at):
    # A stalled function passes no flow, so a sound LS signal equals the work port (common practice).
    sim = simulators["oskerfield-loamshifter"]
    healthy, faulty, _ = pair(sim, "ls_signal_leak")
    gap = true_at(sim, faulty, "work.stall", S.STALLED) - true_at(sim, faulty, "work.ls_signal", S.STALLED)
    assert true_at(sim, healthy, "work.stall", S.STALLED) == pytest.approx(
        true_at(sim, healthy, "work.ls_signal", S.STALLED)
    )
    assert gap > 10.0


def test_low_cut_off_lowers_every_stall_reading(simulators, true_at):
    sim = simulators["oskerfield-loamshifter"]
    for seed in range(20):  # the direction is drawn from the seed: find one of each
        healthy, faulty, injected = pair(sim, "compensator_misset", seed=seed)
        if (
            "cut-off at" in injected.change
            and faulty.circuits["work"].p["cutoff"] < healthy.circuits["work"].p["cutoff"]
        ):
            break
    drop = healthy.circuits["work"].p["cutoff"] - faulty.circuits["work"].p["cutoff"]
    for point in ("work.stall", "lift.stall", "work.pump_out"):
        assert true_at(sim, healthy, point, S.STALLED) - true_at(
            sim, faulty, point, S.STALLED
        ) == pytest.approx(drop)


# --- cylinders, accumulators, brakes ---------------------------------------------------------


def test_drift_is_the_leak_over_the_cap_area(simulators, true_at):
    # Q = v · A (physics.cylinders.leakage_from_drift, field notes [calc]).
    sim = simulators["oskerfield-loamshifter"]
    m, _ = sim.machine(None, 1.0, SEED)
    p = m.circuits["lift"].p
    assert p["cap_area"] == pytest.approx(math.pi / 4 * 140.0**2)
    env = m.env(m.reference_c)
    _c, tp = sim.profile.test_point("lift.drift")
    assert m.true_value("lift", tp, S.NEUTRAL, env) == pytest.approx(p["q_valve"] * 1e6 / p["cap_area"])


def test_bypassing_piston_seal_drifts_only_with_the_rod_side_vented(simulators, true_at):
    # Field notes (trade article, second-hand): with both ports blocked a double-acting cylinder
    # locks even if its piston seal bypasses.
    sim = simulators["oskerfield-loamshifter"]
    healthy, faulty, _ = pair(sim, "cylinder_seal_bypass")
    assert true_at(sim, faulty, "lift.drift", S.NEUTRAL) == pytest.approx(
        true_at(sim, healthy, "lift.drift", S.NEUTRAL)
    )
    assert true_at(sim, faulty, "lift.drift_rod_vented", S.NEUTRAL) > 12.0


def test_leaking_holding_valve_drifts_in_both_tests(simulators, true_at):
    sim = simulators["oskerfield-loamshifter"]
    _healthy, faulty, _ = pair(sim, "load_holding_valve_leak")
    assert true_at(sim, faulty, "lift.drift", S.NEUTRAL) > 12.0
    assert true_at(sim, faulty, "lift.drift_rod_vented", S.NEUTRAL) >= true_at(
        sim, faulty, "lift.drift", S.NEUTRAL
    )


def test_lost_precharge_lowers_the_precharge_reading(simulators, true_at):
    # Ideal gas at constant volume and temperature: absolute pressure ∝ amount of gas; gauge
    # readings converted with the standard atmosphere (SI Brochure, 101 325 Pa).
    sim = simulators["oskerfield-loamshifter"]
    healthy, faulty, _ = pair(sim, "accumulator_precharge_lost", severity=0.5)
    before = true_at(sim, healthy, "brake_acc.precharge", S.NEUTRAL)
    after = true_at(sim, faulty, "brake_acc.precharge", S.NEUTRAL)
    assert (after + ATM) / (before + ATM) == pytest.approx(
        (0.65 * healthy.circuits["brake_acc"].p["precharge"] + ATM)
        / (healthy.circuits["brake_acc"].p["precharge"] + ATM)
    )
    assert after < 0.8 * 90  # below 80 % of the minimum working pressure


def test_warm_gas_reads_a_higher_precharge(simulators):
    # Gay-Lussac (ideal gas, constant volume): p_abs ∝ T_abs; 81 bar set at 20 °C read at 35 °C.
    from fieldkit.simulate.actuators import precharge_reading

    sim = simulators["oskerfield-loamshifter"]
    m, _ = sim.machine(None, 1.0, SEED)
    model = m.circuits["brake_acc"]
    model.p["precharge"] = 81.0
    assert precharge_reading(model, 35.0) == pytest.approx((81.0 + ATM) * 308.15 / 293.15 - ATM)


def test_dragging_brake_reads_low_while_travelling(simulators, true_at):
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "brake_not_releasing")
    assert true_at(sim, healthy, "brake.release", S.FULL_STROKE) > 16.0
    assert true_at(sim, faulty, "brake.release", S.FULL_STROKE) < 16.0


# --- the whole visit -----------------------------------------------------------------------------


def test_invalid_conditions_mean_cold_oil_or_low_speed(simulators, profiles):
    profile = profiles["brindlecombe-pebblerun"]
    window_min = to_canonical(profile.test_window.oil_min, Kind.TEMPERATURE)
    rated = to_canonical(profile.rated_speed, Kind.SPEED)
    kinds = set()
    for seed in range(12):
        m, injected = simulators["brindlecombe-pebblerun"].machine("invalid_test_conditions", 1.0, seed)
        cold = m.setting.oil_end_c < window_min
        slow = m.setting.speed_rpm < 0.95 * rated
        assert cold != slow, injected.change
        kinds.add("cold" if cold else "slow")
    assert kinds == {"cold", "slow"}


def test_overheating_puts_the_oil_above_the_test_window(simulators, profiles):
    profile = profiles["tarnhollow-fellborer"]
    m, _ = simulators["tarnhollow-fellborer"].machine("relief_overheating", 1.0, SEED)
    assert m.setting.oil_start_c > to_canonical(profile.test_window.oil_max, Kind.TEMPERATURE) + 10.0


def test_gauge_error_spoils_exactly_one_pressure_reading(simulators):
    from fieldkit.simulate import gauges as kit

    sim = simulators["oskerfield-loamshifter"]
    seen = set()
    for seed in range(16):
        healthy = sim.simulate(None, 1.0, seed).visit.readings
        faulty = sim.simulate("gauge_error", 1.0, seed).visit
        differ = [
            (a, b)
            for a, b in zip(healthy, faulty.readings, strict=True)
            if a.value != b.value or a.gauge != b.gauge
        ]
        assert len(differ) == 1
        _good, bad = differ[0]
        gauge = faulty.gauge(bad.gauge)
        assert gauge is not None and gauge.kind is Kind.PRESSURE
        top = kit.top_of_scale(gauge)
        if to_canonical(bad.value, Kind.PRESSURE) == top:
            seen.add("overranged")  # the needle on its stop: the engine's own overrange check sees it
        else:
            seen.add("biased")
    assert seen == {"overranged", "biased"}


def test_hp_relief_high_raises_one_loop_side_only(simulators, true_at):
    # The adjuster turned in: that side's differential rises by 10 %·s; the gauge reads it plus the
    # charge under it and the override, the other side is unchanged.
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, injected = pair(sim, "hp_relief_high")
    side = "loop_a" if "loop A" in injected.change else "loop_b"
    other = "loop_b" if side == "loop_a" else "loop_a"

    def above_charge(model: object, point: str) -> float:
        return true_at(sim, model, point, S.STALLED) - true_at(sim, model, "travel.charge", S.STALLED)

    key = "hp_a" if side == "loop_a" else "hp_b"
    gained = above_charge(faulty, f"travel.{side}") - above_charge(healthy, f"travel.{side}")
    assert gained == pytest.approx(0.10 * healthy.circuits["travel"].p[key], abs=0.1)
    assert true_at(sim, faulty, f"travel.{other}", S.STALLED) == pytest.approx(
        true_at(sim, healthy, f"travel.{other}", S.STALLED), abs=0.05
    )


def test_a_stalled_port_reading_falls_with_the_charge_under_it(simulators, true_at):
    # Trade fact (issue 13, common practice): a cross-port relief discharges into the low side, which
    # charge pressure holds, so its setting is a differential and the high-port gauge reads setting +
    # charge. A charge relief opening low takes the same bar off the stalled port reading (to within the
    # override for a few hundredths of a L/min more or less leakage).
    sim = simulators["tarnhollow-fellborer"]
    healthy, faulty, _ = pair(sim, "charge_relief_low")
    charge_drop = true_at(sim, healthy, "travel.charge", S.STALLED) - true_at(
        sim, faulty, "travel.charge", S.STALLED
    )
    port_drop = true_at(sim, healthy, "travel.loop_a", S.STALLED) - true_at(
        sim, faulty, "travel.loop_a", S.STALLED
    )
    assert charge_drop > 2.0  # the 27 bar relief now opens below the 22 bar flushing relief
    assert port_drop == pytest.approx(charge_drop, abs=0.05)
