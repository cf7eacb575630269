"""Simulated visits: repeatable, healthy machines read healthy, gauges suit their points, every
reading carries no more error than its gauge's class allows, and the readings follow a
technician's order under the conditions the ranges ask for."""

from __future__ import annotations

import pytest

from fieldkit.errors import FieldkitError
from fieldkit.model.condition import FunctionState
from fieldkit.model.roles import Role
from fieldkit.model.visit import Visit
from fieldkit.physics.gauges import STANDARD_RANGES_BAR
from fieldkit.simulate import gauges as kit
from fieldkit.simulate.simulator import Simulator, simulate_visit
from fieldkit.units import Kind, to_canonical

SEEDS = range(12)


def test_same_seed_writes_the_same_visit(profiles):
    for profile in profiles.values():
        first = simulate_visit(profile, None, 1.0, seed=7).model_dump_json()
        again = simulate_visit(profile, None, 1.0, seed=7).model_dump_json()
        other = simulate_visit(profile, None, 1.0, seed=8).model_dump_json()
        assert first == again
        assert first != other


def test_same_seed_with_a_fault_is_the_same_machine_read_with_the_same_luck(simulators):
    # A reading the fault cannot reach (oil temperature, pump speed) is identical in both visits.
    sim = simulators["brindlecombe-pebblerun"]
    healthy = sim.simulate(None, 1.0, 3).visit
    faulty = sim.simulate("main_relief_low", 1.0, 3).visit
    untouched = [
        (a.value, b.value)
        for a, b in zip(healthy.readings, faulty.readings, strict=True)
        if a.test_point in ("main.oil_temp", "main.speed")
    ]
    assert untouched and all(a == b for a, b in untouched)


def test_simulated_visit_round_trips_through_json(profiles):
    visit = simulate_visit(profiles["tarnhollow-fellborer"], "charge_relief_low", 1.0, 2)
    again = Visit.model_validate_json(visit.model_dump_json())
    assert again.model_dump() == visit.model_dump()
    assert visit.scenario is not None and visit.scenario.fault == "charge_relief_low"


def test_healthy_machines_read_inside_their_expected_ranges(simulators):
    # Gauge error (EN 837-1 class limit) and machine scatter can push a borderline reading out;
    # measured 99.0 % inside over 40 seeds per demo machine when this test was written.
    inside = total = 0
    for sim in simulators.values():
        for seed in SEEDS:
            for r in sim.simulate(None, 1.0, seed).visit.readings:
                _c, tp = sim.profile.test_point(r.test_point)
                rng = tp.expected_for(r.condition)
                if rng is None:
                    continue
                x = to_canonical(r.value, tp.kind)
                ok = (rng.low is None or x >= to_canonical(rng.low, tp.kind)) and (
                    rng.high is None or x <= to_canonical(rng.high, tp.kind)
                )
                inside += ok
                total += 1
    assert total > 500
    assert inside / total >= 0.95


def test_every_range_condition_is_read(simulators):
    # Each expected range is checked under its own condition: the first state it names is read.
    for sim in simulators.values():
        visit = sim.simulate(None, 1.0, 0).visit
        taken = {(r.test_point, r.condition.function) for r in visit.readings}
        for _c, tp in sim.profile.all_test_points():
            if tp.role in (Role.OIL_TEMPERATURE, Role.PUMP_SPEED) and tp.id not in {
                r.test_point for r in visit.readings
            }:
                continue  # one thermometer and one tachometer serve the machine
            for rng in tp.expected:
                state = rng.when.function[0] if rng.when.function else None
                if state is None:
                    assert any(p == tp.id for p, _s in taken), tp.id
                else:
                    assert (tp.id, state) in taken, (tp.id, state)


def test_readings_follow_a_technicians_order(simulators):
    order = [
        FunctionState.NEUTRAL,
        FunctionState.FULL_STROKE,
        FunctionState.UNDER_LOAD,
        FunctionState.STALLED,
    ]
    for sim in simulators.values():
        visit = sim.simulate(None, 1.0, 0).visit
        roles = [sim.profile.test_point(r.test_point)[1].role for r in visit.readings]
        assert (
            roles[0] is Role.OIL_TEMPERATURE
            and roles[1] is Role.PUMP_SPEED
            and roles[-1] is Role.OIL_TEMPERATURE
        )
        running = [
            r
            for r, role in zip(visit.readings, roles, strict=True)
            if role
            not in (
                Role.OIL_TEMPERATURE,
                Role.PUMP_SPEED,
                Role.ACCUMULATOR_PRECHARGE,
                Role.CYLINDER_DRIFT,
                Role.CYLINDER_SEAL_DRIFT,
            )
        ]
        stages = [order.index(r.condition.function) for r in running]
        assert stages == sorted(stages)
        times = [r.taken_at for r in visit.readings]
        assert times == sorted(times) and len(set(times)) == len(times)
        for r, role in zip(visit.readings, roles, strict=True):
            if role is Role.ACCUMULATOR_PRECHARGE:  # engine off: no speed, no oil temperature recorded
                assert r.condition.speed is None and r.condition.oil_temperature is None


def test_pressure_gauges_suit_their_points(simulators):
    # EN 837-2 (from memory): steady working pressure within 3/4 of the scale; field notes
    # (common practice): a range about 1.5-2 times the working value; class 1 or 1.6 gauges.
    for sim in simulators.values():
        for planned, value, gauge in zip(sim.plan, sim.nominal, sim.gauges, strict=True):
            if planned.point.kind is not Kind.PRESSURE or value is None:
                continue
            assert gauge is not None and gauge.accuracy_class in (1.0, 1.6)
            top = to_canonical(gauge.full_scale, Kind.PRESSURE)
            if value < 0:
                assert gauge.scale_start is not None  # a vacuum needs a compound gauge
                continue
            assert top in STANDARD_RANGES_BAR
            assert value <= 0.75 * top
            if value >= 10:  # below that the smallest gauge in the kit (6 bar) sets the range
                assert 1.3 <= top / value <= 2.3, (planned.point.id, value, top)


def test_gauge_error_stays_within_the_class_limit(simulators):
    # EN 837-1: limit of error = class % of span; the simulator draws within it (rectangular,
    # JCGM 100:2008 4.3.7) and writes to a fifth of it, so |written - true| <= limit + step / 2.
    for sim in simulators.values():
        for seed in range(5):
            machine, _ = sim.machine(None, 1.0, seed)
            true = [v for v in sim.true_values(machine) if v is not None]
            visit = sim.simulate(None, 1.0, seed).visit
            assert len(true) == len(visit.readings)
            for t, r in zip(true, visit.readings, strict=True):
                gauge = visit.gauge(r.gauge)
                _c, tp = sim.profile.test_point(r.test_point)
                written = to_canonical(r.value, tp.kind)
                if gauge is None:  # drift: tape and stopwatch, ±(0.3 mm/min + 3 %)
                    assert (
                        abs(written - t)
                        <= kit.DRIFT_ERROR_FIXED + kit.DRIFT_ERROR_SHARE * t + kit.DRIFT_STEP / 2
                    )
                    continue
                allowed = kit.limit_of_error(gauge) + kit.resolution(gauge) / 2 + 1e-9
                assert abs(written - t) <= allowed, (r.test_point, t, written, gauge.id)


def test_class_1_gauge_on_250_bar_errs_at_most_2_5_bar():
    # EN 837-1: class 1 on 0-250 bar -> ±2.5 bar (field notes: class 1.6 on 0-10 bar -> ±0.16 bar [calc])
    gauge = kit.pressure_gauge(150.0)
    assert to_canonical(gauge.full_scale, Kind.PRESSURE) == 250.0
    assert kit.limit_of_error(gauge) == pytest.approx(2.5)
    assert kit.read(150.0, gauge, 0.0) == pytest.approx(147.5)
    assert kit.read(150.0, gauge, 0.999999) == pytest.approx(152.5)


def test_a_needle_stops_at_full_scale():
    gauge = kit.pressure_gauge(30.0)
    top = to_canonical(gauge.full_scale, Kind.PRESSURE)
    assert kit.read(10 * top, gauge, 0.5) == top


def test_bad_severity_and_unknown_fault_are_refused(profiles):
    sim = Simulator(profiles["oskerfield-loamshifter"])
    with pytest.raises(FieldkitError, match="severity"):
        sim.simulate("pump_worn", 0.0, 1)
    with pytest.raises(FieldkitError, match="cannot inject 'not_a_fault'"):
        sim.simulate("not_a_fault", 1.0, 1)
    with pytest.raises(FieldkitError, match="cannot show on machine 'oskerfield-loamshifter'"):
        sim.simulate("hp_relief_low", 1.0, 1)
