"""Readings taken outside the test window (cold oil, wrong engine speed) still count, but less:
their findings are tempered (likelihood ratio raised to the power 0.35, DEVELOPERS.md "How the
diagnosis works") and say why, and the ranking gives weight to 'test not valid'.

The test windows are the demo profiles' (fictional maker's figures): Fellborer oil 45-70 °C, rated
2200 rpm ± 5 %.
"""

from __future__ import annotations

import pytest
from diagnosis_helpers import (
    VisitBuilder,
    chilled,
    finding,
    knowledge,
    library,
    load_readings_only,
    sample_visit_paths,
)

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.model.condition import FunctionState
from fieldkit.model.roles import Role
from fieldkit.units import Q_

TEMPER = 0.35
COLD_C = 30.0
#: discount_when_invalid = false: these rules judge the window itself.
WINDOW_RULES = ("oil-in-test-window", "speed-at-rated")


def _warm_and_cold(stem: str) -> tuple[Diagnosis, Diagnosis]:
    path = next(p for p in sample_visit_paths() if p.stem == stem)
    visit = load_readings_only(path)
    profile = library().get(visit.machine)
    warm = diagnose(visit, profile, knowledge())
    cold = diagnose(chilled(visit, profile, COLD_C), profile, knowledge())
    return warm, cold


def _fault(d: Diagnosis, fault_id: str):
    return next(f for f in d.faults if f.id == fault_id)


def test_findings_from_cold_oil_readings_are_discounted_with_a_reason() -> None:
    _warm, cold = _warm_and_cold("fellborer-charge-pump-worn")
    judged = [f for f in cold.findings if f.verdict is not Verdict.NOT_MEASURED]
    for f in judged:
        if f.rule_id in WINDOW_RULES:
            assert f.discount == 1.0, f.key
        else:
            assert f.discount == pytest.approx(TEMPER), f.key
            assert "oil at 30 °C, below the test window (45–70 °C)" in f.discount_reason
            assert "reduced weight" in f.message
    assert sum(f.discount < 1 for f in judged) >= 8
    profile = library().get("tarnhollow-fellborer")
    for check in cold.checks:
        role = profile.test_point(check.test_point)[1].role
        judges_the_window = role in (Role.OIL_TEMPERATURE, Role.PUMP_SPEED)
        assert bool(check.discounted) is not judges_the_window, check.test_point


def test_cold_evidence_is_the_warm_evidence_raised_to_the_tempering_power() -> None:
    """Charge pressure does not depend on the oil temperature here, so the same outcome probabilities
    give log-likelihood ratios scaled by exactly 0.35."""
    warm, cold = _warm_and_cold("fellborer-charge-pump-worn")
    for rule_id in ("charge-in-neutral", "charge-in-stroke", "charge-drop-in-stroke"):
        w, c = finding(warm, rule_id, "travel"), finding(cold, rule_id, "travel")
        assert (c.p_low, c.p_in_range, c.p_high) == (w.p_low, w.p_in_range, w.p_high)
        assert w.evidence and set(c.evidence) == set(w.evidence)
        for key, llr in w.evidence.items():
            assert c.evidence[key] == pytest.approx(TEMPER * llr, rel=1e-12), (rule_id, key)


def test_cold_readings_make_the_diagnosis_less_sure() -> None:
    warm, cold = _warm_and_cold("fellborer-charge-pump-worn")
    assert warm.top.id == "charge_pump_worn"
    assert cold.top.probability < warm.top.probability
    assert cold.entropy_bits > warm.entropy_bits
    invalid = "invalid_test_conditions"
    assert _fault(cold, invalid).probability > _fault(warm, invalid).probability


def test_healthy_machine_read_with_cold_oil_puts_weight_on_an_invalid_test() -> None:
    warm, cold = _warm_and_cold("fellborer-no-fault")
    oil = finding(cold, "oil-in-test-window", None)
    assert oil.verdict is Verdict.LOW
    assert oil.evidence["invalid_test_conditions"] > 0
    assert oil.action.startswith("Warm the oil")
    invalid = _fault(cold, "invalid_test_conditions")
    assert invalid.probability > 5 * invalid.prior
    assert invalid.probability > 5 * _fault(warm, "invalid_test_conditions").probability
    assert any(e.finding == "oil-in-test-window" for e in invalid.supporting)


def test_healthy_machine_read_with_cold_oil_ranks_an_invalid_test_first() -> None:
    _warm, cold = _warm_and_cold("fellborer-no-fault")
    assert cold.top.id == "invalid_test_conditions"


def test_reading_off_rated_speed_is_discounted_with_the_speed_named() -> None:
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    r = b.add("travel.charge", 27.0, FunctionState.NEUTRAL)
    slow = r.model_copy(update={"condition": r.condition.model_copy(update={"speed": Q_(1500.0, "rpm")})})
    b.readings[-1] = slow
    f = finding(diagnose(b.build(), profile, knowledge()), "charge-in-neutral", "travel")
    assert f.discount == pytest.approx(TEMPER)
    assert f.discount_reason == "speed 1500 rpm, not within 5 % of rated 2200 rpm"
