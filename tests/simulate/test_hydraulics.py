"""The simulator's own physics (fieldkit.simulate.hydraulics) against hand calculations and
independent libraries: the laminar gap law, the Vogel oil model, relief override and networks."""

import math

import pytest
from chemicals.viscosity import viscosity_index
from scipy.integrate import quad

from fieldkit.simulate.hydraulics import (
    GRADES,
    Valve,
    density,
    gap_growth_for,
    network_inlet,
    oil_of_grade,
    slot_flow,
    slot_for,
    vogel_oil,
)

# --- laminar gap law -------------------------------------------------------------------------------


def test_gap_leakage_grows_eightfold_when_the_clearance_doubles():
    # [calc] Q ∝ h³ (plane Poiseuille flow): (2h)³ / h³ = 8
    narrow = slot_flow(2.0, 10.0, 200.0, 0.02)
    wide = slot_flow(2.0, 20.0, 200.0, 0.02)
    assert wide / narrow == pytest.approx(8.0)


def test_gap_leakage_worked_by_hand():
    # [calc] w/L = 2, h = 10 µm = 1e-5 m, Δp = 200 bar = 2e7 Pa, μ = 0.02 Pa·s:
    # h³ = 1e-15 m³; Q = 2 · 1e-15 · 2e7 / (12 · 0.02) = 4e-8 / 0.24 = 1.6667e-7 m³/s
    # = 1.6667e-7 · 60 000 = 0.010 L/min
    assert slot_flow(2.0, 10.0, 200.0, 0.02) == pytest.approx(0.010, rel=1e-4)


def test_gap_law_matches_the_parabolic_velocity_profile_integrated_across_the_gap():
    # Independent route (scipy.integrate.quad): the laminar velocity profile between two plates,
    # u(y) = Δp / (2·μ·L) · y · (h − y) (White, Fluid Mechanics, plane Poiseuille flow, from memory),
    # integrated across the gap and times the width. w = 30 mm, L = 6 mm, h = 15 µm, 250 bar, 0.03 Pa·s.
    w, length, h, dp, mu = 0.030, 0.006, 15e-6, 250e5, 0.03
    per_width, _err = quad(lambda y: dp / (2 * mu * length) * y * (h - y), 0.0, h)
    expected_lpm = w * per_width * 60_000
    assert slot_flow(w / length, 15.0, 250.0, 0.03) == pytest.approx(expected_lpm, rel=1e-9)


def test_a_gap_sized_from_a_leakage_figure_leaks_that_figure():
    slot = slot_for(3.0, 380.0, 0.025)
    assert slot_flow(slot, 10.0, 380.0, 0.025) == pytest.approx(3.0)


def test_a_clearance_opening_by_a_quarter_nearly_doubles_the_leakage():
    # [calc] 1.25³ = 1.953; and the inverse: doubling the leak needs 2^(1/3) = 1.26 × the clearance
    assert slot_flow(1.0, 12.5, 100.0, 0.02) / slot_flow(1.0, 10.0, 100.0, 0.02) == pytest.approx(1.953125)
    assert gap_growth_for(2.0) == pytest.approx(1.2599, abs=1e-4)


def test_no_pressure_difference_no_leakage():
    assert slot_flow(2.0, 10.0, 0.0, 0.02) == 0.0
    assert slot_flow(2.0, 10.0, -5.0, 0.02) == 0.0


# --- oil --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", list(GRADES))
def test_grade_figures_give_a_viscosity_index_near_100(name):
    # ASTM D2270 through the chemicals library (ChEDL, PyPI), an implementation independent of fieldkit
    nu40, nu100 = GRADES[name]
    assert viscosity_index(nu40 * 1e-6, nu100 * 1e-6) == pytest.approx(100, abs=1.0)


def test_oil_density_falls_as_it_warms():
    # [calc] ρ = 875 / (1 + 0.0007 · (55 − 15)) = 875 / 1.028 = 851.17 kg/m³ (figures from memory)
    assert density(15.0) == pytest.approx(875.0)
    assert density(55.0) == pytest.approx(851.17, abs=0.01)


def test_vogel_curve_passes_through_its_two_grade_points():
    oil = oil_of_grade("ISO VG 46")
    assert oil.kinematic_cst(40.0) == pytest.approx(46.0)
    assert oil.kinematic_cst(100.0) == pytest.approx(6.76)


def test_vogel_vg46_at_70_c_worked_by_hand():
    # [calc] Vogel–Cameron μ = A·exp(B/(θ + 95)):
    # ρ40 = 875/1.0175 = 859.95, ρ100 = 875/1.0595 = 825.86 kg/m³;
    # μ40 = 46e-6 · 859.95 = 0.039558, μ100 = 6.76e-6 · 825.86 = 0.0055828 Pa·s;
    # B = ln(0.039558/0.0055828) / (1/135 − 1/195) = 1.95807 / 0.0022792 = 859.10;
    # A = 0.039558 / e^(859.10/135) = 0.039558 / 580.40 = 6.8156e-5 Pa·s;
    # 70 °C: μ = 6.8156e-5 · e^(859.10/165) = 6.8156e-5 · 182.49 = 0.012438 Pa·s;
    # ρ70 = 875/1.0385 = 842.56 kg/m³; ν = 0.012438 / 842.56 = 14.76 cSt
    oil = vogel_oil(46.0, 6.76)
    assert oil.b == pytest.approx(859.10, abs=0.01)
    assert oil.dynamic(70.0) == pytest.approx(0.012438, abs=2e-6)
    assert oil.kinematic_cst(70.0) == pytest.approx(14.76, abs=0.01)


def test_warm_oil_leaks_more_by_the_dynamic_not_the_kinematic_viscosity():
    # μ = ν · ρ: between 45 and 65 °C the dynamic ratio is the kinematic one times the density ratio,
    # ρ45/ρ65 = (1 + 0.0007·50) / (1 + 0.0007·30) = 1.035 / 1.021 = 1.01371 [calc]
    oil = oil_of_grade("VG46")
    slot = slot_for(2.0, 300.0, oil.dynamic(50.0))
    ratio = slot_flow(slot, 10.0, 300.0, oil.dynamic(65.0)) / slot_flow(slot, 10.0, 300.0, oil.dynamic(45.0))
    kinematic = oil.kinematic_cst(45.0) / oil.kinematic_cst(65.0)
    assert ratio / kinematic == pytest.approx(1.01371, abs=1e-5)


def test_an_oil_that_thickens_when_warmed_is_refused():
    with pytest.raises(ValueError, match="thins as it warms"):
        vogel_oil(5.0, 32.0)


def test_an_unknown_grade_says_which_ones_the_simulator_knows():
    with pytest.raises(ValueError, match="VG46"):
        oil_of_grade("VG47")


# --- reliefs ------------------------------------------------------------------------------------------


def test_relief_reads_higher_as_more_flow_passes():
    # [calc] cracks at 180 bar, 0.05 bar per L/min, internally drained, 2 bar behind it:
    # 10 L/min → 180 + 0.5 + 2 = 182.5 bar; 80 L/min → 180 + 4 + 2 = 186 bar
    v = Valve(180.0, 0.05)
    assert v.inlet(10.0, 2.0) == pytest.approx(182.5)
    assert v.inlet(80.0, 2.0) == pytest.approx(186.0)


def test_externally_drained_relief_ignores_back_pressure():
    # Field notes / common practice: an external drain vents the spring chamber, so 5 bar behind the
    # valve does not add; 180 + 0.05 · 80 = 184 bar [calc]
    assert Valve(180.0, 0.05, external_drain=True).inlet(80.0, 5.0) == pytest.approx(184.0)


def test_series_reliefs_add_their_settings():
    # [calc] main 180 bar (0.05 bar per L/min) then a 4 bar return check (flat), 80 L/min, 1 bar return:
    # check inlet 1 + 4 = 5 bar; main inlet 5 + 180 + 4 = 189 bar
    valves = {"main": Valve(180.0, 0.05), "check": Valve(4.0, 0.0)}
    assert network_inlet(("series", ["main", "check"]), valves, 80.0, 1.0) == pytest.approx(189.0)


def test_parallel_reliefs_share_the_flow_at_one_inlet_pressure():
    # [calc] A cracks at 100 bar, B at 110 bar, both 1 bar per L/min, 30 L/min, no back pressure:
    # (p − 100) + (p − 110) = 30 → p = 120 bar (A passes 20, B 10 L/min)
    valves = {"a": Valve(100.0, 1.0), "b": Valve(110.0, 1.0)}
    assert network_inlet(("parallel", ["a", "b"]), valves, 30.0, 0.0) == pytest.approx(120.0, abs=1e-6)


def test_the_lower_parallel_relief_takes_a_small_flow_alone():
    # [calc] 5 L/min: A alone would read 105 bar, below B's 110 bar cracking, so B stays shut: 105 bar
    valves = {"a": Valve(100.0, 1.0), "b": Valve(110.0, 1.0)}
    assert network_inlet(("parallel", ["a", "b"]), valves, 5.0, 0.0) == pytest.approx(105.0, abs=1e-6)


def test_a_flat_parallel_relief_caps_the_inlet_at_its_setting():
    # A relief with no override holds its setting whatever the flow: 150 bar beside a steep 140 bar one
    valves = {"steep": Valve(140.0, 2.0), "flat": Valve(150.0, 0.0)}
    assert network_inlet(("parallel", ["steep", "flat"]), valves, 60.0, 0.0) == pytest.approx(150.0, abs=1e-6)


def test_series_branch_in_parallel_is_solved_for_its_share():
    # [calc] branch 1: valve 100 bar + 1 bar/(L/min); branch 2: two valves in series, 50 + 55 bar, each
    # 0.5 bar/(L/min) so 105 bar + 1 bar/(L/min). 21 L/min: (p − 100) + (p − 105) = 21 → p = 113 bar
    valves = {"a": Valve(100.0, 1.0), "b1": Valve(50.0, 0.5), "b2": Valve(55.0, 0.5)}
    net = ("parallel", ["a", ("series", ["b1", "b2"])])
    assert network_inlet(net, valves, 21.0, 0.0) == pytest.approx(113.0, abs=1e-6)
    assert math.isfinite(network_inlet(net, valves, 0.0, 0.0))
