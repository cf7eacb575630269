"""Numbers to the resolution the gauge allows: the first significant figure of its limit of error
(common practice), and that limit as EN 837-1 defines it (class % × span)."""

from __future__ import annotations

import pytest
from diagnosis_helpers import diagnose_sample, sample_visit_paths

from fieldkit.diagnosis.resolution import at_resolution, limit_text
from fieldkit.units import METRIC, Kind, format_si_to_resolution


@pytest.mark.parametrize(
    ("value", "limit", "shown"),
    [
        (22.06, 0.6, "22.1"),  # class 1 on 0–60 bar: ±0.6 bar → tenths
        (397.4, 6.0, "397"),  # class 1 on 0–600 bar: ±6 bar → whole bar
        (0.734, 0.16, "0.7"),  # class 1.6 on 0–10 bar: ±0.16 bar → tenths
        (0.4, 0.064, "0.40"),  # class 1.6 on 0–4 bar: ±0.064 bar → hundredths
    ],
)
def test_a_value_is_shown_to_the_first_figure_of_its_gauges_limit(
    value: float, limit: float, shown: str
) -> None:
    assert at_resolution(value, limit) == shown


@pytest.mark.parametrize(
    ("limit", "shown"),
    [(0.6, "±0.6"), (6.0, "±6"), (0.16, "±0.16"), (1.7, "±1.7"), (0.064, "±0.064")],
)
def test_a_class_limit_prints_with_two_figures_at_most(limit: float, shown: str) -> None:
    # EN 837-1 limits: 1 % × 60 bar, 1 % × 600 bar, 1.6 % × 10 bar, 1 % × 170 °C, 1.6 % × 4 bar
    assert limit_text(limit) == shown


def test_a_ratio_from_class_one_gauges_reads_in_whole_per_cent() -> None:
    # 0.0483 (4.8 %) limit in SI (a fraction): one figure → whole per cent.
    assert format_si_to_resolution(0.92222, 0.0483, Kind.RATIO, METRIC) == "92%"


def test_pump_efficiency_finding_reads_92_not_92_22_per_cent() -> None:
    """ISO 4391: volumetric efficiency = delivered / (displacement × speed). Pebblerun demo (invented
    figures): 83 L/min / (50 cc/rev × 1800 rpm = 90 L/min) = 0.9222, read on a class 1 flow meter
    of 150 L/min (±1.5 L/min) at an assumed speed (±5 %): a few per cent either way, so 92 %."""
    path = next(p for p in sample_visit_paths() if p.stem == "pebblerun-no-fault")
    _visit, _profile, d = diagnose_sample(path)
    f = next(f for f in d.findings if f.rule_id == "pump-volumetric-efficiency")
    assert "delivers 92% of its displacement" in f.message
    assert "92.2" not in f.message
