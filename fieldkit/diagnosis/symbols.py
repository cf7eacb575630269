"""The names rule expressions may use, with their kinds.

- every role (``charge_pressure``): the latest reading of that role in the circuit, taken in one
  of the rule's ``when`` states;
- ``<role>_in_<state>`` (``charge_pressure_in_full_stroke``): the latest reading in that state,
  whatever the rule's ``when`` says — for rules that compare two conditions;
- every circuit parameter (:mod:`fieldkit.model.parameters`) and a few machine figures;
- derived quantities computed by the physics core (:data:`DERIVED`).
"""

from __future__ import annotations

from fieldkit.expr import BUILTIN_FUNCTIONS
from fieldkit.model.condition import FunctionState
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.roles import ROLES, Role
from fieldkit.units import Kind


class SymbolTable(dict[str, Kind]):
    """Name → kind, plus which names are single readings (for ``limits = "expected"``)."""

    def __init__(self) -> None:
        super().__init__()
        self.readings: dict[str, tuple[Role, FunctionState | None]] = {}


def reading_name(role: Role, state: FunctionState | None) -> str:
    return role.value if state is None else f"{role.value}_in_{state.value}"


MACHINE_FIGURES: dict[str, tuple[Kind, str]] = {
    "rated_speed": (Kind.SPEED, "the machine's rated engine or pump speed"),
    "rated_max_pressure": (Kind.PRESSURE, "the highest pressure the machine is rated for"),
    "reference_oil_temperature": (Kind.TEMPERATURE, "temperature that leakage readings are normalised to"),
    "test_oil_min": (Kind.TEMPERATURE, "coldest oil at which a test is valid"),
    "test_oil_max": (Kind.TEMPERATURE, "hottest oil at which a test is valid"),
    "speed_tolerance": (Kind.RATIO, "allowed deviation from rated speed for a valid test"),
}

#: Derived quantities: name → (kind, roles it needs, what it is).
DERIVED: dict[str, tuple[Kind, frozenset[Role], str]] = {
    "pump_case_drain_flow_at_ref": (
        Kind.FLOW,
        frozenset({Role.PUMP_CASE_DRAIN_FLOW}),
        "pump case drain normalised to the reference oil temperature (laminar leakage ∝ 1/viscosity, ASTM "
        "D341 viscosity)",
    ),
    "motor_case_drain_flow_at_ref": (
        Kind.FLOW,
        frozenset({Role.MOTOR_CASE_DRAIN_FLOW}),
        "motor case drain normalised to the reference oil temperature",
    ),
    "pump_theoretical_flow": (
        Kind.FLOW,
        frozenset(),
        "pump displacement × measured pump speed (rated speed when none was measured)",
    ),
    "relief_deadhead": (
        Kind.PRESSURE,
        frozenset(),
        "what the pump outlet should read when deadheaded: the circuit's relief layout (series add, "
        "parallel lowest wins) plus measured return back pressure",
    ),
    "cross_port_stall_expected": (
        Kind.PRESSURE,
        frozenset({Role.CHARGE_PRESSURE}),
        "what a loop port gauge should read stalled on its cross-port relief: the setting, plus the low "
        "side's charge pressure when the profile states the setting as a differential",
    ),
    "accumulator_precharge_at_ref": (
        Kind.PRESSURE,
        frozenset({Role.ACCUMULATOR_PRECHARGE}),
        "gas precharge brought to the temperature its figure is stated at (ideal gas at constant volume: "
        "p/T constant in absolute pressure and kelvin), from the temperature stated with the reading",
    ),
    "oil_viscosity": (
        Kind.VISCOSITY,
        frozenset({Role.OIL_TEMPERATURE}),
        "kinematic viscosity of the machine's oil grade at the measured oil temperature (ASTM D341)",
    ),
}


def _build() -> SymbolTable:
    table = SymbolTable()
    for role, info in ROLES.items():
        for state in (None, *FunctionState):
            name = reading_name(role, state)
            table[name] = info.kind
            table.readings[name] = (role, state)
    for name, (kind, _doc) in PARAMETERS.items():
        table[name] = kind
    for name, (kind, _doc) in MACHINE_FIGURES.items():
        table[name] = kind
    for name, (kind, _roles, _doc) in DERIVED.items():
        table[name] = kind
    return table


SYMBOLS = _build()
FUNCTIONS = dict(BUILTIN_FUNCTIONS)


def names_to_roles(names: frozenset[str] | set[str]) -> frozenset[str]:
    roles: set[str] = set()
    for name in names:
        if name in SYMBOLS.readings:
            roles.add(SYMBOLS.readings[name][0].value)
        elif name in DERIVED:
            roles |= {r.value for r in DERIVED[name][1]}
    return frozenset(roles)
