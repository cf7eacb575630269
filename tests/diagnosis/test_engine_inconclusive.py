"""A reading closer to a limit than its gauge can tell is 'inconclusive', not a pass or a fail,
and the next test says to repeat it with a smaller gauge; the same reading on that smaller gauge
gives a confident verdict, so the gauge, not luck, made the difference.

Source for the uncertainty: EN 837-1 accuracy class = limit of error as % of span; read as a
rectangular distribution, u = a/√3 (JCGM 100:2008, GUM 4.3.7); normal model for the true value.
Gauge range advice: full scale above the point's highest pressure, steady reading at most 3/4 of
the scale (EN 837-2, from memory; field notes).
"""

from __future__ import annotations

import math
import re
from datetime import timedelta

import pytest
from diagnosis_helpers import (
    VisitBuilder,
    diagnose_sample,
    finding,
    knowledge,
    library,
    precise_gauge,
    sample_visit_paths,
    with_readings,
)
from scipy.stats import norm

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.model.visit import Reading, Visit
from fieldkit.units import Q_, Kind, to_canonical

CASE_LIMIT_BAR = (
    2.0  # the Fellborer profile's max_case_pressure and its case point's range (fictional demo figure)
)
#: 0.3 bar above the limit: within one standard uncertainty of a 0-60 bar class 1 gauge (0.35 bar).
READING_BAR = 2.3


def _fellborer_with_case_reading(gauge: Gauge, bar: float = READING_BAR) -> tuple[Visit, Diagnosis]:
    """The healthy Fellborer visit, plus a last case pressure reading of ``bar`` on ``gauge``."""
    path = next(p for p in sample_visit_paths() if p.stem == "fellborer-no-fault")
    visit, profile, _ = diagnose_sample(path)
    last = max(r.taken_at for r in visit.readings)
    extra = Reading(
        id="r90",
        test_point="travel.case",
        value=Q_(bar, "bar"),
        reference="gauge",
        condition=Condition(
            function=FunctionState.FULL_STROKE, speed=Q_(2200.0, "rpm"), oil_temperature=Q_(57.0, "degC")
        ),
        gauge=gauge.id,
        taken_at=last + timedelta(minutes=5),
    )
    visit = with_readings(visit, [extra], [gauge])
    return visit, diagnose(visit, profile, knowledge())


def _gauge(visit_gauge_id: str, full_scale_bar: float, accuracy_class: float) -> Gauge:
    return Gauge(
        id=visit_gauge_id,
        label=f"0-{full_scale_bar:g} bar class {accuracy_class:g}",
        full_scale=Q_(full_scale_bar, "bar"),
        accuracy_class=accuracy_class,
    )


def _u(gauge: Gauge) -> float:
    return gauge.accuracy_class / 100 * to_canonical(gauge.full_scale, Kind.PRESSURE) / math.sqrt(3)


BIG = _gauge("G60", 60.0, 1.0)  # the visit's own 0-60 bar class 1 gauge


@pytest.mark.parametrize("bar", [1.6, READING_BAR])
def test_case_pressure_within_the_gauge_error_of_its_limit_is_inconclusive(bar: float) -> None:
    _visit, d = _fellborer_with_case_reading(BIG, bar)
    f = finding(d, "case-pressure", "travel")
    assert f.readings == ["r90"]
    assert f.verdict is Verdict.INCONCLUSIVE
    # P(true value above 2 bar), u = 1 % · 60 bar / √3 = 0.346 bar: 12 % at 1.6 bar, 81 % at 2.3 bar (scipy).
    expected = norm.sf(CASE_LIMIT_BAR, loc=bar, scale=_u(BIG))
    assert f.p_high == pytest.approx(expected, abs=1e-9)
    assert 0.05 < f.p_high < 0.95
    assert "Too close to a limit" in f.message
    check = next(c for c in d.checks if c.reading_id == "r90")
    assert check.verdict is Verdict.INCONCLUSIVE
    assert check.uncertainty_num == pytest.approx(_u(BIG), rel=1e-9)


def test_inconclusive_case_pressure_asks_for_a_repeat_on_a_smaller_gauge() -> None:
    visit, d = _fellborer_with_case_reading(BIG)
    repeat = [t for t in d.next_tests if t.test_point == "travel.case"]
    assert repeat, [(t.test_point, t.condition) for t in d.next_tests]
    t = repeat[0]
    assert t.repeat is True
    assert t.gain_bits > 0
    m = re.search(r"0–(\d+(?:\.\d+)?) bar gauge", t.gauge_advice)
    assert m, t.gauge_advice
    size = float(m.group(1))
    _c, point = library().get(visit.machine).test_point("travel.case")
    assert size < to_canonical(BIG.full_scale, Kind.PRESSURE)  # smaller than the gauge used
    assert size > to_canonical(point.max_pressure, Kind.PRESSURE)  # rated above the point's highest pressure
    assert READING_BAR <= 0.75 * size  # the reading sits in the steady part of the scale
    assert t.gauge_advice in t.why


def test_the_same_reading_on_the_advised_smaller_gauge_is_a_confident_fail() -> None:
    """Same value, same accuracy class, on the full scale the advice names: u shrinks from 0.35 to
    0.09 bar and the reading is more than 3 standard uncertainties above the limit."""
    _visit, d = _fellborer_with_case_reading(BIG)
    advice = next(t for t in d.next_tests if t.test_point == "travel.case").gauge_advice
    size = float(re.search(r"0–(\d+(?:\.\d+)?) bar", advice).group(1))  # type: ignore[union-attr]
    small = _gauge("G-small", size, BIG.accuracy_class)
    _visit, d2 = _fellborer_with_case_reading(small)
    f = finding(d2, "case-pressure", "travel")
    assert f.verdict is Verdict.HIGH
    assert f.p_high == pytest.approx(norm.sf(CASE_LIMIT_BAR, loc=READING_BAR, scale=_u(small)), abs=1e-9)
    assert not [t for t in d2.next_tests if t.test_point == "travel.case" and t.repeat]


@pytest.mark.parametrize(
    ("p_high", "verdict"),
    [
        (0.04, Verdict.IN_RANGE),
        (0.06, Verdict.INCONCLUSIVE),
        (0.94, Verdict.INCONCLUSIVE),
        (0.96, Verdict.HIGH),
    ],
)
def test_a_verdict_is_stated_only_when_one_outcome_reaches_95_percent(
    p_high: float, verdict: Verdict
) -> None:
    """DEVELOPERS.md: a verdict needs one outcome at 95 % or more. The reading is placed where
    P(true value above 2 bar) = p_high: x = 2 bar + u · Φ⁻¹(p_high) (scipy.stats.norm.ppf)."""
    bar = CASE_LIMIT_BAR + _u(BIG) * norm.ppf(p_high)
    _visit, d = _fellborer_with_case_reading(BIG, bar)
    f = finding(d, "case-pressure", "travel")
    assert f.p_high == pytest.approx(p_high, abs=1e-9)
    assert f.verdict is verdict


@pytest.mark.parametrize("side", ["below", "above"])
def test_a_reading_many_uncertainties_from_the_limit_is_called_with_confidence(side: str) -> None:
    """The normal model at work: the same 0.4 bar from the limit on a class 0.1 0–4 bar gauge
    (u = 0.0023 bar) is a confident pass or fail, never 'inconclusive'."""
    profile = library().get("tarnhollow-fellborer")
    value = CASE_LIMIT_BAR - 0.4 if side == "below" else CASE_LIMIT_BAR + 0.4
    b = VisitBuilder(profile)
    b.add("travel.case", value, FunctionState.NEUTRAL, gauge=precise_gauge("G4", Kind.PRESSURE, 2.0))
    f = finding(diagnose(b.build(), profile, knowledge()), "case-pressure", "travel")
    assert f.verdict is (Verdict.IN_RANGE if side == "below" else Verdict.HIGH)


def _exact_repeat_gain(d: Diagnosis) -> float:
    """Expected information gain of repeating the soft case reading with a gauge that settles it.

    The soft reading is virtual evidence on the true outcome o (Pearl 1988, §2.2.2): with the
    finding taken out, P(h) and P(o | h) from the rule file, the outcome the repeat will show is
    predicted by P(o | now) ∝ P_obs(o) · Σ_h P(h) P(o | h), and after it P(h | o) ∝ P(h) P(o | h).
    Gain = H(now) − Σ_o P(o | now) · H(P(· | o)), never negative (Cover & Thomas, *Elements of
    Information Theory*, 2nd ed., Thm 2.6.5: conditioning reduces entropy).
    """
    from diagnosis_helpers import likelihood_for

    rule = next(r for r in knowledge().rules if r.id == "case-pressure")
    f = finding(d, "case-pressure", "travel")
    observed = (f.p_low, f.p_in_range, f.p_high)
    post = {x.key: x.probability for x in d.faults}
    lik = {k: likelihood_for(rule, "travel", k) for k in post}
    without = {k: p / sum(o * q for o, q in zip(observed, lik[k], strict=True)) for k, p in post.items()}
    total = sum(without.values())
    without = {k: p / total for k, p in without.items()}

    def entropy(ps: list[float]) -> float:
        return -sum(p * math.log2(p) for p in ps if p > 0)

    predictive = [observed[o] * sum(without[k] * lik[k][o] for k in post) for o in range(3)]
    z = sum(predictive)
    expected = 0.0
    for o in range(3):
        joint = [without[k] * lik[k][o] for k in post]
        expected += predictive[o] / z * entropy([j / sum(joint) for j in joint])
    return entropy(list(post.values())) - expected


def test_inconclusive_reading_on_the_safe_side_that_cannot_change_the_leader_gets_no_repeat() -> None:
    # Issue 13: a repeat with a better gauge is offered only when it could change the leading
    # fault. 1.6 bar against a 2 bar limit on the 0-60 bar gauge is inconclusive, but on this
    # otherwise healthy machine no outcome of a repeat would unseat 'no fault'.
    _visit, d = _fellborer_with_case_reading(BIG, 1.6)
    assert finding(d, "case-pressure", "travel").verdict is Verdict.INCONCLUSIVE
    assert not [t for t in d.next_tests if t.test_point == "travel.case" and t.repeat]


@pytest.mark.parametrize("bar", [READING_BAR])
def test_repeat_gain_is_the_exact_expected_information_gain(bar: float) -> None:
    _visit, d = _fellborer_with_case_reading(BIG, bar)
    exact = _exact_repeat_gain(d)
    assert exact > 1e-3
    repeat = [t for t in d.next_tests if t.test_point == "travel.case" and t.repeat]
    assert repeat and repeat[0].gain_bits == pytest.approx(exact, rel=1e-3)
