"""The next test as a technician would choose it (issue 13): a reading whose every outcome leaves
the same leading fault, and that reads alike under the two leaders, does not outrank a test that
splits them, however cheap it is. Among tests of one kind the doubt removed per minute decides.

Scenes are on the invented demo machines; the reasoning beside each is common practice."""

from __future__ import annotations

from diagnosis_helpers import VisitBuilder, knowledge, library

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.next_test import rank_by_value
from fieldkit.diagnosis.results import NextTest
from fieldkit.model.condition import FunctionState

NEUTRAL = FunctionState.NEUTRAL
FULL_STROKE = FunctionState.FULL_STROKE
STALLED = FunctionState.STALLED


def _test(label: str, gain_bits: float, minutes: float) -> NextTest:
    return NextTest(
        test_point="p", label=label, circuit="c", condition="", minutes=minutes, gain_bits=gain_bits, why=""
    )


def test_a_test_that_splits_the_leaders_comes_before_cheaper_ones_that_cannot() -> None:
    # Hand calculation of doubt removed per minute: reading A 0.028 bits / 2 min = 0.014,
    # reading B 0.036 / 4 = 0.009, the action 0.21 / 30 = 0.007. Only the action can split the
    # leaders: it comes first, then the other two by their rate.
    tests = [(_test("A", 0.028, 2), False), (_test("B", 0.036, 4), False), (_test("act", 0.21, 30), True)]
    assert [t.label for t, _ in rank_by_value(tests)] == ["act", "A", "B"]


def test_with_no_test_able_to_split_the_leaders_the_rate_alone_decides() -> None:
    tests = [(_test("slow", 0.3, 30), False), (_test("quick", 0.05, 2), False)]
    assert [t.label for t, _ in rank_by_value(tests)] == ["quick", "slow"]


def test_a_low_cross_port_stall_offers_the_cartridge_swap_before_a_reading_that_cannot_split() -> None:
    # Fellborer: oil 50 °C, charge 27 bar in neutral and 22 bar in stroke and at the stall (its
    # relief figures), side A stalls at 402 bar as expected (380 bar differential + 22 bar), side
    # B at 380 bar. A weak cross-port relief leads by far. Charge at low idle (4 min) and the
    # drains read the same whether the cartridge or nothing is at fault; swapping the two
    # cartridges (30 min) is the test that says which: the low reading follows a bad cartridge.
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    for point, value, state in [
        ("travel.oil_temp", 50.0, NEUTRAL),
        ("travel.charge", 27.0, NEUTRAL),
        ("travel.charge", 22.0, FULL_STROKE),
        ("travel.charge", 22.0, STALLED),
        ("travel.loop_a", 402.0, STALLED),
        ("travel.loop_b", 380.0, STALLED),
    ]:
        b.add(point, value, state)
    d = diagnose(b.build(), profile, knowledge())
    assert d.faults[0].key == "hp_relief_low@travel"
    first = d.next_tests[0]
    assert first.action == "swap-cross-port-cartridges", [t.label for t in d.next_tests]
    # The quicker reading is still offered, after it, although it removes more doubt per minute.
    idle = next(t for t in d.next_tests if t.test_point == "travel.charge_idle" and not t.action)
    assert idle.gain_bits / idle.minutes > first.gain_bits / first.minutes
