"""A simulated machine: the physical parameters behind every gauge reading, healthy or faulty.

A machine is its profile brought to life: each circuit gets a table of physical parameters
(relief settings, leakage coefficients, line restrictions, spring settings…) taken from the
profile's own figures, from its reliefs and relief layout, and, where the profile has no
physical figure, from the middle of the expected ranges. Each simulated machine differs a little
from the next (scatter drawn from the seed), the way two machines of one model do. A fault is a
change to this table (see :mod:`fieldkit.simulate.faults`); the readings follow from the physics
in :mod:`fieldkit.simulate.open_circuits`, :mod:`fieldkit.simulate.closed_loop` and
:mod:`fieldkit.simulate.actuators`.

Every value inside is a float in the canonical unit of its kind (bar, L/min, °C, rpm, cc/rev,
mm/min), so the hot loop of an evaluation does not build pint quantities it does not need.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from random import Random

from fieldkit.model.condition import Condition, FunctionState
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.profile import Circuit, CircuitKind, MachineProfile, TestPoint
from fieldkit.model.roles import Role
from fieldkit.simulate.constants import RESTRICTION_SCATTER, TYPICAL_SCATTER
from fieldkit.simulate.hydraulics import (
    HEALTHY_GAP_UM,
    Oil,
    gap_growth_for,
    oil_of_grade,
    slot_flow,
    slot_for,
)
from fieldkit.units import Q_, Kind, Quantity, to_canonical, unit


def qty(value: float, expr: str) -> Quantity:
    """A quantity for the physics core from a float and one of pint's own unit expressions
    (cached; never text a person typed)."""
    return Q_(value, unit(expr))


class Draw:
    """Machine-to-machine scatter: a nominal value times (1 + a normal deviate), clipped at two
    standard deviations so a healthy machine stays a healthy machine. The reference machine
    (no random source) has none, which is what the simulated technician picks gauges from."""

    def __init__(self, rng: Random | None) -> None:
        self.rng = rng

    def __call__(self, nominal: float, sigma: float) -> float:
        if self.rng is None or sigma <= 0:
            return nominal
        z = max(-2.0, min(2.0, self.rng.gauss(0.0, 1.0)))
        return nominal * (1.0 + sigma * z)


@dataclass
class ReliefState:
    """A relief as it is on this machine today: setting, override, where it drains."""

    setting: float
    override: float
    drain: str


@dataclass
class CircuitModel:
    """One circuit's physical parameters; the keys each kind uses are listed in its physics module."""

    circuit: Circuit
    p: dict[str, float]
    reliefs: dict[str, ReliefState] = field(default_factory=dict)
    #: Reliefs joined in parallel with the main relief that the layout leaves out (a selector left open).
    parallel_extra: list[str] = field(default_factory=list)
    #: Per test point, the scatter on values taken from the middle of its expected range.
    typical: dict[str, float] = field(default_factory=dict)

    @property
    def kind(self) -> CircuitKind:
        return self.circuit.kind

    def has_role(self, role: Role) -> bool:
        return any(tp.role is role for tp in self.circuit.test_points)


@dataclass
class TestSetting:
    """How the visit went: oil temperature at the first and last reading, the engine speed the
    technician held, and the temperature of accumulator gas when it is checked."""

    __test__ = False  # not a pytest class

    oil_start_c: float
    oil_end_c: float
    speed_rpm: float
    gas_c: float


@dataclass(frozen=True, slots=True)
class Env:
    """Conditions at the moment of one reading."""

    oil_c: float
    #: Dynamic viscosity of the oil now, Pa·s (the simulator's own Vogel curve and density):
    #: leakage gaps pass Q = w·h³·Δp / (12·μ·L) (:func:`fieldkit.simulate.hydraulics.slot_flow`).
    mu: float
    #: μ(T) / μ(T_ref): laminar pressure drops (filter media, fine strainers) scale with it.
    mu_ratio: float
    speed_rpm: float
    #: Speed over rated speed: displacement flows scale with it.
    speed_ratio: float


#: Physics of one circuit kind: the true value a point reads in a state, or None where the
#: simulator has no physical model for that point (the middle of its expected range is used).
PointPhysics = Callable[["Machine", CircuitModel, TestPoint, FunctionState, Env], "float | None"]
#: Healthy parameters of one circuit kind, from the profile.
Builder = Callable[["Machine", Circuit, Draw], CircuitModel]


@dataclass(frozen=True)
class PhysicsTable:
    """Per circuit kind, how its healthy parameters are built and what its points read.

    Passed in (:data:`fieldkit.simulate.physics_table.TABLE`) rather than imported here: the
    kinds' modules build on this one, so importing them back would close a cycle."""

    physics: Mapping[CircuitKind, PointPhysics]
    builders: Mapping[CircuitKind, Builder]


@dataclass
class Machine:
    profile: MachineProfile
    setting: TestSetting
    oil: Oil
    reference_c: float
    rated_rpm: float
    table: PhysicsTable
    circuits: dict[str, CircuitModel] = field(default_factory=dict)
    #: Filled by the gauge-error fault: which reading goes wrong and how.
    gauge_fault: dict[str, float] = field(default_factory=dict)

    # --- environment ---------------------------------------------------------------------
    def env(self, oil_c: float) -> Env:
        mu = self.oil.dynamic(oil_c)
        speed = self.setting.speed_rpm
        return Env(oil_c, mu, mu / self.mu_ref, speed, speed / self.rated_rpm)

    @property
    def mu_ref(self) -> float:
        """Dynamic viscosity at the profile's reference temperature, Pa·s: healthy leakage
        figures are stated there, so each gap is sized with it."""
        return self.oil.dynamic(self.reference_c)

    def oil_at(self, fraction: float) -> float:
        """Oil temperature a fraction of the way through the visit (it warms as the tests run)."""
        s = self.setting
        return s.oil_start_c + (s.oil_end_c - s.oil_start_c) * max(0.0, min(1.0, fraction))

    # --- cross-circuit questions -------------------------------------------------------
    def first(self, *kinds: CircuitKind) -> CircuitModel | None:
        for model in self.circuits.values():
            if model.kind in kinds:
                return model
        return None

    def true_value(self, circuit_id: str, point: TestPoint, state: FunctionState, env: Env) -> float | None:
        """What a perfect instrument would read at a point in a state, or None when neither the
        physics nor the profile says anything about it."""
        if point.role is Role.OIL_TEMPERATURE:
            return env.oil_c
        if point.role is Role.PUMP_SPEED:
            return env.speed_rpm
        model = self.circuits[circuit_id]
        value = self.table.physics[model.kind](self, model, point, state, env)
        if value is None:
            value = typical(point, state)
            if value is not None:
                value *= model.typical.get(point.id, 1.0)
        return value


# --- reading the profile -----------------------------------------------------------------


def param(circuit: Circuit, name: str) -> float | None:
    """A circuit parameter in its kind's canonical unit, or None when the profile has none."""
    q = circuit.parameters.get(name)
    if q is None:
        return None
    return to_canonical(q, PARAMETERS[name][0])


def point(circuit: Circuit, role: Role) -> TestPoint | None:
    return next((tp for tp in circuit.test_points if tp.role is role), None)


def bounds(tp: TestPoint | None, state: FunctionState) -> tuple[float | None, float | None]:
    """Low and high of a point's expected range in a state, canonical units."""
    if tp is None:
        return None, None
    rng = tp.expected_for(Condition(function=state))
    if rng is None:
        return None, None
    kind = tp.kind
    low = to_canonical(rng.low, kind) if rng.low is not None else None
    high = to_canonical(rng.high, kind) if rng.high is not None else None
    return low, high


def any_bounds(tp: TestPoint | None) -> tuple[float | None, float | None]:
    """Bounds of the first range a point has, whatever its condition."""
    if tp is None or not tp.expected:
        return None, None
    rng = tp.expected[0]
    low = to_canonical(rng.low, tp.kind) if rng.low is not None else None
    high = to_canonical(rng.high, tp.kind) if rng.high is not None else None
    return low, high


def middle(low: float | None, high: float | None) -> float | None:
    """Where a healthy machine sits in a range: the middle of a closed range; half of an upper
    limit (a pressure drop or leakage with only a ceiling); a little beyond a lower limit."""
    if low is not None and high is not None:
        return 0.5 * (low + high)
    if high is not None:
        return 0.5 * high if high > 0 else high
    if low is not None:
        return 0.4 * low if low < 0 else 1.2 * low
    return None


def typical(tp: TestPoint, state: FunctionState) -> float | None:
    return middle(*bounds(tp, state))


def gap_path(p: dict[str, float], name: str, leak_lpm: float, dp_bar: float, mu_ref: float) -> None:
    """A healthy leakage gap named ``name``: the healthy clearance, and the slot width over length
    that passes ``leak_lpm`` at ``dp_bar`` with oil of viscosity ``mu_ref`` (keys ``name_gap`` in
    µm and ``name_slot``)."""
    p[f"{name}_gap"] = HEALTHY_GAP_UM
    p[f"{name}_slot"] = slot_for(leak_lpm, dp_bar, mu_ref)


def gap_leak(p: Mapping[str, float], name: str, dp_bar: float, env: Env) -> float:
    """Flow through a leakage gap now (L/min): laminar slot flow with today's clearance and viscosity."""
    return slot_flow(p[f"{name}_slot"], p[f"{name}_gap"], dp_bar, env.mu)


def widen(p: dict[str, float], name: str, leak_ratio: float) -> float:
    """Open a gap so that it leaks ``leak_ratio`` times as much; returns the clearance growth."""
    growth = gap_growth_for(leak_ratio)
    p[f"{name}_gap"] *= growth
    return growth


def drain_line(max_case: float, healthy_flow: float, draw: Draw) -> tuple[float, float]:
    """A sound case drain line: a static back pressure (tank height, cooler, fittings) of a
    quarter of the allowed case pressure, and a flow-dependent part that adds a tenth of it at
    the machine's healthy drain flow (simulator's own split: a sound drain line is sized so flow
    costs little). Returns (static bar, bar per L/min)."""
    static = draw(0.25 * max_case, RESTRICTION_SCATTER)
    per_flow = draw(0.10 * max_case / max(healthy_flow, 0.1), RESTRICTION_SCATTER)
    return static, per_flow


def build_machine(profile: MachineProfile, rng: Random | None, table: PhysicsTable) -> Machine:
    """The healthy machine for a profile, with scatter from ``rng`` (None: the nominal machine),
    its circuits built and read by ``table``."""
    draw = Draw(rng)
    window = profile.test_window
    oil_min = to_canonical(window.oil_min, Kind.TEMPERATURE)
    oil_max = to_canonical(window.oil_max, Kind.TEMPERATURE)
    oil_high = oil_max
    for _c, tp in profile.all_test_points():
        if tp.role is Role.OIL_TEMPERATURE:
            high = any_bounds(tp)[1]
            if high is not None:
                oil_high = min(oil_high, high)
    # Warm oil inside the test window and inside the point's own range, warming a few degrees
    # through the visit (simulator's own choice of a typical visit).
    low_c, high_c = oil_min + 4.0, max(oil_min + 6.0, oil_high - 6.0)
    start = low_c + (high_c - low_c) * (rng.random() if rng else 0.5)
    rise = 2.0 + 3.0 * (rng.random() if rng else 0.5)
    rated = to_canonical(profile.rated_speed, Kind.SPEED)
    speed = rated * (1.0 + (rng.uniform(-0.01, 0.01) if rng else 0.0))
    gas = 10.0 + 15.0 * (rng.random() if rng else 0.5)
    machine = Machine(
        profile=profile,
        setting=TestSetting(start, start + rise, speed, gas),
        oil=oil_of_grade(profile.oil_grade),
        reference_c=to_canonical(profile.reference_oil_temperature, Kind.TEMPERATURE),
        rated_rpm=rated,
        table=table,
    )
    for circuit in profile.circuits:
        model = table.builders[circuit.kind](machine, circuit, draw)
        model.typical = {tp.id: draw(1.0, TYPICAL_SCATTER) for tp in circuit.test_points}
        machine.circuits[circuit.id] = model
    return machine


__all__ = [
    "CircuitModel",
    "Draw",
    "Env",
    "Machine",
    "PhysicsTable",
    "ReliefState",
    "TestSetting",
    "any_bounds",
    "bounds",
    "build_machine",
    "drain_line",
    "gap_leak",
    "gap_path",
    "middle",
    "param",
    "point",
    "qty",
    "typical",
    "widen",
]
