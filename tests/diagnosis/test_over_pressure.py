"""Over-pressure: a reading well above the relief setting, or above the point's rating, is a danger.

The rule (diagnosis/over_pressure.py): above the point's stated rating, or above the governing
relief setting by more than the gauge's EN 837-1 limit of error (class % of span) plus a 5 %
margin (common practice). Each expected outcome below is a hand calculation written out.
"""

from __future__ import annotations

import pytest
from diagnosis_helpers import VisitBuilder, diagnose_sample, knowledge, library, sample_visit_paths

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.over_pressure import check_over_pressure, relief_limit
from fieldkit.model.condition import FunctionState
from fieldkit.model.gauge import Gauge
from fieldkit.units import Q_

G600 = Gauge(id="G600", full_scale=Q_(600, "bar"), accuracy_class=1.0)  # limit of error 1 % x 600 = 6 bar
G250 = Gauge(id="G250", full_scale=Q_(250, "bar"), accuracy_class=1.0)  # 2.5 bar


def _fellborer_loop_a(value: float, gauge: Gauge = G600):
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    b.add("travel.loop_a", value, FunctionState.STALLED, gauge=gauge)
    return diagnose(b.build(), profile, knowledge())


def test_440_bar_on_a_400_bar_loop_raises_the_over_pressure_danger() -> None:
    # The Fellborer's cross-port relief is 380 bar stated as a differential: at a stall the port
    # gauge reads it plus the low side, at most the 27 bar charge relief when charge was not read
    # -> 407 bar (the maker's "about 402 bar"). Plus the gauge's 6 bar and 5 % of 407 (20.35 bar):
    # 433.35 bar. 440 bar is beyond it: the relief did not open.
    d = _fellborer_loop_a(440.0)
    finding = next(f for f in d.findings if f.rule_id == "over-pressure")
    assert "did not open" in finding.message and "380 bar" in finding.message
    caution = next(c for c in d.cautions if c.id == "over-pressure")
    assert caution.severity == "danger" and caution.urgent
    assert d.cautions[1].id == "over-pressure"  # straight after the general caution
    for must in ("stop", "do not repeat", "why the relief did not open"):
        assert must in caution.text.lower() or must in finding.action.lower(), must


def test_420_bar_on_the_same_loop_is_within_the_gauge_error_and_margin() -> None:
    # 420 < 433.35 bar: a relief reading a little high is a fault for the rules, not a danger.
    d = _fellborer_loop_a(420.0)
    assert not any(f.rule_id == "over-pressure" for f in d.findings)
    assert "over-pressure" not in {c.id for c in d.cautions}


def test_the_limit_moves_with_the_gauge_error_and_the_back_pressure() -> None:
    profile = library().get("tarnhollow-fellborer")
    circuit, point = profile.test_point("travel.loop_a")
    assert relief_limit(circuit, point).bar == pytest.approx(380.0)
    # With 27 bar behind it: 407 + 5 % (20.35) = 427.35 bar, plus the gauge's error.
    assert check_over_pressure(432.0, 2.5, circuit, point, back_pressure_bar=27.0) is not None  # > 429.85
    assert check_over_pressure(432.0, 6.0, circuit, point, back_pressure_bar=27.0) is None  # < 433.35
    # With 22 bar of charge read at the stall: 402 + 20.1 + 6 = 428.1 bar.
    assert check_over_pressure(430.0, 6.0, circuit, point, back_pressure_bar=22.0) is not None


def test_a_reading_above_the_points_rating_is_over_pressure_whatever_the_relief() -> None:
    # The loop ports are rated 450 bar: 460 is above the rating itself.
    profile = library().get("tarnhollow-fellborer")
    circuit, point = profile.test_point("travel.loop_a")
    over = check_over_pressure(460.0, 0.0, circuit, point)
    assert over is not None and over.limit.what == "the point's rating"


def test_650_bar_on_a_600_bar_gauge_is_overranged_and_over_pressure() -> None:
    d = _fellborer_loop_a(650.0)
    ids = {c.id for c in d.cautions}
    assert {"over-pressure", "gauge-overranged"} <= ids
    assert all(c.severity == "danger" for c in d.cautions if c.id in {"over-pressure", "gauge-overranged"})


def test_charge_above_its_relief_is_over_pressure_unless_case_pressure_explains_it() -> None:
    profile = library().get("tarnhollow-fellborer")
    circuit, point = profile.test_point("travel.charge")
    # Charge relief 27 bar; class 1 on 0-60 bar -> 0.6 bar; 5 % of 27 = 1.35 bar -> limit 28.95 bar.
    assert check_over_pressure(30.0, 0.6, circuit, point) is not None
    assert check_over_pressure(28.5, 0.6, circuit, point) is None
    # The charge relief dumps into the pump case: 4 bar in the case lifts it one for one (field
    # notes, relief valves): 31 + 0.6 + 5 % of 31 = 33.15 bar.
    assert check_over_pressure(30.0, 0.6, circuit, point, back_pressure_bar=4.0) is None


def test_a_point_with_no_relief_and_no_rating_is_never_over_pressure() -> None:
    profile = library().get("oskerfield-loamshifter")
    circuit, point = profile.test_point("lift.drift")  # a drift rate, not a pressure
    assert check_over_pressure(999.0, 0.0, circuit, point) is None


@pytest.mark.parametrize("path", sample_visit_paths(with_scenario=False), ids=lambda p: p.stem)
def test_no_sample_visit_raises_a_false_over_pressure(path) -> None:
    # The demo visits are healthy machines or ordinary faults: a relief set low, a return line
    # with back pressure (which the relief sits behind), a worn pump. None failed to open.
    _visit, _profile, d = diagnose_sample(path)
    assert not any(f.rule_id == "over-pressure" for f in d.findings)
