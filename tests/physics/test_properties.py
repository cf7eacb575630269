"""Properties every physics function must keep, checked with hypothesis on generated inputs.

* The answer does not depend on the units the inputs came in (conversion factors from
  scipy.constants, a reference library).
* Results move the way the physics says they move.
* A quantity of the wrong kind raises DimensionError naming the input, never a wrong number.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import pint
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldkit.errors import DimensionError
from fieldkit.physics import (
    accumulators,
    closed_loop,
    cylinders,
    fluid,
    gauges,
    orifices,
    power,
    pumps_motors,
)
from fieldkit.physics.reliefs import Arrangement, Parallel, ReliefValve, Series, deadhead, opening_pressure
from fieldkit.units import Q_

FAST = settings(max_examples=60, deadline=None)
TOL = 1e-9

PSI_PER_BAR = 1e5 / sc.psi
GPM_PER_LPM = 1e-3 / sc.gallon
INCH_PER_MM = 1e-3 / sc.inch

pressures = st.floats(min_value=0.5, max_value=600.0)
flows = st.floats(min_value=0.1, max_value=600.0)
diameters = st.floats(min_value=10.0, max_value=300.0)
temperatures = st.floats(min_value=-20.0, max_value=110.0)


def bar(x: float) -> pint.Quantity:
    return Q_(x, "bar")


def lpm(x: float) -> pint.Quantity:
    return Q_(x, "liter / minute")


def pressure_in_every_unit(p_bar: float) -> list[pint.Quantity]:
    return [
        bar(p_bar),
        Q_(p_bar * PSI_PER_BAR, "psi"),
        Q_(p_bar / 10.0, "megapascal"),
        Q_(p_bar * 100.0, "kilopascal"),
    ]


def flow_in_every_unit(q_lpm: float) -> list[pint.Quantity]:
    return [lpm(q_lpm), Q_(q_lpm * GPM_PER_LPM, "gallon / minute"), Q_(q_lpm / 60.0, "liter / second")]


# --- the answer does not depend on the units -------------------------------------------------


@FAST
@given(pressures, flows)
def test_power_is_the_same_in_bar_psi_or_mpa_and_lpm_or_gpm(p_bar: float, q_lpm: float) -> None:
    reference = power.hydraulic_power(bar(p_bar), lpm(q_lpm)).m_as("kW")
    for p in pressure_in_every_unit(p_bar):
        for q in flow_in_every_unit(q_lpm):
            assert power.hydraulic_power(p, q).m_as("kW") == pytest.approx(reference, rel=TOL)


@FAST
@given(pressures, diameters, st.floats(min_value=0.1, max_value=0.9))
def test_cylinder_force_is_the_same_in_metric_or_inch_sizes(
    p_bar: float, bore_mm: float, rod_share: float
) -> None:
    rod_mm = bore_mm * rod_share
    reference = cylinders.cylinder_force(bar(p_bar), Q_(bore_mm, "mm"), Q_(rod_mm, "mm"), "retract").m_as(
        "kN"
    )
    in_us = cylinders.cylinder_force(
        Q_(p_bar * PSI_PER_BAR, "psi"),
        Q_(bore_mm * INCH_PER_MM, "inch"),
        Q_(rod_mm * INCH_PER_MM, "inch"),
        "retract",
    )
    assert in_us.m_as("kN") == pytest.approx(reference, rel=TOL)


@FAST
@given(temperatures)
def test_viscosity_is_the_same_for_celsius_or_fahrenheit(t_c: float) -> None:
    curve = fluid.grade("VG46").curve
    celsius = curve.at(Q_(t_c, "degC")).m_as("cSt")
    assert curve.at(Q_(t_c * 9 / 5 + 32, "degF")).m_as("cSt") == pytest.approx(celsius, rel=TOL)
    assert curve.at(Q_(t_c + 273.15, "kelvin")).m_as("cSt") == pytest.approx(celsius, rel=TOL)


@FAST
@given(pressures, st.floats(min_value=0.3, max_value=5.0))
def test_orifice_flow_is_the_same_in_any_units(p_bar: float, d_mm: float) -> None:
    reference = orifices.orifice_flow(Q_(d_mm, "mm"), bar(p_bar)).m_as("L/min")
    for p in pressure_in_every_unit(p_bar):
        got = orifices.orifice_flow(Q_(d_mm * INCH_PER_MM, "inch"), p).m_as("gallon/minute")
        assert got == pytest.approx(reference * GPM_PER_LPM, rel=TOL)


@FAST
@given(pressures, st.floats(min_value=5.0, max_value=500.0))
def test_motor_torque_is_the_same_for_cc_or_cubic_inch_per_rev(p_bar: float, cc: float) -> None:
    reference = pumps_motors.motor_torque(bar(p_bar), Q_(cc, "cm**3/revolution")).m_as("N*m")
    cubic_inches = Q_(cc * 1e-6 / sc.inch**3, "inch**3/revolution")
    got = pumps_motors.motor_torque(Q_(p_bar * PSI_PER_BAR, "psi"), cubic_inches)
    assert got.m_as("N*m") == pytest.approx(reference, rel=TOL)


@FAST
@given(
    st.floats(min_value=10.0, max_value=100.0),
    st.floats(min_value=0.3, max_value=0.95),
    st.floats(min_value=1.05, max_value=3.0),
)
def test_accumulator_delivery_is_the_same_in_bar_or_psi(p_min: float, share: float, rise: float) -> None:
    args_bar = (bar(p_min * share), bar(p_min), bar(p_min * rise))
    reference = accumulators.delivered_volume(Q_(20, "liter"), *args_bar).m_as("L")
    args_psi = tuple(Q_(p.m_as("bar") * PSI_PER_BAR, "psi") for p in args_bar)
    got = accumulators.delivered_volume(Q_(20 / (sc.gallon * 1000), "gallon"), *args_psi)
    assert got.m_as("L") == pytest.approx(reference, rel=1e-8)


# --- monotonic where physics says so ------------------------------------------------------


@FAST
@given(pressures, flows, flows)
def test_more_flow_carries_more_power(p_bar: float, q1: float, q2: float) -> None:
    low, high = sorted((q1, q2))
    if low < high:
        assert power.hydraulic_power(bar(p_bar), lpm(low)) < power.hydraulic_power(bar(p_bar), lpm(high))


@FAST
@given(st.sampled_from(sorted(fluid.VG_GRADES)), temperatures, temperatures)
def test_oil_thins_as_it_warms(name: str, t1: float, t2: float) -> None:
    cold, hot = sorted((t1, t2))
    curve = fluid.VG_GRADES[name].curve
    if hot - cold > 1e-6:
        assert curve.at(Q_(hot, "degC")) < curve.at(Q_(cold, "degC"))


@FAST
@given(flows, st.floats(min_value=20.0, max_value=100.0), st.floats(min_value=20.0, max_value=100.0))
def test_same_leakage_read_on_hotter_oil_normalises_lower(q_lpm: float, t1: float, t2: float) -> None:
    # Hotter oil is thinner and leaks more at the same clearances, so the same reading means tighter
    # clearances.
    cold, hot = sorted((t1, t2))
    curve, ref = fluid.grade("VG46").curve, Q_(50.0, "degC")
    if hot - cold > 1e-6:
        on_hot = fluid.normalised_leakage(lpm(q_lpm), Q_(hot, "degC"), ref, curve)
        on_cold = fluid.normalised_leakage(lpm(q_lpm), Q_(cold, "degC"), ref, curve)
        assert on_hot < on_cold


valves = st.builds(
    lambda setting, override, drain: ReliefValve("v", bar(setting), bar(override), drain),
    st.floats(min_value=5.0, max_value=400.0),
    st.floats(min_value=0.0, max_value=20.0),
    st.sampled_from(["internal", "external"]),
)
arrangements: st.SearchStrategy[Arrangement] = st.recursive(
    valves,
    lambda children: st.one_of(
        st.lists(children, min_size=1, max_size=3).map(Series),
        st.lists(children, min_size=1, max_size=3).map(Parallel),
    ),
    max_leaves=6,
)


@FAST
@given(arrangements, st.floats(min_value=0.0, max_value=30.0), st.floats(min_value=0.0, max_value=30.0))
def test_more_back_pressure_never_lowers_relief_opening(
    arrangement: Arrangement, b1: float, b2: float
) -> None:
    low, high = sorted((b1, b2))
    assert opening_pressure(arrangement, bar(low)) <= opening_pressure(arrangement, bar(high))
    assert opening_pressure(arrangement, bar(low), True) <= opening_pressure(arrangement, bar(high), True)


@FAST
@given(
    st.floats(min_value=5.0, max_value=400.0),
    st.floats(min_value=0.0, max_value=30.0),
    st.floats(min_value=0.1, max_value=30.0),
)
def test_back_pressure_raises_an_internally_drained_relief_one_for_one(
    setting: float, b: float, extra: float
) -> None:
    relief = ReliefValve("main", bar(setting))
    rise = relief.cracking_pressure(bar(b + extra)).m_as("bar") - relief.cracking_pressure(bar(b)).m_as("bar")
    assert rise == pytest.approx(extra, abs=1e-9)


def _renamed(node: Arrangement, counter: list[int]) -> Arrangement:
    """The same tree with unique valve names (deadhead labels gauge points by name)."""
    if isinstance(node, ReliefValve):
        counter[0] += 1
        return ReliefValve(f"v{counter[0]}", node.setting, node.override, node.drain)
    if isinstance(node, Series):
        return Series([_renamed(child, counter) for child in node.items])
    return Parallel([_renamed(child, counter) for child in node.branches])


@FAST
@given(arrangements, st.floats(min_value=0.0, max_value=30.0))
def test_deadhead_upstream_is_the_full_flow_opening_pressure(generated: Arrangement, b: float) -> None:
    arrangement = _renamed(generated, [0])
    result = deadhead(arrangement, bar(b))
    assert result.upstream.m_as("bar") == pytest.approx(
        opening_pressure(arrangement, bar(b), True).m_as("bar")
    )
    assert result.governing, "some valve must carry the deadheaded pump's flow"
    first = result.points[result.governing[0].name]
    assert first is not None and first.m_as("bar") == pytest.approx(result.upstream.m_as("bar"))


@FAST
@given(
    st.floats(min_value=100.0, max_value=300.0),
    st.floats(min_value=100.0, max_value=300.0),
    st.floats(min_value=0.1, max_value=10.0),
)
def test_higher_reading_makes_exceeding_a_limit_more_likely(r1: float, r2: float, u: float) -> None:
    low, high = sorted((r1, r2))
    p_low = gauges.probability_beyond(bar(low), bar(210.0), bar(u))
    p_high = gauges.probability_beyond(bar(high), bar(210.0), bar(u))
    assert 0.0 <= p_low <= p_high <= 1.0


@FAST
@given(st.floats(min_value=0.3, max_value=5.0), pressures, pressures)
def test_orifice_passes_more_at_a_higher_pressure_drop(d_mm: float, dp1: float, dp2: float) -> None:
    low, high = sorted((dp1, dp2))
    if low < high:
        assert orifices.orifice_flow(Q_(d_mm, "mm"), bar(low)) < orifices.orifice_flow(
            Q_(d_mm, "mm"), bar(high)
        )


# --- round trips --------------------------------------------------------------------------


@FAST
@given(st.floats(min_value=0.3, max_value=5.0), pressures)
def test_orifice_inverses_return_what_went_in(d_mm: float, p_bar: float) -> None:
    q = orifices.orifice_flow(Q_(d_mm, "mm"), bar(p_bar))
    assert orifices.orifice_pressure_drop(q, Q_(d_mm, "mm")).m_as("bar") == pytest.approx(p_bar, rel=TOL)
    assert orifices.orifice_diameter(q, bar(p_bar)).m_as("mm") == pytest.approx(d_mm, rel=TOL)


@FAST
@given(flows, diameters, st.floats(min_value=0.1, max_value=0.9), st.sampled_from(["extend", "retract"]))
def test_flow_for_speed_undoes_speed_for_flow(
    q_lpm: float, bore_mm: float, share: float, stroke: str
) -> None:
    bore, rod = Q_(bore_mm, "mm"), Q_(bore_mm * share, "mm")
    v = cylinders.cylinder_speed(lpm(q_lpm), bore, rod, stroke)
    assert cylinders.flow_for_speed(v, bore, rod, stroke).m_as("L/min") == pytest.approx(q_lpm, rel=TOL)


@FAST
@given(st.sampled_from(sorted(fluid.VG_GRADES)), temperatures)
def test_temperature_for_a_viscosity_undoes_viscosity_at_a_temperature(name: str, t_c: float) -> None:
    curve = fluid.VG_GRADES[name].curve
    assert curve.temperature_for(curve.at(Q_(t_c, "degC"))).m_as("degC") == pytest.approx(t_c, abs=1e-6)


# --- a wrong dimension is refused, never turned into a number --------------------------------


def _calls() -> list[tuple[str, Callable[..., Any], dict[str, Any]]]:
    p, q, cc, rpm = bar(200), lpm(60), Q_(100, "cm**3/revolution"), Q_(1500, "revolution/minute")
    bore, rod, t = Q_(100, "mm"), Q_(70, "mm"), Q_(50, "degC")
    curve = fluid.grade("VG46").curve
    return [
        ("hydraulic_power", power.hydraulic_power, {"pressure": p, "flow": q}),
        (
            "pump_input_power",
            power.pump_input_power,
            {"pressure": p, "flow": q, "overall_efficiency": Q_(85, "percent")},
        ),
        ("throttling_heat", power.throttling_heat, {"pressure_drop": p, "flow": q}),
        (
            "oil_heating_rate",
            power.oil_heating_rate,
            {
                "heat": Q_(10, "kW"),
                "oil_volume": Q_(100, "L"),
                "density": Q_(870, "kg/m**3"),
                "specific_heat": Q_(2000, "J/kg/K"),
            },
        ),
        ("throttling_temperature_rise", power.throttling_temperature_rise, {"pressure_drop": p}),
        ("theoretical_flow", pumps_motors.theoretical_flow, {"displacement": cc, "speed": rpm}),
        (
            "pump_overall_efficiency",
            pumps_motors.pump_overall_efficiency,
            {"pressure_difference": p, "actual_flow": q, "input_torque": Q_(300, "N*m"), "speed": rpm},
        ),
        (
            "motor_hydromechanical_efficiency",
            pumps_motors.motor_hydromechanical_efficiency,
            {"pressure_difference": p, "displacement": cc, "output_torque": Q_(300, "N*m")},
        ),
        (
            "volumetric_efficiency_from_flow_test",
            pumps_motors.volumetric_efficiency_from_flow_test,
            {"no_load_flow": q, "no_load_speed": rpm, "loaded_flow": q, "loaded_speed": rpm},
        ),
        (
            "case_drain_leakage",
            pumps_motors.case_drain_leakage,
            {"case_drain_flow": lpm(3), "displacement": cc, "speed": rpm, "other_case_flow": lpm(1)},
        ),
        (
            "two_speed_motor_output",
            pumps_motors.two_speed_motor_output,
            {
                "pressure_difference": p,
                "flow": q,
                "full_displacement": cc,
                "displacement_ratio": Q_(50, "percent"),
            },
        ),
        (
            "cylinder_force",
            cylinders.cylinder_force,
            {"pressure": p, "bore": bore, "rod": rod, "back_pressure": bar(5)},
        ),
        ("return_flow", cylinders.return_flow, {"flow": q, "bore": bore, "rod": rod}),
        ("regenerative_extension", cylinders.regenerative_extension, {"pressure": p, "flow": q, "rod": rod}),
        (
            "leakage_from_drift",
            cylinders.leakage_from_drift,
            {"drift_rate": Q_(12, "mm/minute"), "bore": bore, "rod": rod},
        ),
        (
            "intensified_rod_pressure",
            cylinders.intensified_rod_pressure,
            {"cap_pressure": p, "bore": bore, "rod": rod},
        ),
        ("ReliefValve", ReliefValve, {"name": "main", "setting": p, "override": bar(10)}),
        (
            "net_charge_pressure",
            closed_loop.net_charge_pressure,
            {"charge_pressure": bar(25), "case_pressure": bar(2)},
        ),
        (
            "expected_charge_pressure",
            closed_loop.expected_charge_pressure,
            {"charge_relief_setting": bar(25), "flushing_relief_setting": bar(18), "case_pressure": bar(1)},
        ),
        (
            "charge_flow_budget",
            closed_loop.charge_flow_budget,
            {
                "charge_displacement": Q_(14, "cm**3/revolution"),
                "speed": rpm,
                "charge_volumetric_efficiency": 0.9,
                "pump_case_drain": lpm(3),
                "motor_case_drain": lpm(2),
                "flushing_flow": lpm(10),
            },
        ),
        (
            "viscosity_curve",
            fluid.viscosity_curve,
            {
                "viscosity_1": Q_(46, "cSt"),
                "temperature_1": Q_(40, "degC"),
                "viscosity_2": Q_(6.8, "cSt"),
                "temperature_2": Q_(100, "degC"),
            },
        ),
        (
            "normalised_leakage",
            fluid.normalised_leakage,
            {
                "measured": lpm(3),
                "oil_temperature": t,
                "reference_temperature": Q_(40, "degC"),
                "curve": curve,
            },
        ),
        ("check_viscosity", fluid.check_viscosity, {"viscosity": Q_(30, "cSt")}),
        (
            "check_test_temperature",
            fluid.check_test_temperature,
            {"temperature": t, "minimum": Q_(38, "degC")},
        ),
        (
            "orifice_flow",
            orifices.orifice_flow,
            {"diameter": Q_(1, "mm"), "pressure_drop": p, "density": Q_(870, "kg/m**3")},
        ),
        ("orifice_diameter", orifices.orifice_diameter, {"flow": lpm(4), "pressure_drop": p}),
        (
            "restriction_pressure_drop",
            orifices.restriction_pressure_drop,
            {"flow": q, "known_flow": lpm(50), "known_pressure_drop": bar(2)},
        ),
        (
            "limit_of_error",
            gauges.limit_of_error,
            {"accuracy_class": 1.6, "full_scale": bar(10), "scale_start": bar(-1)},
        ),
        (
            "combined_uncertainty",
            lambda a, b: gauges.combined_uncertainty(a, b),
            {"a": bar(0.1), "b": bar(0.2)},
        ),
        (
            "probability_beyond",
            gauges.probability_beyond,
            {"reading": p, "limit": bar(210), "standard_uncertainty": bar(2)},
        ),
        (
            "gauge_suitability",
            gauges.gauge_suitability,
            {"full_scale": bar(250), "working_pressure": p, "highest_pressure": bar(220)},
        ),
        ("smallest_gauge", gauges.smallest_gauge, {"working_pressure": p, "highest_pressure": bar(220)}),
        ("expected_precharge", accumulators.expected_precharge, {"min_working_pressure": bar(100)}),
        (
            "delivered_volume",
            accumulators.delivered_volume,
            {
                "size": Q_(10, "L"),
                "precharge": bar(90),
                "min_pressure": bar(100),
                "max_pressure": p,
                "barometric": Q_(1, "bar"),
            },
        ),
    ]


CALLS = _calls()
WRONG_CASES = [
    pytest.param(fn, kwargs, name, id=f"{label}-{name}")
    for label, fn, kwargs in CALLS
    for name, value in kwargs.items()
    if isinstance(value, pint.Quantity)
]


@pytest.mark.parametrize(("label", "fn", "kwargs"), CALLS, ids=[c[0] for c in CALLS])
def test_every_call_in_the_table_works_with_the_right_kinds(
    label: str, fn: Callable[..., Any], kwargs: dict[str, Any]
) -> None:
    assert fn(**kwargs) is not None


@pytest.mark.parametrize(("fn", "kwargs", "name"), WRONG_CASES)
def test_a_wrong_kind_raises_dimension_error_naming_the_value(
    fn: Callable[..., Any], kwargs: dict[str, Any], name: str
) -> None:
    # Swap one input for a quantity of another kind: a flow where anything else was, else a pressure.
    good = kwargs[name]
    wrong = lpm(60) if good.dimensionality != lpm(60).dimensionality else bar(200)
    with pytest.raises(DimensionError) as raised:
        fn(**{**kwargs, name: wrong})
    message = str(raised.value)
    assert "must be" in message and ("l/min" in message or "bar" in message), message


# Ratios (efficiencies, displacement ratio) may be plain numbers, so they are left out here.
BARE_CASES = [case for case in WRONG_CASES if not case.values[1][case.values[2]].dimensionless]


@pytest.mark.parametrize(("fn", "kwargs", "name"), BARE_CASES)
def test_a_bare_number_raises_dimension_error(
    fn: Callable[..., Any], kwargs: dict[str, Any], name: str
) -> None:
    with pytest.raises(DimensionError, match="must be"):
        fn(**{**kwargs, name: 200.0})
