"""Gauge accuracy (EN 837-1), uncertainty (GUM), suitability for a test point, verdict probabilities."""

import pytest
from scipy import stats

from fieldkit.physics.common import Level, OutOfRangeError
from fieldkit.physics.gauges import (
    combined_uncertainty,
    gauge_suitability,
    limit_of_error,
    probability_beyond,
    smallest_gauge,
    standard_uncertainty,
)
from fieldkit.units import parse_quantity as q


def test_class_1_6_on_0_to_10_bar_is_within_0_16_bar():
    # EN 837-1 (field notes, 2nd-hand): limit of error = class % of span; 1.6 % of 10 bar = ±0.16 bar
    assert limit_of_error(1.6, q("10 bar")).m_as("bar") == pytest.approx(0.16)


def test_compound_gauge_error_uses_the_whole_span():
    # EN 837-1: span = full scale − scale start; −1 to +9 bar is a 10 bar span, class 1 → ±0.1 bar
    assert limit_of_error(1, q("9 bar"), scale_start=q("-1 bar")).m_as("bar") == pytest.approx(0.1)


def test_class_outside_en_837_1_is_refused():
    with pytest.raises(OutOfRangeError, match="not an EN 837-1 class"):
        limit_of_error(2.0, q("10 bar"))


def test_standard_uncertainty_of_a_class_limit_is_a_over_root_3():
    # GUM 4.3.7: rectangular distribution ±a → u = a / √3; scipy.stats.uniform as the oracle
    a = 0.16
    oracle = stats.uniform(loc=-a, scale=2 * a).std()
    assert standard_uncertainty(q(f"{a} bar")).m_as("bar") == pytest.approx(oracle)


def test_uncertainties_of_a_difference_add_root_sum_square():
    # GUM 5.1.2 with sensitivity coefficients ±1, uncorrelated [calc]: √(0.3² + 0.4²) = 0.5
    assert combined_uncertainty(q("0.3 bar"), q("0.4 bar")).m_as("bar") == pytest.approx(0.5)


@pytest.mark.parametrize(
    ("reading", "limit", "u"), [(205, 210, 2.0), (212, 210, 1.5), (210, 210, 0.5), (180, 210, 10.0)]
)
def test_probability_beyond_a_limit_follows_the_normal_model(reading, limit, u):
    # scipy.stats.norm as oracle: P(true > limit) = sf(limit; reading, u); below: cdf
    above = probability_beyond(q(f"{reading} bar"), q(f"{limit} bar"), q(f"{u} bar"))
    below = probability_beyond(q(f"{reading} bar"), q(f"{limit} bar"), q(f"{u} bar"), above=False)
    assert above == pytest.approx(stats.norm.sf(limit, loc=reading, scale=u), abs=1e-12)
    assert below == pytest.approx(stats.norm.cdf(limit, loc=reading, scale=u), abs=1e-12)


def test_probability_with_no_uncertainty_is_certain():
    assert probability_beyond(q("211 bar"), q("210 bar"), q("0 bar")) == 1.0
    assert probability_beyond(q("209 bar"), q("210 bar"), q("0 bar")) == 0.0


def test_gauge_that_the_point_can_overrange_is_an_error():
    # Full scale must exceed the highest pressure the point can see
    check = gauge_suitability(q("250 bar"), q("180 bar"), highest_pressure=q("280 bar"))
    assert check.level is Level.ERROR
    assert "overranged" in check.message and "0–400 bar" in check.message


def test_steady_pressure_above_three_quarters_of_scale_is_a_warning():
    # EN 837-2 (from memory): steady working pressure ≤ 3/4 of full scale
    check = gauge_suitability(q("250 bar"), q("200 bar"))
    assert check.level is Level.WARNING and "3/4" in check.message


def test_fluctuating_pressure_above_two_thirds_of_scale_is_a_warning():
    # EN 837-2 (from memory): fluctuating pressure ≤ 2/3 of full scale
    assert gauge_suitability(q("250 bar"), q("175 bar")).ok
    assert gauge_suitability(q("250 bar"), q("175 bar"), fluctuating=True).level is Level.WARNING


def test_low_reading_on_a_big_gauge_warns_of_large_relative_error():
    # Below 1/4 of the span (common practice); class 1.6 on 0–250 bar = ±4 bar, 20 % of a 20 bar reading
    # [calc]
    check = gauge_suitability(q("250 bar"), q("20 bar"), accuracy_class=1.6)
    assert check.level is Level.WARNING
    assert "±4 bar, 20 % of the reading" in check.message


def test_well_chosen_gauge_is_ok():
    assert gauge_suitability(q("40 bar"), q("22 bar")).level is Level.OK


def test_smallest_gauge_reads_working_pressure_within_three_quarters():
    # Standard ranges (from memory) with the 3/4 rule [calc]: 22 bar > 0.75 · 25, ≤ 0.75 · 40 → 0–40 bar
    assert smallest_gauge(q("22 bar")).m_as("bar") == 40
    assert smallest_gauge(q("18 bar")).m_as("bar") == 25
    assert smallest_gauge(q("180 bar"), highest_pressure=q("260 bar")).m_as("bar") == 400
    assert smallest_gauge(q("3000 psi")).m_as("bar") == 400  # 206.8 bar > 187.5 bar


def test_no_standard_gauge_for_an_impossible_pressure():
    with pytest.raises(OutOfRangeError, match="no standard gauge"):
        smallest_gauge(q("1000 bar"))


def test_vacuum_gauge_reads_vacuum_without_being_called_overranged():
    # −1 to 0 bar vacuum gauge; 0.6 bar vacuum is within 3/4 of its 1 bar vacuum side [calc]
    assert gauge_suitability(q("0 bar"), q("-0.6 bar"), scale_start=q("-1 bar")).ok
    # Pressure above zero would push the needle past its full scale
    check = gauge_suitability(q("0 bar"), q("-0.6 bar"), highest_pressure=q("2 bar"), scale_start=q("-1 bar"))
    assert check.level is Level.ERROR


def test_suitability_takes_an_accuracy_figure_from_another_standard():
    # A 2 %-of-span gauge (not an EN 837-1 class) on 0–100 bar read at 10 bar: ±2 bar, 20 % [calc]
    check = gauge_suitability(q("100 bar"), q("10 bar"), accuracy_class=2)
    assert "±2 bar, 20 % of the reading" in check.message
    with pytest.raises(OutOfRangeError, match="percentage of span"):
        gauge_suitability(q("40 bar"), q("22 bar"), accuracy_class=-1)


def test_vacuum_needs_a_vacuum_gauge_not_a_standard_range():
    with pytest.raises(OutOfRangeError, match="vacuum or compound gauge"):
        smallest_gauge(q("-0.3 bar"))
