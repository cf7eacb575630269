"""Action tests: things a technician does to the machine, not a gauge point, that split the
leading faults (swap two cartridges, cap a cylinder's ports, block the valve, screw in a relief,
load the pump on a flow meter).

Each action has a time cost, its outcomes in words, and for each fault how likely each outcome
is (common practice: what the action is for; the numbers are judgement, like the rule tables).
A fault the action does not name shows the action's ``otherwise`` outcome distribution. The next
test ranks these with the gauge points by expected information gain per minute.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from fieldkit.model.profile import CircuitKind
from fieldkit.model.roles import Role

_OPEN = (CircuitKind.OPEN_FIXED_PUMP, CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED)
_VARIABLE = (CircuitKind.LOAD_SENSING, CircuitKind.PRESSURE_COMPENSATED)


@dataclass(frozen=True, slots=True)
class Outcome:
    """What the technician sees, and what it means."""

    seen: str
    meaning: str


@dataclass(frozen=True, slots=True)
class ActionTest:
    id: str
    title: str
    kinds: tuple[CircuitKind, ...]
    minutes: float
    #: The test point the action is read at (where the UI takes the technician).
    point_role: Role
    outcomes: tuple[Outcome, ...]
    #: Fault id → P(outcome | fault), in the order of ``outcomes``.
    by_fault: dict[str, tuple[float, ...]]
    #: P(outcome) for every fault not named, 'no fault' included.
    otherwise: tuple[float, ...]
    cautions: tuple[str, ...] = field(default=())
    source: str = "common practice"

    def likelihood(self, fault: str) -> tuple[float, ...]:
        return self.by_fault.get(fault, self.otherwise)


ACTIONS: tuple[ActionTest, ...] = (
    ActionTest(
        id="swap-cross-port-cartridges",
        title="Swap the two cross-port relief cartridges and stall both directions again",
        kinds=(CircuitKind.CLOSED_LOOP_DRIVE,),
        minutes=30,
        point_role=Role.LOOP_A_PRESSURE,
        outcomes=(
            Outcome(
                "the odd reading moves to the other side", "the cartridge is at fault (set wrong or leaking)"
            ),
            Outcome(
                "the odd reading stays on the same side",
                "the cartridges are sound: look at the pump, motor or gauge",
            ),
        ),
        by_fault={"hp_relief_low": (0.95, 0.05), "hp_relief_high": (0.95, 0.05)},
        otherwise=(0.03, 0.97),
        cautions=("stall-duration", "bleed-before-break", "relief-max-setting"),
    ),
    ActionTest(
        id="cap-cylinder-ports",
        title="Cap the cylinder's ports at the cylinder with the load held, and watch the drift",
        kinds=(CircuitKind.CYLINDER,),
        minutes=25,
        point_role=Role.CYLINDER_DRIFT,
        outcomes=(
            Outcome(
                "the drift stops with the ports capped",
                "oil was escaping through the valve or lines, not the cylinder",
            ),
            Outcome(
                "the drift goes on with the ports capped", "oil crosses the piston seal inside the cylinder"
            ),
        ),
        by_fault={"load_holding_valve_leak": (0.9, 0.1), "cylinder_seal_bypass": (0.1, 0.9)},
        otherwise=(0.9, 0.1),
        cautions=("raised-load", "stored-energy", "bleed-before-break"),
    ),
    ActionTest(
        id="block-the-valve",
        title="Block the valve off with a plate (or cap the pump line) and deadhead the pump on a test gauge",
        kinds=_OPEN,
        minutes=40,
        point_role=Role.PUMP_OUTLET_PRESSURE,
        outcomes=(
            Outcome(
                "the pump reaches full pressure with the valve blocked off",
                "the pump is sound: the loss is in the valve bank, its reliefs or the return",
            ),
            Outcome(
                "the pump still falls short with the valve blocked off",
                "the pump (or its inlet, or its compensator) is at fault",
            ),
        ),
        by_fault={
            "pump_worn": (0.15, 0.85),
            "suction_cavitation": (0.3, 0.7),
            "compensator_misset": (0.1, 0.9),
            "main_relief_low": (0.95, 0.05),
            "parallel_relief_governing": (0.95, 0.05),
            "ls_signal_leak": (0.9, 0.1),
        },
        otherwise=(0.9, 0.1),
        cautions=("bleed-before-break", "fluid-injection", "stall-duration"),
    ),
    ActionTest(
        id="screw-in-the-relief",
        title="With the function stalled, screw the main relief in a quarter turn; watch the stall gauge",
        kinds=_VARIABLE,
        minutes=15,
        point_role=Role.STALL_PRESSURE,
        outcomes=(
            Outcome(
                "the stall pressure rises with the relief",
                "the relief was governing: it is set low (reset it to its figure)",
            ),
            Outcome(
                "the stall pressure stays put",
                "the pump's compensator governs: judge its setting, then back the relief out again",
            ),
        ),
        by_fault={"main_relief_low": (0.95, 0.05), "parallel_relief_governing": (0.3, 0.7)},
        otherwise=(0.05, 0.95),
        cautions=("relief-max-setting", "over-pressure", "stall-duration"),
    ),
    ActionTest(
        id="loaded-flow-test",
        title="Put a flow meter with a loading valve on the pump and measure its flow at the test pressure",
        kinds=_OPEN,
        minutes=45,
        point_role=Role.PUMP_OUTLET_PRESSURE,
        outcomes=(
            Outcome(
                "the flow falls well short of displacement × speed under load",
                "the pump leaks internally or starves",
            ),
            Outcome("the flow holds up under load", "the pump is sound"),
        ),
        by_fault={"pump_worn": (0.9, 0.1), "suction_cavitation": (0.7, 0.3)},
        otherwise=(0.05, 0.95),
        cautions=("fluid-injection", "hot-oil", "bleed-before-break"),
    ),
)

__all__ = ["ACTIONS", "ActionTest", "Outcome"]
