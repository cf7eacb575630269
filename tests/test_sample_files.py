"""The bundled data files: circuit templates, demo machine profiles and demo visits.

People edit these files by hand and the first-run demo reads them, so every file must load, every
reading must fit its machine, and the demo faults must be visible in the readings they were written
to show. Malformed profiles must fail with a message that names the file and the right line.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pint
import pytest

from fieldkit.errors import DataFileError
from fieldkit.model.gauge import Gauge
from fieldkit.model.loading import CircuitTemplate, load_profile, load_templates
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.profile import CircuitKind, ExpectedRange, MachineProfile, TestPoint
from fieldkit.model.quantity import parse_for_kind
from fieldkit.model.ranges import compile_bound
from fieldkit.model.roles import ROLES, Role
from fieldkit.model.visit import FunctionState, Reading, Visit, VisitStatus
from fieldkit.physics.fluid import grade, normalised_leakage
from fieldkit.units import Kind, kind_of, to_canonical

ROOT = Path(__file__).resolve().parents[1]
TEMPLATES = ROOT / "rules" / "templates"
PROFILES = ROOT / "sample_readings" / "profiles"
VISITS = ROOT / "sample_readings" / "visits"
DEMO_VISIT = "demo-open-visit.json"

FAULT_IDS = frozenset(
    {
        "charge_pump_worn",
        "charge_relief_low",
        "charge_suction_restricted",
        "flushing_valve_fault",
        "hp_relief_low",
        "pump_worn",
        "motor_worn",
        "case_drain_restricted",
        "main_relief_low",
        "main_relief_high",
        "parallel_relief_governing",
        "return_back_pressure",
        "compensator_misset",
        "ls_setting_wrong",
        "ls_signal_leak",
        "pilot_supply_low",
        "brake_not_releasing",
        "cylinder_seal_bypass",
        "load_holding_valve_leak",
        "accumulator_precharge_lost",
        "relief_overheating",
        "suction_cavitation",
        "invalid_test_conditions",
        "gauge_error",
        "no_fault",
    }
)
CAUTION_IDS = frozenset(
    {
        "fluid-injection",
        "stored-energy",
        "raised-load",
        "raised-machine",
        "hot-oil",
        "gauge-rating",
        "bleed-before-break",
        "stall-duration",
        "lockout",
        "relief-max-setting",
        "rotating-parts",
        "intensification",
        "port-relief-check",
        "steering-sweep",
    }
)
#: Ground rules: a template range names a published source or says it is common practice or from memory.
SOURCE_TAGS = ("common practice", "from memory", "trade article", "field notes")


# --- loading ------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def templates() -> dict[str, tuple[CircuitTemplate, dict[str, Any]]]:
    return load_templates(TEMPLATES)


@pytest.fixture(scope="module")
def profiles(templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]) -> dict[str, MachineProfile]:
    out: dict[str, MachineProfile] = {}
    for path in sorted(PROFILES.glob("*.toml")):
        profile = load_profile(path, templates)
        assert profile.id not in out, f"{path.name}: profile id '{profile.id}' used twice"
        out[profile.id] = profile
    return out


@pytest.fixture(scope="module")
def visits() -> dict[str, Visit]:
    return {
        p.name: Visit.model_validate_json(p.read_text(encoding="utf-8"))
        for p in sorted(VISITS.glob("*.json"))
    }


def _fault_visits(visits: dict[str, Visit]) -> dict[str, Visit]:
    return {name: v for name, v in visits.items() if name != DEMO_VISIT}


def _value(q: pint.Quantity) -> float:
    return to_canonical(q, kind_of(q))


def _limit_of_error(gauge: Gauge | None) -> float:
    """EN 837-1: the class is the limit of error as % of span, anywhere on the scale."""
    if gauge is None:
        return 0.0
    kind = gauge.kind
    start = to_canonical(gauge.scale_start, kind) if gauge.scale_start is not None else 0.0
    return gauge.accuracy_class / 100.0 * (to_canonical(gauge.full_scale, kind) - start)


def _outside(rng: ExpectedRange, value: float, margin: float = 0.0) -> bool:
    low = _value(rng.low) if rng.low is not None else None
    high = _value(rng.high) if rng.high is not None else None
    return (low is not None and value < low + margin) or (high is not None and value > high - margin)


def test_every_circuit_kind_has_a_template(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    assert {t.kind for t, _raw in templates.values()} == set(CircuitKind)


def test_template_ranges_name_their_source(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    for name, (tmpl, raw) in templates.items():
        for tp in raw["test_points"]:
            for rng in tp.get("expected", []):
                # A range written as an expression names its figures, whose typical values carry
                # their own tags (checked below); its own source says why the expression holds.
                uses_figures = any(
                    compile_bound(rng[b], ROLES[Role(tp["role"])].kind).names
                    for b in ("low", "high")
                    if b in rng
                )
                assert uses_figures or rng["source"].lower().startswith(SOURCE_TAGS), (
                    f"{name}.{tp['id']}: source '{rng['source']}'"
                )
        for param, fig in tmpl.parameters.items():
            assert fig.source.lower().startswith(SOURCE_TAGS), f"{name}.{param}: source '{fig.source}'"


def test_template_parameters_are_known_and_of_the_right_kind(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    # CircuitTemplate keeps parameters raw for merging; a typo would only surface in a profile.
    for name, (tmpl, _raw) in templates.items():
        for param, fig in tmpl.parameters.items():
            assert param in PARAMETERS, f"{name}: unknown parameter {param}"
            parse_for_kind(PARAMETERS[param][0], fig.typical)


def test_template_points_say_where_how_long_and_how_high(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    for name, (tmpl, _raw) in templates.items():
        for tp in tmpl.test_points:
            where = f"{name}.{tp.id}"
            assert tp.location and tp.access and tp.fitting, (
                f"{where}: location, access and fitting are needed"
            )
            assert tp.minutes > 0
            if tp.kind is Kind.PRESSURE:
                assert tp.max_pressure is not None, f"{where}: a pressure point needs max_pressure"
                for rng in tp.expected:
                    if rng.high is not None:
                        assert rng.high <= tp.max_pressure, f"{where}: range above the point's max_pressure"


def _all_points(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]], profiles: dict[str, MachineProfile]
) -> list[tuple[str, TestPoint]]:
    points = [(f"template {n}.{tp.id}", tp) for n, (t, _r) in templates.items() for tp in t.test_points]
    points += [(f"profile {p.id}: {tp.id}", tp) for p in profiles.values() for _c, tp in p.all_test_points()]
    return points


def test_cautions_come_from_the_catalogue(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]], profiles: dict[str, MachineProfile]
) -> None:
    for where, tp in _all_points(templates, profiles):
        unknown = set(tp.cautions) - CAUTION_IDS
        assert not unknown, f"{where}: unknown cautions {sorted(unknown)}"


def test_high_pressure_points_carry_a_fluid_injection_caution(
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
    profiles: dict[str, MachineProfile],
) -> None:
    # Fluid injection injury is possible from about 7 bar (UK HSE research report RR976, 2013).
    for where, tp in _all_points(templates, profiles):
        if ROLES[tp.role].high_pressure:
            assert "fluid-injection" in tp.cautions, where


def test_demo_profiles_cover_the_three_scenario_machines(profiles: dict[str, MachineProfile]) -> None:
    kinds = {pid: {c.kind for c in p.circuits} for pid, p in profiles.items()}
    assert any(CircuitKind.CLOSED_LOOP_DRIVE in k for k in kinds.values())
    assert any({CircuitKind.LOAD_SENSING, CircuitKind.CYLINDER} <= k for k in kinds.values())
    fixed = [c for p in profiles.values() for c in p.circuits if c.kind is CircuitKind.OPEN_FIXED_PUMP]
    assert any(
        c.relief_layout is not None
        and c.relief_layout.series
        and any(not isinstance(m, str) and m.parallel for m in c.relief_layout.series)
        for c in fixed
    ), "the conveyor needs reliefs in parallel inside a series layout"


def test_demo_profiles_say_they_are_fictional() -> None:
    for path in sorted(PROFILES.glob("*.toml")):
        assert "fictional" in path.read_text(encoding="utf-8").lower(), path.name


def test_profile_ranges_name_a_source(profiles: dict[str, MachineProfile]) -> None:
    for p in profiles.values():
        for _c, tp in p.all_test_points():
            assert all(len(r.source) >= 3 for r in tp.expected), tp.id


# --- visits -------------------------------------------------------------------------------


def test_every_visit_names_a_known_machine(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    assert visits, "no visits found"
    for name, v in visits.items():
        assert v.machine in profiles, f"{name}: unknown machine '{v.machine}'"


def test_every_reading_fits_its_test_point(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    for name, v in visits.items():
        profile = profiles[v.machine]
        for r in v.readings:
            _c, tp = profile.test_point(r.test_point)  # KeyError names a point the machine lacks
            assert kind_of(r.value) is ROLES[tp.role].kind, f"{name} {r.id}: {r.value:~P} for {tp.role.value}"
            assert r.entered, f"{name} {r.id}: the typed text is kept"


def test_gauges_suit_their_readings(visits: dict[str, Visit]) -> None:
    for name, v in visits.items():
        for r in v.readings:
            gauge = v.gauge(r.gauge)
            if gauge is None:
                continue
            where = f"{name} {r.id} on {gauge.id}"
            assert gauge.kind is kind_of(r.value), where
            start = gauge.scale_start if gauge.scale_start is not None else 0 * gauge.full_scale
            assert _value(start) <= _value(r.value) < _value(gauge.full_scale), f"{where}: off the scale"


def test_readings_are_taken_in_order_on_the_visit_day(visits: dict[str, Visit]) -> None:
    for name, v in visits.items():
        times = [r.taken_at for r in v.readings]
        assert times == sorted(times), name
        assert {t.date() for t in times} == {v.date}, name
        assert (times[-1] - times[0]).total_seconds() < 10 * 3600, name


def test_every_closed_visit_shows_a_listed_fault(visits: dict[str, Visit]) -> None:
    for name, v in _fault_visits(visits).items():
        assert v.status is VisitStatus.CLOSED, name
        assert v.scenario is not None and v.scenario.fault in FAULT_IDS, name
        assert len(v.scenario.story) > 40, f"{name}: the scenario needs its story"


def test_each_machine_has_one_healthy_visit_and_two_faulty_ones(
    visits: dict[str, Visit],
    profiles: dict[str, MachineProfile],
) -> None:
    faults: set[str] = set()
    for pid in profiles:
        scenarios = [
            v.scenario.fault for v in _fault_visits(visits).values() if v.machine == pid and v.scenario
        ]
        assert scenarios.count("no_fault") == 1, pid
        assert len([f for f in scenarios if f != "no_fault"]) >= 2, pid
        faults.update(f for f in scenarios if f != "no_fault")
    assert len(faults) >= 7, sorted(faults)


def test_visits_cover_the_key_points(visits: dict[str, Visit], profiles: dict[str, MachineProfile]) -> None:
    for name, v in _fault_visits(visits).items():
        profile = profiles[v.machine]
        current = v.current_readings()
        assert 8 <= len(current) <= 20, f"{name}: {len(current)} readings"
        roles = {profile.test_point(r.test_point)[1].role for r in current}
        assert {Role.OIL_TEMPERATURE, Role.PUMP_SPEED} <= roles, name
        for r in current:
            if profile.test_point(r.test_point)[1].role is not Role.ACCUMULATOR_PRECHARGE:  # read engine off
                assert r.condition.speed is not None and r.condition.oil_temperature is not None, (
                    f"{name} {r.id}"
                )


def test_healthy_visits_read_comfortably_inside_every_range(
    visits: dict[str, Visit],
    profiles: dict[str, MachineProfile],
) -> None:
    """Inside by at least the gauge's limit of error (EN 837-1 class × span), so a healthy demo
    machine never reads 'inconclusive'."""
    for name, v in _fault_visits(visits).items():
        if v.scenario is None or v.scenario.fault != "no_fault":
            continue
        profile = profiles[v.machine]
        checked = 0
        for r in v.current_readings():
            rng = profile.test_point(r.test_point)[1].expected_for(r.condition)
            if rng is None:
                continue
            checked += 1
            assert not _outside(rng, _value(r.value), _limit_of_error(v.gauge(r.gauge))), (
                f"{name} {r.id} {r.test_point}: {r.value:~P} is not comfortably inside"
            )
        assert checked >= 8, f"{name}: only {checked} readings have a range"


def test_healthy_visits_keep_to_the_test_window(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    for name, v in _fault_visits(visits).items():
        if v.scenario is None or v.scenario.fault != "no_fault":
            continue
        window, rated = profiles[v.machine].test_window, profiles[v.machine].rated_speed
        for r in v.current_readings():
            c = r.condition
            if c.oil_temperature is not None:
                assert window.oil_min <= c.oil_temperature <= window.oil_max, f"{name} {r.id}"
            if c.speed is not None:
                assert abs(_value(c.speed) / _value(rated) - 1) * 100 <= window.speed_tolerance_pct, (
                    f"{name} {r.id}"
                )


def test_every_faulty_visit_has_a_reading_outside_its_range(
    visits: dict[str, Visit],
    profiles: dict[str, MachineProfile],
) -> None:
    for name, v in _fault_visits(visits).items():
        if v.scenario is None or v.scenario.fault == "no_fault":
            continue
        profile = profiles[v.machine]
        outside = [
            r.id
            for r in v.current_readings()
            if (rng := profile.test_point(r.test_point)[1].expected_for(r.condition)) is not None
            and _outside(rng, _value(r.value))
        ]
        assert outside, f"{name}: the fault '{v.scenario.fault}' shows in no reading"


def test_demo_visit_is_a_drill_rig_visit_just_started(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    demo = visits[DEMO_VISIT]
    assert demo.status is VisitStatus.OPEN
    assert demo.scenario is None
    assert 3 <= len(demo.current_readings()) <= 4
    assert any(c.kind is CircuitKind.CLOSED_LOOP_DRIVE for c in profiles[demo.machine].circuits)


def test_a_corrected_reading_replaces_the_mistyped_one(visits: dict[str, Visit]) -> None:
    corrections = [(name, r) for name, v in visits.items() for r in v.readings if r.replaces]
    assert corrections, "the demo should show one correction"
    for name, r in corrections:
        v = visits[name]
        assert r.replaces not in {c.id for c in v.current_readings()}
        assert r in v.current_readings()


# --- the faults are physically consistent with their readings --------------------------------


def _pick(
    v: Visit,
    profile: MachineProfile,
    role: Role,
    function: FunctionState | None = None,
    circuit: str | None = None,
) -> list[Reading]:
    out = []
    for r in v.current_readings():
        c, tp = profile.test_point(r.test_point)
        if (
            tp.role is role
            and (function is None or r.condition.function is function)
            and circuit in (None, c.id)
        ):
            out.append(r)
    return out


def _one(v: Visit, profile: MachineProfile, role: Role, function: FunctionState | None = None) -> float:
    found = _pick(v, profile, role, function)
    assert found, f"{v.id}: no {role.value} reading ({function})"
    return _value(found[0].value)


def _param(profile: MachineProfile, name: str) -> float:
    for c in profile.circuits:
        if name in c.parameters:
            return _value(c.parameters[name])
    raise KeyError(name)


def _relief(profile: MachineProfile, relief_id: str) -> float:
    return next(_value(r.setting) for c in profile.circuits for r in c.reliefs if r.id == relief_id)


def _range_of(profile: MachineProfile, reading: Reading) -> ExpectedRange:
    rng = profile.test_point(reading.test_point)[1].expected_for(reading.condition)
    assert rng is not None, reading.test_point
    return rng


def _in_range(profile: MachineProfile, v: Visit, role: Role, function: FunctionState | None = None) -> bool:
    readings = _pick(v, profile, role, function)
    assert readings
    return all(not _outside(_range_of(profile, r), _value(r.value)) for r in readings)


def _margin(v: Visit, profile: MachineProfile) -> float:
    """LS margin: pump outlet minus LS signal, read at the same moment under load."""
    pumps = _pick(v, profile, Role.PUMP_OUTLET_PRESSURE, FunctionState.UNDER_LOAD)
    signals = {r.taken_at: r for r in _pick(v, profile, Role.LS_SIGNAL_PRESSURE, FunctionState.UNDER_LOAD)}
    pair = next((p, signals[p.taken_at]) for p in pumps if p.taken_at in signals)
    return _value(pair[0].value) - _value(pair[1].value)


N, FS, ST, UL = (
    FunctionState.NEUTRAL,
    FunctionState.FULL_STROKE,
    FunctionState.STALLED,
    FunctionState.UNDER_LOAD,
)


def _check_fault(fault: str, v: Visit, p: MachineProfile) -> None:  # noqa: C901 - one branch per fault
    if fault == "charge_pump_worn":
        # Field notes: charge falls in stroke; a worn charge pump is low already in neutral, drain normal.
        assert not _in_range(p, v, Role.CHARGE_PRESSURE, N)
        assert _one(v, p, Role.CHARGE_PRESSURE, FS) < _one(v, p, Role.CHARGE_PRESSURE, N)
        assert _in_range(p, v, Role.PUMP_CASE_DRAIN_FLOW) and _in_range(p, v, Role.SUCTION_PRESSURE)
    elif fault == "pump_worn":
        # Laminar leakage scales with 1/viscosity (field notes; ASTM D341 curve): normalise to the
        # reference temperature before comparing with the baseline.
        drain = _pick(v, p, Role.PUMP_CASE_DRAIN_FLOW, ST)[0]
        assert drain.condition.oil_temperature is not None
        norm = normalised_leakage(
            drain.value,
            drain.condition.oil_temperature,
            p.reference_oil_temperature,
            grade(p.oil_grade).curve,
        )
        assert _value(norm) > 2 * _param(p, "case_drain_baseline")
        assert _outside(_range_of(p, drain), _value(norm))
        assert _in_range(p, v, Role.CHARGE_PRESSURE, N) and not _in_range(p, v, Role.CHARGE_PRESSURE, ST)
        assert _in_range(p, v, Role.MOTOR_CASE_DRAIN_FLOW)
    elif fault == "case_drain_restricted":
        assert _one(v, p, Role.CASE_PRESSURE, N) > _param(p, "max_case_pressure")
        assert _in_range(p, v, Role.PUMP_CASE_DRAIN_FLOW)
        # Charge relief vents into the case, so net charge (charge - case) stays normal.
        net = _one(v, p, Role.CHARGE_PRESSURE, N) - _one(v, p, Role.CASE_PRESSURE, N)
        assert abs(net - _param(p, "charge_relief_setting")) < 2.0
    elif fault in ("parallel_relief_governing", "return_back_pressure", "main_relief_low"):
        # Field notes: in parallel the lowest setting governs; in series settings add; back pressure on
        # an internally drained relief's outlet adds about one for one.
        # The demo conveyor's return point is after the series return check, so both add.
        stall = _one(v, p, Role.STALL_PRESSURE, ST)
        back = _one(v, p, Role.RETURN_PRESSURE, ST) + _relief(p, "return_check")
        main, aux = _relief(p, "main"), _relief(p, "aux")
        if fault == "parallel_relief_governing":
            assert abs(stall - (aux + back)) < 3.0
        elif fault == "return_back_pressure":
            assert back > _param(p, "return_back_pressure_max")
            assert abs(stall - (main + back)) < 3.0
            assert _in_range(p, v, Role.FILTER_PRESSURE_DROP)
        else:
            assert _in_range(p, v, Role.RETURN_PRESSURE, ST)
            assert stall < main and abs(stall - (aux + back)) > 10.0
    elif fault == "suction_cavitation":
        assert _one(v, p, Role.SUCTION_PRESSURE, FS) < _param(p, "min_suction_pressure")
        assert not _in_range(p, v, Role.PUMP_FLOW, UL)
    elif fault == "ls_setting_wrong":
        assert not _in_range(p, v, Role.LS_STANDBY_PRESSURE, N)
        assert abs(_margin(v, p) - _param(p, "ls_margin_setting")) > 5.0
    elif fault == "load_holding_valve_leak":
        # Oil leaves through the valve: drift shows with the rod side blocked and with it vented.
        assert _one(v, p, Role.CYLINDER_DRIFT, N) > _param(p, "max_drift_rate")
        assert _one(v, p, Role.CYLINDER_SEAL_DRIFT, N) > _param(p, "max_drift_rate")
    elif fault == "cylinder_seal_bypass":
        # Field notes: with both ports blocked the cylinder locks even if its piston seal bypasses;
        # with the rod side vented the head side empties across the seal and the load drifts.
        assert _one(v, p, Role.CYLINDER_DRIFT, N) <= _param(p, "max_drift_rate")
        assert _one(v, p, Role.CYLINDER_SEAL_DRIFT, N) > _param(p, "max_drift_rate")
    elif fault == "accumulator_precharge_lost":
        # Precharge about 90 % of minimum working pressure (field notes, from memory).
        assert _one(v, p, Role.ACCUMULATOR_PRECHARGE) < 0.5 * 0.9 * _param(
            p, "accumulator_min_working_pressure"
        )
        assert _in_range(p, v, Role.PUMP_OUTLET_PRESSURE, N)
    else:
        pytest.fail(f"no consistency check written for fault '{fault}'")


def test_fault_readings_agree_with_the_fault(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    for v in _fault_visits(visits).values():
        if v.scenario is not None and v.scenario.fault != "no_fault":
            _check_fault(v.scenario.fault, v, profiles[v.machine])


def test_healthy_ls_margin_matches_the_setting(
    visits: dict[str, Visit], profiles: dict[str, MachineProfile]
) -> None:
    healthy = [
        v
        for v in _fault_visits(visits).values()
        if v.scenario
        and v.scenario.fault == "no_fault"
        and any(c.kind is CircuitKind.LOAD_SENSING for c in profiles[v.machine].circuits)
    ]
    assert healthy
    for v in healthy:
        p = profiles[v.machine]
        assert abs(_margin(v, p) - _param(p, "ls_margin_setting")) <= 3.0


# --- malformed profiles -------------------------------------------------------------------

GOOD = """\
id = "bad-demo"
name = "Broken demo"
rated_speed = "2200 rpm"
rated_max_pressure = "400 bar"

[[circuits]]
id = "travel"
name = "Travel"
kind = "closed_loop_drive"

[circuits.parameters]
charge_relief_setting = "27 bar"

  [[circuits.test_points]]
  id = "charge"
  role = "charge_pressure"
  location = "pump end cover"
    [[circuits.test_points.expected]]
    low = "20 bar"
    high = "30 bar"
    source = "from memory"

  [[circuits.test_points]]
  id = "case"
  role = "case_pressure"
    [[circuits.test_points.expected]]
    high = "2 bar"
    source = "from memory"
"""


def _line_of(text: str, needle: str) -> int:
    hits = [n for n, line in enumerate(text.splitlines(), start=1) if needle in line]
    assert len(hits) == 1, f"'{needle}' appears {len(hits)} times"
    return hits[0]


def _load_broken(
    tmp_path: Path, text: str, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]
) -> DataFileError:
    path = tmp_path / "broken.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(DataFileError) as caught:
        load_profile(path, templates)
    err = caught.value
    assert err.path == str(path) and str(path) in str(err)
    return err


def test_the_unbroken_profile_loads(
    tmp_path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]
) -> None:
    path = tmp_path / "good.toml"
    path.write_text(GOOD, encoding="utf-8")
    assert [tp.id for tp in load_profile(path, templates).circuits[0].test_points] == [
        "travel.charge",
        "travel.case",
    ]


def test_misspelt_key_is_reported_at_its_line(
    tmp_path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]
) -> None:
    text = GOOD.replace('location = "pump end cover"', 'locaton = "pump end cover"')
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, "locaton")
    assert "locaton" in str(err) and "unknown key" in err.detail


def test_flow_in_a_pressure_range_is_reported_at_its_test_point(
    tmp_path: Path,
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    text = GOOD.replace('high = "2 bar"', 'high = "2 L/min"')
    err = _load_broken(tmp_path, text, templates)
    # Bounds are read as expressions of the point's kind, so the error points at the bound itself.
    assert err.line == _line_of(text, 'high = "2 L/min"')
    assert "case_pressure needs a pressure" in err.detail and "flow" in err.detail


def test_flow_for_a_rated_pressure_is_reported_at_its_line(
    tmp_path: Path,
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    text = GOOD.replace('rated_max_pressure = "400 bar"', 'rated_max_pressure = "400 L/min"')
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, "rated_max_pressure")
    assert "pressure" in err.detail


def test_toml_syntax_error_is_reported_at_its_line(
    tmp_path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]
) -> None:
    text = GOOD.replace('low = "20 bar"', 'low = "20 bar')
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, 'low = "20 bar')
    assert "TOML syntax" in err.detail


def test_unknown_template_is_reported_at_its_line(
    tmp_path: Path, templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]]
) -> None:
    text = GOOD.replace('kind = "closed_loop_drive"', 'template = "closed_loop_drvie"')
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, "closed_loop_drvie")
    assert "closed_loop_drvie" in err.detail and "closed_loop_drive" in err.detail  # lists the known ones


def test_omitting_a_point_the_template_lacks_is_reported_at_its_line(
    tmp_path: Path,
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    text = GOOD.replace(
        'kind = "closed_loop_drive"', 'template = "closed_loop_drive"\nomit_test_points = ["chrage"]'
    )
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, "omit_test_points")
    assert "chrage" in err.detail


def test_bad_range_in_a_point_added_to_a_template_is_reported_at_its_line(
    tmp_path: Path,
    templates: dict[str, tuple[CircuitTemplate, dict[str, Any]]],
) -> None:
    text = GOOD.replace('kind = "closed_loop_drive"', 'template = "closed_loop_drive"')
    text = text.replace('id = "case"', 'id = "case_extra"').replace('high = "2 bar"', 'high = "2 L/min"')
    err = _load_broken(tmp_path, text, templates)
    assert err.line == _line_of(text, 'high = "2 L/min"')
