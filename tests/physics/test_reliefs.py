"""Relief valves alone, in series and in parallel; expected gauge readings with the pump deadheaded."""

import pytest

from fieldkit.errors import DimensionError
from fieldkit.physics.common import OutOfRangeError
from fieldkit.physics.reliefs import Parallel, ReliefValve, Series, deadhead, opening_pressure
from fieldkit.units import Q_
from fieldkit.units import parse_quantity as q


def bar(x):
    return None if x is None else round(x.m_as("bar"), 9)


def test_series_reliefs_add_their_settings():
    # Field notes: in series, settings add [calc]
    chain = Series([ReliefValve("upper", q("100 bar")), ReliefValve("lower", q("50 bar"))])
    assert opening_pressure(chain).m_as("bar") == pytest.approx(150.0)


def test_lowest_parallel_relief_governs():
    # Field notes: in parallel, the lowest setting governs [calc]
    main, secondary, port = (
        ReliefValve("main", q("210 bar")),
        ReliefValve("secondary", q("180 bar")),
        ReliefValve("port", q("250 bar")),
    )
    group = Parallel([main, secondary, port])
    assert group.governing() is secondary
    result = deadhead(group)
    assert result.governing == (secondary,)
    assert result.upstream.m_as("bar") == pytest.approx(180.0)


def test_back_pressure_adds_to_internally_drained_relief():
    # Field notes (from memory / common practice): back pressure adds about one for one
    relief = ReliefValve("main", q("210 bar"), drain="internal")
    assert relief.cracking_pressure(q("5 bar")).m_as("bar") == pytest.approx(215.0)


def test_externally_drained_relief_ignores_back_pressure():
    # Field notes (from memory / common practice): an external drain removes it for the pilot stage
    relief = ReliefValve("main", q("210 bar"), drain="external")
    assert relief.cracking_pressure(q("5 bar")).m_as("bar") == pytest.approx(210.0)


def test_externally_drained_relief_inlet_is_never_below_its_outlet():
    # Oil does not flow uphill [calc]: 30 bar held downstream of a 20 bar valve keeps its inlet at 30 bar
    relief = ReliefValve("pilot", q("20 bar"), drain="external")
    assert relief.cracking_pressure(q("30 bar")).m_as("bar") == pytest.approx(30.0)


def test_override_lifts_full_flow_above_cracking():
    # Field notes: cracking pressure < full-flow pressure; the difference is override [2nd]
    relief = ReliefValve("main", q("200 bar"), override=q("15 bar"))
    assert relief.cracking_pressure().m_as("bar") == pytest.approx(200.0)
    assert relief.full_flow_pressure().m_as("bar") == pytest.approx(215.0)
    assert deadhead(relief).upstream.m_as("bar") == pytest.approx(215.0)
    assert deadhead(relief, at_full_flow=False).upstream.m_as("bar") == pytest.approx(200.0)


def test_gauge_points_along_a_series_chain_with_return_back_pressure():
    # Each valve's inlet = its setting + what is downstream of it [calc]: return 3 bar;
    # C 20 → 23 bar, B 50 → 73 bar, A 100 → 173 bar at the pump
    a, b, c = ReliefValve("A", q("100 bar")), ReliefValve("B", q("50 bar")), ReliefValve("C", q("20 bar"))
    result = deadhead(Series([a, b, c]), return_pressure=q("3 bar"))
    assert {n: bar(p) for n, p in result.points.items()} == {"A": 173.0, "B": 73.0, "C": 23.0}
    assert bar(result.upstream) == 173.0
    assert result.governing == (a, b, c)
    assert bar(result.return_pressure) == 3.0


def test_series_branch_in_parallel_with_the_main_relief():
    # Branch a+b opens at 100 + 50 + 3 = 153 bar, below the 210 bar main relief, so it takes the flow [calc]
    main, a, b = (
        ReliefValve("main", q("210 bar")),
        ReliefValve("a", q("100 bar")),
        ReliefValve("b", q("50 bar")),
    )
    result = deadhead(Parallel([main, Series([a, b])]), return_pressure=q("3 bar"))
    assert result.governing == (a, b)
    assert {n: bar(p) for n, p in result.points.items()} == {"main": 153.0, "a": 153.0, "b": 53.0}


def test_points_inside_a_branch_without_flow_are_not_guessed():
    # Main 150 bar governs; the x+y branch (180 bar) carries no flow: x sees the shared inlet,
    # the pressure between x and y depends on leakage, so it is left open.
    main, x, y = (
        ReliefValve("main", q("150 bar")),
        ReliefValve("x", q("100 bar")),
        ReliefValve("y", q("80 bar")),
    )
    result = deadhead(Parallel([main, Series([x, y])]))
    assert result.governing == (main,)
    assert result.points == {"main": result.upstream, "x": result.upstream, "y": None}


def test_external_drains_in_series_do_not_add():
    # Pilot stages vented to tank hold their own setting (from memory / common practice): the chain reads
    # the highest setting, not the sum [calc]
    chain = Series(
        [ReliefValve("A", q("100 bar"), drain="external"), ReliefValve("B", q("50 bar"), drain="external")]
    )
    assert opening_pressure(chain).m_as("bar") == pytest.approx(100.0)


def test_summary_names_the_flow_path():
    result = deadhead(Series([ReliefValve("A", q("100 bar")), ReliefValve("B", q("50 bar"))]))
    assert result.summary() == "pump side reads 150 bar; flow passes A then B"


def test_relief_names_must_be_unique_to_label_gauge_points():
    with pytest.raises(OutOfRangeError, match="repeated: main"):
        deadhead(Parallel([ReliefValve("main", q("200 bar")), ReliefValve("main", q("210 bar"))]))


def test_relief_setting_must_be_a_pressure():
    with pytest.raises(DimensionError, match="relief 'main' setting must be a pressure"):
        ReliefValve("main", q("60 L/min"))


def test_drain_must_be_internal_or_external():
    with pytest.raises(OutOfRangeError, match="drain must be 'internal' or 'external'"):
        ReliefValve("main", q("200 bar"), drain="pilot")


def test_empty_group_is_refused():
    with pytest.raises(OutOfRangeError, match="at least one relief"):
        Series([])


def test_parallel_override_caps_the_inlet_at_the_lowest_full_flow_pressure() -> None:
    # Hand calculation (issue 13, item 5). Branch A cracks at 200 bar with a 30 bar override, so
    # it would need 230 bar to pass the whole flow; branch B cracks later, at 210 bar, but is fully
    # open at 210 + 5 = 215 bar. Before the inlet reaches 230 bar, B is wide open and passes the
    # rest: the inlet cannot rise past 215 bar. Cracking still starts at A's 200 bar.
    soft = ReliefValve("soft", Q_(200, "bar"), Q_(30, "bar"))
    stiff = ReliefValve("stiff", Q_(210, "bar"), Q_(5, "bar"))
    group = Parallel([soft, stiff])
    assert deadhead(group).upstream.m_as("bar") == pytest.approx(215.0)
    assert deadhead(group, at_full_flow=False).upstream.m_as("bar") == pytest.approx(200.0)


def test_one_relief_builder_serves_the_engine_and_the_simulator() -> None:
    # A layout of main and port relief in parallel, then a 4 bar check in series (hand sum:
    # 180 + 4 = 184 bar); an aux relief of 110 bar wrongly joined to the main governs: 110 + 4.
    from fieldkit.model.profile import Relief, ReliefLayout
    from fieldkit.physics.reliefs import arrangement_for

    reliefs = [
        Relief(id="main", setting="180 bar"),
        Relief(id="port", setting="210 bar"),
        Relief(id="aux", setting="110 bar"),
        Relief(id="check", setting="4 bar"),
    ]
    layout = ReliefLayout(series=[ReliefLayout(parallel=["main", "port"]), "check"])
    assert deadhead(arrangement_for(reliefs, layout)).upstream.m_as("bar") == pytest.approx(184.0)
    aux = ReliefValve("aux", Q_(110, "bar"))
    joined = arrangement_for(reliefs, layout, joined=[aux], joined_to="main")
    assert deadhead(joined).upstream.m_as("bar") == pytest.approx(114.0)
    # No layout: one relief stands alone, several share the inlet (lowest governs: 4 bar).
    assert deadhead(arrangement_for(reliefs[:1], None)).upstream.m_as("bar") == pytest.approx(180.0)
    assert deadhead(arrangement_for(reliefs, None)).upstream.m_as("bar") == pytest.approx(4.0)
