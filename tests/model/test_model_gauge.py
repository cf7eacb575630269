"""Gauges as they are teed in: EN 837-1 classes for pressure gauges, a sane scale, and the span
that the limit of error is taken from."""

from __future__ import annotations

import pytest
from pydantic import ValidationError

from fieldkit.model.gauge import EN837_CLASSES, Gauge
from fieldkit.units import Kind

#: EN 837-1 accuracy classes for Bourdon-tube gauges (field notes: EN 837-1 table of classes, 2nd-hand).
EN837_1_CLASSES = (0.1, 0.25, 0.6, 1.0, 1.6, 2.5, 4.0)


def test_model_knows_exactly_the_en_837_1_classes() -> None:
    assert tuple(EN837_CLASSES) == EN837_1_CLASSES


@pytest.mark.parametrize("accuracy_class", EN837_1_CLASSES)
def test_pressure_gauge_accepts_every_en_837_1_class(accuracy_class: float) -> None:
    assert (
        Gauge(id="G60", full_scale="60 bar", accuracy_class=accuracy_class).accuracy_class == accuracy_class
    )


@pytest.mark.parametrize("accuracy_class", [0.5, 1.5, 2.0, 3.0])
def test_pressure_gauge_refuses_a_class_en_837_1_does_not_have(accuracy_class: float) -> None:
    with pytest.raises(ValidationError) as caught:
        Gauge(id="G60", full_scale="60 bar", accuracy_class=accuracy_class)
    message = str(caught.value)
    assert f"accuracy class {accuracy_class} is not an EN 837-1 class" in message
    assert "0.1, 0.25, 0.6, 1.0, 1.6, 2.5, 4.0" in message


def test_gauge_to_another_standard_keeps_its_own_grade() -> None:
    # ASME B40.100 grade 2A is 0.5 % of span (field notes, from memory): not an EN 837-1 class, still valid.
    assert (
        Gauge(
            id="P5K", full_scale="5000 psi", accuracy_class=0.5, standard="ASME B40.100 grade 2A"
        ).accuracy_class
        == 0.5
    )


def test_flow_meter_is_not_held_to_pressure_gauge_classes() -> None:
    meter = Gauge(id="FM20", full_scale="20 L/min", accuracy_class=2.0, standard="workshop calibration")
    assert meter.kind is Kind.FLOW


def test_class_1_6_gauge_on_a_0_to_10_bar_scale_is_good_to_0_16_bar() -> None:
    # EN 837-1: limit of error = class % of span; 1.6 % of 10 bar = 0.16 bar (field notes, calc).
    gauge = Gauge(id="G10", full_scale="10 bar", accuracy_class=1.6)
    assert (gauge.span * gauge.accuracy_class / 100).to("bar").magnitude == pytest.approx(0.16, rel=1e-12)


def test_compound_gauge_span_runs_from_vacuum_to_full_scale() -> None:
    gauge = Gauge(id="C3", full_scale="3 bar", scale_start="-1 bar", accuracy_class=1.6)
    assert gauge.span.to("bar").magnitude == pytest.approx(4.0, rel=1e-12)


def test_scale_start_above_full_scale_is_refused() -> None:
    with pytest.raises(ValidationError, match="scale_start must be below full_scale"):
        Gauge(id="G10", full_scale="10 bar", scale_start="12 bar", accuracy_class=1.6)


def test_scale_start_of_another_kind_is_refused() -> None:
    with pytest.raises(ValidationError, match="same kind"):
        Gauge(id="G10", full_scale="10 bar", scale_start="0 L/min", accuracy_class=1.6)


def test_gauge_with_an_unknown_key_names_the_key() -> None:
    with pytest.raises(ValidationError, match="calibrated_on"):
        Gauge(id="G10", full_scale="10 bar", accuracy_class=1.6, calibrated_on="2025-01-01")
