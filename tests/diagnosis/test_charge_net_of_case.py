"""The net charge verdict: charge above case, both read in the same condition (neutral).

Closed-loop pumps need charge pressure above their case pressure to hold the servo and pistons
(common practice; the README: "charge pressure is judged against case pressure"). A case reading
from another condition is never paired with the charge reading; with none in the same condition
the verdict uses the gauge charge and says the case was not read.
"""

from __future__ import annotations

from diagnosis_helpers import VisitBuilder, finding, knowledge
from test_typical_charge import loop_machine

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Finding, Verdict
from fieldkit.model.condition import FunctionState as S

#: Invented test figures: a charge relief of 22 bar and a least net charge of 17 bar.
FIGURES = {"charge_relief_setting": "22 bar", "min_net_charge": "17 bar"}


def net_finding(readings: list[tuple[str, float, S]]) -> Finding:
    profile = loop_machine(FIGURES)
    b = VisitBuilder(profile)
    for point, value, state in readings:
        b.add(point, value, state)
    d = diagnose(b.build(), profile, knowledge())
    return finding(d, "net-charge-above-case", "drive")


def test_charge_22_bar_over_a_4_bar_case_is_18_bar_net() -> None:
    # 22 − 4 = 18 bar net [hand], at least the 17 bar asked: in range, and nothing assumed.
    net = net_finding([("drive.charge", 22.0, S.NEUTRAL), ("drive.case", 4.0, S.NEUTRAL)])
    assert net.value.startswith("18")
    assert net.verdict is Verdict.IN_RANGE
    assert "not measured" not in net.message


def test_charge_20_bar_over_a_4_bar_case_is_short_of_17_bar_net() -> None:
    # 20 − 4 = 16 bar net [hand]: 1 bar short of 17 bar, though the gauge's 20 bar is not.
    net = net_finding([("drive.charge", 20.0, S.NEUTRAL), ("drive.case", 4.0, S.NEUTRAL)])
    assert net.value.startswith("16")
    assert net.verdict is Verdict.LOW


def test_a_case_reading_in_stroke_is_not_paired_with_the_neutral_charge() -> None:
    # The only case reading is at full stroke: the neutral verdict uses the gauge charge, 22 bar,
    # above 17 bar [hand], and says the case was not read in neutral.
    net = net_finding([("drive.charge", 22.0, S.NEUTRAL), ("drive.case", 4.0, S.FULL_STROKE)])
    assert net.value.startswith("22")
    assert net.verdict is Verdict.IN_RANGE
    assert "Case pressure was not measured (function in neutral)" in net.message
    assert "gauge reading" in net.message
    assert len(net.readings) == 1


def test_with_no_case_reading_a_low_gauge_charge_is_still_low() -> None:
    # 15 bar on the gauge: net can only be lower, and 15 < 17 bar [hand].
    net = net_finding([("drive.charge", 15.0, S.NEUTRAL)])
    assert net.verdict is Verdict.LOW
