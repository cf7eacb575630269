"""Single-rule scenes with readings chosen by hand, each with the reason the value is low, normal or high
for that demo machine (the machines' figures are invented demo data, used here as given numbers).

Like the scenes in tests/diagnosis/test_rules_every_rule.py (one per rule and side), these values
were picked from the machine's service figures and the trade reasoning in the comments; a rule
whose limits drifted away from what a technician would call low or high fails here.
"""

from __future__ import annotations

import pytest
from diagnosis_helpers import VisitBuilder, finding, knowledge, library

from fieldkit.diagnosis.engine import diagnose
from fieldkit.diagnosis.results import Verdict
from fieldkit.model.condition import FunctionState as S

LOW, OK, HIGH = Verdict.LOW, Verdict.IN_RANGE, Verdict.HIGH

# (machine, rule, circuit, [(point, value, state)], verdict, why)
SCENES = [
    # --- Pebblerun stacker: gear pump, main relief 180 bar, return check 4 bar (service figures) ---
    (
        "brindlecombe-pebblerun",
        "stall-vs-relief-layout",
        "main",
        [("main.stall", 150.0, S.STALLED)],
        LOW,
        "150 bar at a stall is 30 bar under a 180 bar relief: the relief opens early",
    ),
    (
        "brindlecombe-pebblerun",
        "stall-vs-relief-layout",
        "main",
        [("main.stall", 186.0, S.STALLED)],
        OK,
        "186 bar = 180 bar relief + about 4 bar of return check and line: what a sound stacker reads",
    ),
    (
        "brindlecombe-pebblerun",
        "stall-vs-relief-layout",
        "main",
        [("main.stall", 215.0, S.STALLED)],
        HIGH,
        "215 bar is above even the 210 bar luff port relief: the main relief has been screwed in",
    ),
    (
        "brindlecombe-pebblerun",
        "return-back-pressure",
        "main",
        [("main.return", 7.0, S.FULL_STROKE)],
        HIGH,
        "7 bar in the return at full flow, over twice the 3 bar the cooler and filter should cost",
    ),
    (
        "brindlecombe-pebblerun",
        "pump-inlet-vacuum",
        "main",
        [("main.suction", -0.45, S.FULL_STROKE)],
        LOW,
        "0.45 bar of vacuum at a gear pump inlet: the oil is boiling out air (clean suctions pull < 0.2 bar)",
    ),
    # --- Fellborer drill rig: closed-loop travel, charge relief 27 bar, cross-port 380 bar differential ---
    (
        "tarnhollow-fellborer",
        "charge-in-neutral",
        "travel",
        [("travel.charge", 18.0, S.NEUTRAL)],
        LOW,
        "18 bar in neutral on a 27 bar charge relief: a third of the charge pressure is missing",
    ),
    (
        "tarnhollow-fellborer",
        "charge-in-neutral",
        "travel",
        [("travel.charge", 27.0, S.NEUTRAL)],
        OK,
        "27 bar in neutral is the charge relief setting itself",
    ),
    (
        "tarnhollow-fellborer",
        "loop-a-stall",
        "travel",
        [("travel.loop_a", 340.0, S.STALLED)],
        LOW,
        "340 bar at the A port: even without charge it is 40 bar under the 380 bar cross-port setting",
    ),
    (
        "tarnhollow-fellborer",
        "loop-a-stall",
        "travel",
        [("travel.loop_a", 402.0, S.STALLED)],
        OK,
        "402 bar = 380 bar differential + about 22 bar charge on the low side, the expected gauge reading",
    ),
    (
        "tarnhollow-fellborer",
        "pump-case-drain",
        "travel",
        [("travel.pump_drain", 11.0, S.STALLED)],
        HIGH,
        "11 L/min out of the pump case at a stall, twice the 5.5 L/min a sound pump loses (oil at 50 °C)",
    ),
    # --- Loamshifter loader: load-sensing pump, standby about 28 bar, cut-off about 250 bar ---
    (
        "oskerfield-loamshifter",
        "ls-standby",
        "work",
        [("work.standby", 14.0, S.NEUTRAL)],
        LOW,
        "14 bar standby on a pump set near 28 bar: the compensator spring is backed off or broken",
    ),
    (
        "oskerfield-loamshifter",
        "ls-standby",
        "work",
        [("work.standby", 28.0, S.NEUTRAL)],
        OK,
        "28 bar standby: the middle of what this pump is set to",
    ),
]


@pytest.mark.parametrize(
    ("machine", "rule_id", "circuit", "readings", "verdict", "why"),
    SCENES,
    ids=[f"{s[1]}-{s[4].name.lower()}-{s[3][0][1]:g}" for s in SCENES],
)
def test_a_hand_chosen_reading_gets_the_verdict_a_technician_would_give(
    machine: str,
    rule_id: str,
    circuit: str,
    readings: list[tuple[str, float, S]],
    verdict: Verdict,
    why: str,
) -> None:
    profile = library().get(machine)
    b = VisitBuilder(profile, visit_id=f"hand-{rule_id}")
    for point, value, state in readings:
        b.add(point, value, state)
    d = diagnose(b.build(), profile, knowledge())
    f = finding(d, rule_id, circuit)
    assert f.verdict is verdict, f"{why}; engine said {f.verdict.name}: {f.message}"
