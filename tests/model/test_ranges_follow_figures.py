"""Template ranges follow the maker's figures; a figure left out falls back to a marked typical.

Every expected number here is worked by hand in the comment beside it ([calc]) from the
template's stated rule, and the rule's own source is named there.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest

from fieldkit.errors import DataFileError
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.loading import Templates, load_templates, profile_from_raw
from fieldkit.model.profile import ExpectedRange, MachineProfile
from fieldkit.model.ranges import COMMON_PRACTICE, FROM_MEMORY, Figure, resolve_bound
from fieldkit.resources import rules_dir
from fieldkit.units import Kind, parse_quantity


@pytest.fixture(scope="module")
def templates() -> Templates:
    return load_templates(rules_dir() / "templates")


def machine(templates: Templates, template: str, parameters: dict[str, str], **extra: Any) -> MachineProfile:
    circuit: dict[str, Any] = {"id": "c", "name": "circuit", "template": template, "parameters": parameters}
    circuit.update(extra)
    raw = {"id": "m", "name": "machine", "rated_speed": "2200 rpm", "rated_max_pressure": "400 bar"}
    return profile_from_raw({**raw, "circuits": [circuit]}, templates, "<test>")


def bar(rng: ExpectedRange | None) -> tuple[float | None, float | None]:
    assert rng is not None
    low = None if rng.low is None else round(float(rng.low.m_as("bar")), 3)
    high = None if rng.high is None else round(float(rng.high.m_as("bar")), 3)
    return low, high


def lpm(q: Any) -> float:
    return round(float(q.m_as("L/min")), 3)


def in_state(profile: MachineProfile, point: str, state: FunctionState) -> ExpectedRange | None:
    _c, tp = profile.test_point(f"c.{point}")
    return tp.expected_for(Condition(function=state))


def test_charge_in_neutral_follows_the_makers_charge_relief(templates: Templates) -> None:
    # closed_loop_drive template: charge in neutral = charge relief setting ± 2 bar (common practice).
    # Maker's figure 24 bar → 22 to 26 bar [calc].
    m = machine(templates, "closed_loop_drive", {"charge_relief_setting": "24 bar"})
    rng = in_state(m, "charge", FunctionState.NEUTRAL)
    assert bar(rng) == (22.0, 26.0)
    assert rng is not None and rng.source.startswith("from the maker's figure: charge relief setting 24 bar")
    assert rng.typical == ""


def test_entering_a_setting_moves_every_range_that_depends_on_it(templates: Templates) -> None:
    # Charge relief 30 bar: neutral 28 to 32 bar [calc]; the stall range uses it too:
    # cross-port relief 350 bar → low 350 − 10 = 340, high 350 + 30 + 15 = 395 bar [calc]
    # (a differential setting reads about setting + charge, field notes: closed loops; the
    # last 15 bar leave room for override and setting tolerance, from memory).
    m = machine(
        templates,
        "closed_loop_drive",
        {"charge_relief_setting": "30 bar", "high_pressure_relief_setting": "350 bar"},
    )
    assert bar(in_state(m, "charge", FunctionState.NEUTRAL)) == (28.0, 32.0)
    assert bar(in_state(m, "loop_a", FunctionState.STALLED)) == (340.0, 395.0)


def test_the_field_notes_differential_relief_example_sits_inside_the_stall_range(
    templates: Templates,
) -> None:
    # Field notes (closed loops, 2nd-hand): 400 bar differential + 22 bar charge → ≈ 422 bar on the gauge.
    # Range: 400 − 10 = 390 to 400 + 22 + 15 = 437 bar [calc]; 422 is inside, 400 (gauge convention) too.
    m = machine(
        templates,
        "closed_loop_drive",
        {"charge_relief_setting": "22 bar", "high_pressure_relief_setting": "400 bar"},
    )
    low, high = bar(in_state(m, "loop_b", FunctionState.STALLED))
    assert (low, high) == (390.0, 437.0)
    assert low is not None and high is not None and low <= 422 <= high and low <= 400 <= high


def test_a_figure_left_empty_falls_back_to_the_typical_value_marked_from_memory(templates: Templates) -> None:
    # No cross-port relief given: the template's typical 400 bar (from memory: 350-450 bar on mobile
    # closed loops) → stall low 400 − 10 = 390 bar; with no charge figure either the top allows the
    # highest usual charge: 400 + 30 + 15 = 445 bar [calc]; marked 'from memory'.
    m = machine(templates, "closed_loop_drive", {})
    rng = in_state(m, "loop_a", FunctionState.STALLED)
    assert bar(rng) == (390.0, 445.0)
    assert rng is not None and rng.typical == FROM_MEMORY
    assert rng.source.startswith("from memory: cross-port (high-pressure) relief setting 400 bar")
    assert m.circuits[0].typical_parameters["high_pressure_relief_setting"].startswith("from memory")


def test_with_no_charge_relief_figure_charge_in_neutral_spans_the_trades_spread(templates: Templates) -> None:
    # Field notes: charge relief "usually 200-300 psi" (Machinery Lubrication 2016) and 20-30 bar on many
    # modern pumps (from memory). 200 psi = 200 × 6894.757 Pa = 13.79 bar; less 2 bar → 11.8 bar;
    # 30 + 2 = 32 bar [calc]. No single typical setting is assumed, so the charge relief is not a
    # typical parameter and the range is marked common practice.
    m = machine(templates, "closed_loop_drive", {})
    rng = in_state(m, "charge", FunctionState.NEUTRAL)
    assert bar(rng) == (11.8, 32.0)
    assert rng is not None and rng.typical == COMMON_PRACTICE
    assert "charge_relief_setting" not in m.circuits[0].parameters


def test_pump_flow_range_is_displacement_times_speed_times_least_efficiency(templates: Templates) -> None:
    # Q = V · n · ηv (field notes; Hydraulics & Pneumatics 2023 example: 100 cm³/rev at 1000 rpm →
    # 100 L/min theoretical). Here 50 cm³/rev × 2200 rpm = 110 000 cm³/min = 110 L/min;
    # × 0.85 typical ηv = 93.5 L/min low; × 1.02 = 112.2 L/min high [calc].
    m = machine(templates, "open_fixed_pump", {"pump_displacement": "50 cc/rev"})
    _c, tp = m.test_point("c.pump_flow")
    rng = tp.expected_for(Condition(function=FunctionState.UNDER_LOAD))
    assert rng is not None and rng.low is not None and rng.high is not None
    assert (lpm(rng.low), lpm(rng.high)) == (93.5, 112.2)
    assert rng.typical == FROM_MEMORY  # the efficiency is the template's recalled figure
    assert "from the maker's figure: main pump maximum displacement 50 cc/rev" in rng.source


def test_the_handbook_efficiency_example_as_a_makers_figure(templates: Templates) -> None:
    # Hydraulics & Pneumatics (2023): 100 cm³/rev at 1000 rpm, ηv 90 % → 90 L/min measured.
    # With the maker's ηv 90 % and rated speed 1000 rpm the low bound is that 90 L/min [calc].
    circuit = {
        "id": "c",
        "name": "pump",
        "template": "open_fixed_pump",
        "parameters": {"pump_displacement": "100 cc/rev", "min_volumetric_efficiency": "90 %"},
    }
    raw = {
        "id": "m",
        "name": "m",
        "rated_speed": "1000 rpm",
        "rated_max_pressure": "250 bar",
        "circuits": [circuit],
    }
    m = profile_from_raw(raw, templates, "<test>")
    _c, tp = m.test_point("c.pump_flow")
    rng = tp.expected_for(Condition(function=FunctionState.UNDER_LOAD))
    assert rng is not None and rng.low is not None
    assert lpm(rng.low) == 90.0
    assert rng.typical == ""  # every figure it used is the maker's


def test_case_drain_limit_scales_with_the_test_pressure(templates: Templates) -> None:
    # Share of full flow, scaled with pressure (laminar leakage ∝ Δp): 5 % (from memory, field notes)
    # × 56 cm³/rev × 2200 rpm = 0.05 × 123.2 L/min = 6.16 L/min at 400 of 400 bar; at a 300 bar
    # cross-port relief × 300/400 = 4.62 L/min [calc].
    full = machine(
        templates,
        "closed_loop_drive",
        {"pump_displacement": "56 cc/rev", "high_pressure_relief_setting": "400 bar"},
    )
    part = machine(
        templates,
        "closed_loop_drive",
        {"pump_displacement": "56 cc/rev", "high_pressure_relief_setting": "300 bar"},
    )
    for m, want in ((full, 6.16), (part, 4.62)):
        rng = in_state(m, "pump_drain", FunctionState.STALLED)
        assert rng is not None and rng.high is not None
        assert lpm(rng.high) == want


def test_a_range_whose_figure_has_no_typical_value_gives_way_to_the_next(templates: Templates) -> None:
    # No pump displacement (there is no typical one): the share-of-flow range is left out and the
    # template's plain 6 L/min (from memory) applies.
    m = machine(templates, "closed_loop_drive", {})
    rng = in_state(m, "pump_drain", FunctionState.STALLED)
    assert rng is not None and rng.high is not None and lpm(rng.high) == 6.0
    assert rng.typical == FROM_MEMORY


def test_a_profile_overrides_one_range_and_keeps_the_others(templates: Templates) -> None:
    # The maker's own neutral charge window replaces only the neutral range; in stroke still
    # follows the flushing relief: 22 − 1.5 = 20.5 to 22 + 2.5 = 24.5 bar [calc].
    own = {
        "id": "charge",
        "expected": [
            {"when": {"function": ["neutral"]}, "low": "26 bar", "high": "28 bar", "source": "maker's sheet"}
        ],
    }
    m = machine(
        templates,
        "closed_loop_drive",
        {"charge_relief_setting": "27 bar", "flushing_relief_setting": "22 bar"},
        test_points=[own],
    )
    assert bar(in_state(m, "charge", FunctionState.NEUTRAL)) == (26.0, 28.0)
    assert bar(in_state(m, "charge", FunctionState.FULL_STROKE)) == (20.5, 24.5)
    _c, tp = m.test_point("c.charge")
    assert len(tp.expected) == 2  # shadowed template ranges are not carried along


def test_a_profile_range_may_itself_be_an_expression(templates: Templates) -> None:
    # Charge at least 18 bar above an assumed 1 bar case: 18 + 1 = 19 bar low [calc].
    own = {"id": "charge", "expected": [{"low": "min_net_charge + 1 bar", "source": "maker's sheet"}]}
    m = machine(templates, "closed_loop_drive", {"min_net_charge": "18 bar"}, test_points=[own])
    assert bar(in_state(m, "charge", FunctionState.UNDER_LOAD))[0] == 19.0


def test_a_typical_common_practice_figure_is_marked_so(templates: Templates) -> None:
    # Load sensing standby with no figure: typical 25 bar (common practice) → 22 to 28 bar [calc].
    m = machine(templates, "load_sensing", {})
    rng = in_state(m, "standby", FunctionState.NEUTRAL)
    assert bar(rng) == (22.0, 28.0)
    assert rng is not None and rng.typical == COMMON_PRACTICE


def test_a_range_naming_an_unknown_figure_is_reported_at_its_line(
    templates: Templates, tmp_path: Path
) -> None:
    text = """id = "m"
name = "m"
rated_speed = "2000 rpm"
rated_max_pressure = "250 bar"

[[circuits]]
id = "c"
name = "c"
template = "closed_loop_drive"
  [[circuits.test_points]]
  id = "charge"
    [[circuits.test_points.expected]]
    low = "charge_relif_setting - 2 bar"
    source = "maker"
"""
    path = tmp_path / "m.toml"
    path.write_text(text, encoding="utf-8")
    from fieldkit.model.loading import load_profile

    with pytest.raises(DataFileError) as caught:
        load_profile(path, templates)
    err = caught.value
    assert err.path == str(path) and err.line == 13
    assert err.key == "circuits.0.test_points.0.expected.0.low"
    assert "charge_relif_setting" in err.detail


def test_resolve_bound_keeps_a_plain_value_as_written() -> None:
    assert resolve_bound("24 bar", Kind.PRESSURE, {}).text == "24 bar"


def test_resolve_bound_names_what_it_used() -> None:
    # 3000 psi = 206.84 bar (1 psi = 0.0689476 bar, NIST SP 811) ; + 5 bar = 211.8 bar [calc].
    fig = Figure(parse_quantity("3000 psi"), Kind.PRESSURE, "main relief setting")
    res = resolve_bound("main_relief_setting + 5 bar", Kind.PRESSURE, {"main_relief_setting": fig})
    assert res.used == ("main_relief_setting",)
    assert res.text == "211.8 bar"
