"""Accumulator precharge judged at the temperature its figure is stated at.

The Loamshifter's brake accumulator (invented demo figures): nitrogen 81 bar at 20 °C, minimum
working pressure 90 bar, so the precharge rule asks 80-100 % of 90 = 72 to 90 bar. A precharge read
on a cold morning reads low with no gas lost: the gas in a closed shell keeps p/T constant in
absolute pressure and kelvin (ideal gas law, Gay-Lussac; standard atmosphere 1.01325 bar).
"""

from __future__ import annotations

import pytest
from diagnosis_helpers import VisitBuilder, finding, knowledge, library

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Finding, Verdict
from fieldkit.model.condition import Condition, FunctionState


def precharge_finding(bar: float, gas_c: float | None) -> Finding:
    profile = library().get("oskerfield-loamshifter")
    b = VisitBuilder(profile)
    b.add("brake_acc.precharge", bar, FunctionState.NEUTRAL, oil_c=gas_c if gas_c is not None else 20.0)
    visit = b.build()
    if gas_c is None:  # no temperature stated with the reading
        readings = [r.model_copy(update={"condition": Condition()}) for r in visit.readings]
        visit = visit.model_copy(update={"readings": readings})
    return finding(diagnose(visit, profile, knowledge()), "accumulator-precharge", "brake_acc")


def number(text: str) -> float:
    return float(text.split()[0])


def test_a_cold_precharge_of_70_bar_at_5_c_is_73_8_bar_at_20_c_and_not_low() -> None:
    # (70 + 1.01325) · 293.15 / 278.15 − 1.01325 = 71.01325 · 1.053928 − 1.01325 = 73.83 bar [hand]:
    # inside 72 to 90 bar, where the 70 bar read would be 2 bar under it.
    f = precharge_finding(70.0, 5.0)
    assert number(f.value) == pytest.approx(73.83, abs=0.06)  # shown to the gauge's 0.1 bar
    assert f.verdict is Verdict.IN_RANGE
    # The screen says which temperatures were used.
    assert "5 °C" in f.message and "20 °C" in f.message and "the profile's figure" in f.message


def test_a_warm_precharge_of_95_bar_at_50_c_is_86_1_bar_at_20_c_and_not_high() -> None:
    # (95 + 1.01325) · 293.15 / 323.15 − 1.01325 = 96.01325 · 0.907164 − 1.01325 = 86.09 bar [hand]:
    # inside 72 to 90 bar, where the 95 bar read would be above it.
    f = precharge_finding(95.0, 50.0)
    assert number(f.value) == pytest.approx(86.09, abs=0.06)  # shown to the gauge's 0.1 bar
    assert f.verdict is Verdict.IN_RANGE


def test_with_no_temperature_stated_the_precharge_is_judged_as_read_and_says_so() -> None:
    f = precharge_finding(70.0, None)
    assert number(f.value) == 70.0
    assert f.verdict is Verdict.LOW
    assert "No temperature was stated with the precharge reading" in f.message
    assert "20 °C" in f.message


def test_a_lost_gas_charge_is_low_whatever_the_temperature() -> None:
    # 40 bar at 30 °C: (41.01325) · 293.15 / 303.15 − 1.01325 = 38.65 bar [hand], far under 72 bar.
    f = precharge_finding(40.0, 30.0)
    assert f.verdict is Verdict.LOW
